import { redirect } from '@sveltejs/kit';
import { authActionEvent, signOut } from '$lib/server/auth';
import { optionalUser } from '$lib/server/guards';
import { endSessions } from '$lib/server/accounts/sessions';
import { db } from '$lib/server/db';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = () => redirect(303, '/');

export const actions: Actions = {
	default: async (event) => {
		// A copy of the cookie must not outlive the sign-out: the user's sessions end server-side too.
		const user = await optionalUser(event);
		if (user && event.locals.apiTokenId === null) await endSessions(db, user.id);
		await signOut(authActionEvent(event, { redirectTo: '/signin' }));
	}
};
