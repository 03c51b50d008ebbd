import { requireRole } from '$lib/server/guards';
import { idParam } from '$lib/server/forms';
import * as sessions from '$lib/server/sessions';
import * as shots from '$lib/server/shots';
import type { PageServerLoad } from './$types';

const RECENT_SHOTS = 8;

export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'range_officer');
	const id = idParam(event.params.id, 'range session');
	const view = await sessions.getOr404(id);
	const recent = await shots.recentForSession(id, RECENT_SHOTS);
	return { ...view, recent, nextSequence: (recent[0]?.sequence ?? 0) + 1 };
};
