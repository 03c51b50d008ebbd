import { error } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { requireUser } from '$lib/server/guards';
import { idParam } from '$lib/server/forms';
import * as sessions from '$lib/server/sessions';
import { downloadName, shotsCsv } from '$lib/server/imports/export';
import type { RequestHandler } from './$types';

/** The session's live shots with their predictions and residuals, as CSV (SI units). */
export const GET: RequestHandler = async (event) => {
	await requireUser(event);
	const id = idParam(event.params.id, 'range session');
	const found = await sessions.get(id);
	if (!found) error(404, { message: `No range session with id ${id}.` });
	return new Response(shotsCsv(db, { sessionId: id }), {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="${downloadName('session', id, found.session.title, 'shots')}.csv"`,
			'cache-control': 'private, no-store'
		}
	});
};
