// The first line of defence by route group. Each load, action and endpoint checks again with
// requireUser()/requireRole() (guards.ts): this layer alone is never trusted.
import type { Handle } from '@sveltejs/kit';
import { error } from '@sveltejs/kit';
import { resolveBearerToken } from './accounts/tokens';
import { requireRole, requireUser } from './guards';

/** API routes anyone may call: health checks, the API description, and issuing a token. */
export const PUBLIC_API_ROUTES = new Set(['/api/v1/health', '/api/v1/openapi.json', '/api/v1/tokens']);

export const identify: Handle = async ({ event, resolve }) => {
	event.locals.claimedUserId = null;
	event.locals.apiTokenId = null;
	event.locals.user = null;
	const authorization = event.request.headers.get('authorization');
	if (authorization?.startsWith('Bearer ')) {
		const token = await resolveBearerToken(authorization.slice(7).trim());
		if (!token) error(401, { message: 'The API token is unknown or revoked.' });
		event.locals.claimedUserId = token.userId;
		event.locals.apiTokenId = token.id;
	} else {
		const session = await event.locals.auth();
		const id = Number(session?.user?.id);
		if (Number.isInteger(id) && id > 0) event.locals.claimedUserId = id;
	}
	return resolve(event);
};

export const guardRouteGroups: Handle = async ({ event, resolve }) => {
	const id = event.route.id ?? '';
	if (id.startsWith('/(admin)')) await requireRole(event, 'admin');
	else if (id.startsWith('/(app)')) await requireUser(event);
	else if (id.startsWith('/api/') && !PUBLIC_API_ROUTES.has(id)) await requireUser(event);
	else if (id === '' && event.url.pathname.startsWith('/api/')) error(404, { message: 'No such API route.' });
	return resolve(event);
};

