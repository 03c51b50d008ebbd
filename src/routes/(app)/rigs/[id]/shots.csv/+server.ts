import { error } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { requireUser } from '$lib/server/guards';
import { idParam } from '$lib/server/forms';
import { rigs } from '$lib/server/rigs';
import { dateRangeParams, downloadName, shotsCsv } from '$lib/server/imports/export';
import type { RequestHandler } from './$types';

/** The rig's live shots fired between ?from and ?to (dates or date-times, UTC; both optional), as CSV. */
export const GET: RequestHandler = async (event) => {
	await requireUser(event);
	const id = idParam(event.params.id, 'rig');
	const { from, to } = dateRangeParams(event.url);
	const rig = await rigs.get(id);
	if (!rig) error(404, { message: `No rig with id ${id}.` });
	const span = [from && event.url.searchParams.get('from'), to && event.url.searchParams.get('to')].filter(Boolean).join('-to-');
	return new Response(shotsCsv(db, { rigId: id, from, to }), {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="${downloadName('rig', id, rig.name, 'shots', span)}.csv"`,
			'cache-control': 'private, no-store'
		}
	});
};
