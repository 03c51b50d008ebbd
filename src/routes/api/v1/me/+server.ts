import { json } from '@sveltejs/kit';
import { requireUser } from '$lib/server/guards';
import { prefsFor } from '$lib/format';
import type { RequestHandler } from './$types';

/** Who the caller is right now (a quick check for a script's token). */
export const GET: RequestHandler = async (event) => {
	const user = await requireUser(event);
	return json(
		{
			id: user.id,
			email: user.email,
			name: user.name,
			role: user.role,
			unitPreferences: prefsFor(user.unitPreferences),
			authenticatedBy: event.locals.apiTokenId === null ? 'session' : 'token'
		},
		{ headers: { 'cache-control': 'no-store' } }
	);
};
