/// <reference types="@sveltejs/kit" />
/// <reference no-default-lib="true"/>
/// <reference lib="esnext" />
/// <reference lib="webworker" />
// Keeps the shot-logging page usable when the firing line loses the network: the app's built
// assets and its offline page are cached at install, and the logging pages (HTML and data) are
// cached as they are visited and when a page asks for them ($lib/offline: a logging page reached
// by in-app navigation was never loaded in full, so it asks), served from the cache only when the
// network fails. A page navigated to offline and not cached gets the offline page (with the shots
// waiting on the tablet), never the browser's error. API calls always go to the network (the
// page's own outbox handles those).
import { build, files, version } from '$service-worker';
import { logPageUrls, type CacheLogPagesMessage } from '$lib/offline';

const sw = self as unknown as ServiceWorkerGlobalScope;
const CACHE = `shotwright-${version}`;
const ASSETS = new Set([...build, ...files]);
const LOG_PAGE = /^\/sessions\/\d+\/log(\/__data\.json)?$/;
const OFFLINE_PAGE = '/offline.html';

sw.addEventListener('install', (event) => {
	event.waitUntil(
		caches
			.open(CACHE)
			.then((cache) => cache.addAll([...ASSETS]))
			.then(() => sw.skipWaiting())
	);
});

sw.addEventListener('activate', (event) => {
	event.waitUntil(
		caches
			.keys()
			.then((keys) => Promise.all(keys.filter((k) => k !== CACHE).map((k) => caches.delete(k))))
			.then(() => sw.clients.claim())
	);
});

/** Store a logging page's answer; a redirect (e.g. to sign-in) or an error is not the page. */
async function keep(cache: Cache, url: string, response: Response) {
	if (response.ok && !response.redirected) await cache.put(url, response.clone());
}

sw.addEventListener('message', (event) => {
	const message = event.data as CacheLogPagesMessage | undefined;
	if (message?.type !== 'cache-log-pages' || !Array.isArray(message.sessionIds)) return;
	event.waitUntil(
		(async () => {
			const cache = await caches.open(CACHE);
			const urls = message.sessionIds.filter((id) => Number.isInteger(id) && id > 0).flatMap(logPageUrls);
			await Promise.all(
				urls.map(async (url) => {
					try {
						await keep(cache, url, await fetch(url, { credentials: 'same-origin' }));
					} catch {
						// Offline already: whatever is cached stays.
					}
				})
			);
		})()
	);
});

sw.addEventListener('fetch', (event) => {
	const request = event.request;
	if (request.method !== 'GET') return;
	const url = new URL(request.url);
	if (url.origin !== sw.location.origin) return;

	if (ASSETS.has(url.pathname)) {
		event.respondWith(caches.match(url.pathname).then((hit) => hit ?? fetch(request)));
		return;
	}
	const logPage = LOG_PAGE.test(url.pathname);
	if (!logPage && request.mode !== 'navigate') return;
	event.respondWith(
		(async () => {
			const cache = await caches.open(CACHE);
			try {
				const response = await fetch(request);
				if (logPage) await keep(cache, url.pathname, response);
				return response;
			} catch (err) {
				// Data requests carry SvelteKit's query (x-sveltekit-invalidated): matched by path.
				const hit = logPage ? await cache.match(url.pathname, { ignoreSearch: true }) : undefined;
				if (hit) return hit;
				if (request.mode === 'navigate') {
					const offline = await cache.match(OFFLINE_PAGE);
					if (offline) return offline;
				}
				throw err;
			}
		})()
	);
});
