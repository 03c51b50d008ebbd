// The first line of defence by route group. Each load, action and endpoint checks again with
// requireUser()/requireRole() (guards.ts): this layer alone is never trusted.
import type { Handle } from '@sveltejs/kit';
import { error } from '@sveltejs/kit';
import { resolveBearerToken } from './accounts/tokens';
import { servedOverHttps, sessionExpired } from './auth';
import { requireRole, requireUser } from './guards';

/** API routes anyone may call: health checks, the API description, and issuing a token. */
export const PUBLIC_API_ROUTES = new Set(['/api/v1/health', '/api/v1/openapi.json', '/api/v1/tokens']);

/** admin: admins only · user: any signed-in user · public: anyone · unknown-api: no such API route. */
export type RouteZone = 'admin' | 'user' | 'public' | 'unknown-api';

/** True when the route id is the group itself or lies inside it ("/(app)" but not "/(apple)"). */
function inside(routeId: string, prefix: string) {
	return routeId === prefix || routeId.startsWith(prefix + '/');
}

/**
 * The zone of a route. Admin pages sit in a group nested in (app), "/(app)/(admin)/…", so they
 * share the app's shell; a top-level "/(admin)" group is treated the same way.
 */
export function routeZone(routeId: string | null, pathname: string): RouteZone {
	const id = routeId ?? '';
	if (inside(id, '/(app)/(admin)') || inside(id, '/(admin)')) return 'admin';
	if (inside(id, '/(app)')) return 'user';
	if (inside(id, '/api')) return PUBLIC_API_ROUTES.has(id) ? 'public' : 'user';
	if (id === '' && (pathname === '/api' || pathname.startsWith('/api/'))) return 'unknown-api';
	return 'public';
}

const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

function bearerToken(request: Request) {
	const authorization = request.headers.get('authorization');
	return authorization?.startsWith('Bearer ') ? authorization.slice(7).trim() : null;
}

/** Auth.js's session cookie (named with __Secure- over https, split into .0, .1 … when large). */
function hasSessionCookie(cookieHeader: string | null) {
	return cookieHeader !== null && /(^|;\s*)(__Secure-)?authjs\.session-token(\.\d+)?=/.test(cookieHeader);
}

/**
 * True when the browser says the request comes from a page of this origin: the Origin header,
 * or, where a browser leaves that out, Fetch Metadata's Sec-Fetch-Site.
 */
export function sameOrigin(request: Request, origin: string) {
	const claimed = request.headers.get('origin');
	if (claimed !== null) return claimed === origin;
	return request.headers.get('sec-fetch-site') === 'same-origin';
}

/**
 * Before anything else. (1) Auth.js's own HTTP endpoints for signing in and out are closed: the
 * app signs in and out through its own pages, which call Auth.js in-process after the rate limit
 * (accounts/sign-in.ts); its credentials callback would otherwise take unlimited guesses.
 * (2) A write carried by the session cookie must come from the app's own pages, whatever its
 * body: SvelteKit checks the origin of form posts only, and a bodiless or text/plain POST needs
 * no preflight. Bearer-token requests carry no ambient credential and are left alone.
 */
export const guardRequestOrigin: Handle = async ({ event, resolve }) => {
	const { request, url } = event;
	if (url.pathname.startsWith('/auth/') && !SAFE_METHODS.has(request.method))
		error(404, { message: 'Not found: sign in and out on the app’s own pages.', issues: [] });
	if (!SAFE_METHODS.has(request.method) && bearerToken(request) === null && hasSessionCookie(request.headers.get('cookie')) && !sameOrigin(request, url.origin)) {
		const message = 'This request did not come from a Shotwright page (the Origin header is missing or names another site).';
		error(403, { message, issues: [{ path: 'Origin', message }] });
	}
	return resolve(event);
};

/**
 * Cookies the same on sign-in and on refresh: Auth.js's session refresh hands SvelteKit cookie
 * options without a Secure attribute when it is off, and SvelteKit would then add Secure by
 * default (anywhere but localhost), so a client on plain http would lose the refreshed session.
 * Every cookie set for this request says Secure exactly when the app is served over https.
 */
export const secureCookiesByProtocol: Handle = async ({ event, resolve }) => {
	const secure = servedOverHttps(event.url);
	const set = event.cookies.set.bind(event.cookies);
	event.cookies.set = (name, value, options) => set(name, value, { ...options, secure });
	return resolve(event);
};

export const identify: Handle = async ({ event, resolve }) => {
	event.locals.claimedUserId = null;
	event.locals.claimedSessionVersion = null;
	event.locals.apiTokenId = null;
	event.locals.user = null;
	const bearer = bearerToken(event.request);
	if (bearer !== null) {
		const token = await resolveBearerToken(bearer);
		if (!token) error(401, { message: 'The API token is unknown or revoked.', issues: [] });
		event.locals.claimedUserId = token.userId;
		event.locals.apiTokenId = token.id;
		// The owner as stored now, read with the token: the guards need not read it again.
		event.locals.user = token.user;
	} else {
		const session = await event.locals.auth();
		const id = Number(session?.user?.id);
		// A session without a version or sign-in time is from before they existed: signed out.
		if (Number.isInteger(id) && id > 0 && typeof session?.sessionVersion === 'number' && !sessionExpired(session.signedInAt)) {
			event.locals.claimedUserId = id;
			event.locals.claimedSessionVersion = session.sessionVersion;
		}
	}
	return resolve(event);
};

export const guardRouteGroups: Handle = async ({ event, resolve }) => {
	const zone = routeZone(event.route.id, event.url.pathname);
	if (zone === 'admin') await requireRole(event, 'admin');
	else if (zone === 'user') await requireUser(event);
	else if (zone === 'unknown-api') error(404, { message: 'No such API route.', issues: [] });
	return resolve(event);
};
