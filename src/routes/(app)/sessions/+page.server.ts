import { error } from '@sveltejs/kit';
import { requireUser } from '$lib/server/guards';
import { parseListParams } from '$lib/server/listing';
import * as sessions from '$lib/server/sessions';
import { rigs } from '$lib/server/rigs';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireUser(event);
	const params = parseListParams(event.url, sessions.SESSION_SORTS, 'startedAt', 'desc');
	const rigRaw = event.url.searchParams.get('rigId');
	const rigId = rigRaw ? Number(rigRaw) : null;
	if (rigRaw && (!Number.isInteger(rigId) || rigId! < 1)) error(400, { message: `URL parameter "rigId" must be a rig id; got "${rigRaw}".` });
	const status = event.url.searchParams.get('status') || null;
	if (status && status !== 'open' && status !== 'closed') error(400, { message: `URL parameter "status" must be open or closed; got "${status}".` });
	const [list, rigOptions] = await Promise.all([
		sessions.list(params, { rigId, status: status as 'open' | 'closed' | null }),
		rigs.options()
	]);
	return { list, deleted: params.deleted, rigs: rigOptions.map((r) => ({ id: r.id, name: r.name })), filters: { rigId, status } };
};
