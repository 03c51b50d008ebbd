import { requireUser } from '$lib/server/guards';
import { idParam } from '$lib/server/forms';
import { sessionView } from '$lib/server/session-view';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireUser(event);
	return { view: await sessionView(idParam(event.params.id, 'range session')) };
};
