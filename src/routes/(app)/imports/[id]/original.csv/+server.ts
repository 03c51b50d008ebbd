import { error } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/guards';
import { idParam } from '$lib/server/forms';
import { rawFile } from '$lib/server/imports/records';
import type { RequestHandler } from './$types';

/** The file exactly as it was uploaded (its SHA-256 is on the record and in a header). */
export const GET: RequestHandler = async (event) => {
	await requireRole(event, 'analyst');
	const id = idParam(event.params.id, 'import');
	const file = await rawFile(db, id);
	if (!file) error(404, { message: `No import with id ${id}.` });
	const name = file.fileName.replace(/["\\\r\n]/g, '_');
	return new Response(new Uint8Array(file.rawBytes), {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="${name}"; filename*=UTF-8''${encodeURIComponent(file.fileName)}`,
			'x-content-sha256': file.sha256,
			'cache-control': 'private, no-store'
		}
	});
};
