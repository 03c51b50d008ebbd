// Every load, action and endpoint calls one of these. They re-read the user from MariaDB on each
// request: a disabled account, a changed role or ended sessions take effect on the very next request.
import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import { hasRole, ROLE_LABELS, type Role } from '$lib/roles';
import { findActiveUser } from './accounts/users';

type Event = Pick<RequestEvent, 'locals' | 'url' | 'route' | 'request'>;

function isApi(event: Event) {
	return event.url.pathname.startsWith('/api/');
}

/** The signed-in user, or null (no redirect). */
export async function optionalUser(event: Event): Promise<AppUser | null> {
	if (event.locals.user) return event.locals.user;
	if (event.locals.claimedUserId === null) return null;
	event.locals.user = await findActiveUser(event.locals.claimedUserId, event.locals.claimedSessionVersion ?? -1);
	return event.locals.user;
}

/** The signed-in user; anonymous → 401 for the API, a redirect to sign-in for pages. */
export async function requireUser(event: Event): Promise<AppUser> {
	const user = await optionalUser(event);
	if (user) return user;
	if (isApi(event) || event.request.method !== 'GET')
		error(401, { message: 'Sign in first: this needs a signed-in user or an API token.', issues: [] });
	redirect(303, `/signin?next=${encodeURIComponent(event.url.pathname + event.url.search)}`);
}

/** The signed-in user with at least the given role; otherwise 403. */
export async function requireRole(event: Event, atLeast: Role): Promise<AppUser> {
	const user = await requireUser(event);
	if (!hasRole(user.role, atLeast))
		error(403, {
			message: `This needs the ${ROLE_LABELS[atLeast]} role or higher; you are ${ROLE_LABELS[user.role]}.`,
			issues: []
		});
	return user;
}
