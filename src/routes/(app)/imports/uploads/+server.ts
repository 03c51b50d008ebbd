import { json } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/guards';
import { checkSize, sha256Of } from '$lib/server/imports/commit';
import { asRefusal, readUploadForm, targetFromFields } from '$lib/server/imports/http';
import { loadTargets } from '$lib/server/imports/context';
import * as staging from '$lib/server/imports/staging';
import type { RequestHandler } from './$types';

/** Receive a file for the mapping screen: checked for size and target, kept until it is imported. */
export const POST: RequestHandler = async (event) => {
	const user = await requireRole(event, 'analyst');
	try {
		const { file, fields } = await readUploadForm(event.request);
		const target = targetFromFields(fields);
		const bytes = new Uint8Array(await file.arrayBuffer());
		await checkSize(db, bytes.length);
		await loadTargets(db, target, new Map(), user, { lock: false });
		const upload = await staging.stage(bytes, { userId: user.id, fileName: file.name || 'upload.csv', sizeBytes: bytes.length, sha256: sha256Of(bytes), target });
		return json({ upload }, { status: 201, headers: { 'cache-control': 'no-store' } });
	} catch (err) {
		return asRefusal(err);
	}
};
