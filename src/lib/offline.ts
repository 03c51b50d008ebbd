// Asks the service worker to keep the logging pages of these sessions (HTML and data) for use
// offline, whatever navigation brought the user here: a page reached by in-app navigation was
// never loaded in full from the server, so the worker would not have cached it on its own.

/** The URLs the worker caches for a session's logging page. */
export const logPageUrls = (sessionId: number) => [`/sessions/${sessionId}/log`, `/sessions/${sessionId}/log/__data.json`];

export type CacheLogPagesMessage = { type: 'cache-log-pages'; sessionIds: number[] };

export async function cacheLogPages(sessionIds: number[]) {
	if (sessionIds.length === 0 || !('serviceWorker' in navigator)) return;
	try {
		const registration = await navigator.serviceWorker.ready;
		const message: CacheLogPagesMessage = { type: 'cache-log-pages', sessionIds };
		registration.active?.postMessage(message);
	} catch {
		// No service worker (e.g. a private window): the page works online all the same.
	}
}
