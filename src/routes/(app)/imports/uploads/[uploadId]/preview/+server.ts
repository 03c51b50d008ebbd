import { error, json } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/guards';
import { prefsFor } from '$lib/format';
import { previewImport } from '$lib/server/imports/commit';
import { asRefusal, stagedRequest } from '$lib/server/imports/http';
import * as staging from '$lib/server/imports/staging';
import type { RequestHandler } from './$types';

/** What importing the uploaded file with this mapping would do; writes nothing. */
export const POST: RequestHandler = async (event) => {
	const user = await requireRole(event, 'analyst');
	const staged = await staging.read(event.params.uploadId, user.id);
	if (!staged) error(404, { message: 'No such upload: it was imported already, has expired (after a day), or belongs to someone else. Upload the file again.', issues: [] });
	const body = stagedRequest.safeParse(await event.request.json().catch(() => ({})));
	if (!body.success) error(400, { message: `The request is not a preview request: ${body.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ')}`, issues: [] });
	try {
		const preview = await previewImport(
			db,
			{ bytes: staged.bytes, fileName: staged.upload.fileName },
			{ target: staged.upload.target, mapping: body.data.mapping, template: body.data.template, format: body.data.format, mode: body.data.mode, force: body.data.force, prefs: prefsFor(user.unitPreferences) },
			user
		);
		return json(preview, { headers: { 'cache-control': 'no-store' } });
	} catch (err) {
		return asRefusal(err);
	}
};
