// The first line of defence by route group. Each load, action and endpoint checks again with
// requireUser()/requireRole() (guards.ts): this layer alone is never trusted.
import type { Handle } from '@sveltejs/kit';
import { error } from '@sveltejs/kit';
import { resolveBearerToken } from './accounts/tokens';
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

export const identify: Handle = async ({ event, resolve }) => {
	event.locals.claimedUserId = null;
	event.locals.apiTokenId = null;
	event.locals.user = null;
	const authorization = event.request.headers.get('authorization');
	if (authorization?.startsWith('Bearer ')) {
		const token = await resolveBearerToken(authorization.slice(7).trim());
		if (!token) error(401, { message: 'The API token is unknown or revoked.', issues: [] });
		event.locals.claimedUserId = token.userId;
		event.locals.apiTokenId = token.id;
		// The owner as stored now, read with the token: the guards need not read it again.
		event.locals.user = token.user;
	} else {
		const session = await event.locals.auth();
		const id = Number(session?.user?.id);
		if (Number.isInteger(id) && id > 0) event.locals.claimedUserId = id;
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
