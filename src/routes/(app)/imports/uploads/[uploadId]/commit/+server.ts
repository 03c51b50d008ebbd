import { error } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/guards';
import { prefsFor } from '$lib/format';
import { commitImport } from '$lib/server/imports/commit';
import { ImportRefused } from '$lib/server/imports/errors';
import { refusalBody, stagedRequest } from '$lib/server/imports/http';
import * as staging from '$lib/server/imports/staging';
import type { RequestHandler } from './$types';

/** Reports at most this often while the import runs, ms. */
const PROGRESS_INTERVAL_MS = 150;

/**
 * Import the uploaded file. The answer is a stream of JSON lines (application/x-ndjson): progress
 * reports while the server reads, checks, stores and predicts, then the import record — or the
 * refusal, since the status line has gone out before the work starts.
 */
export const POST: RequestHandler = async (event) => {
	const user = await requireRole(event, 'analyst');
	const staged = await staging.read(event.params.uploadId, user.id);
	if (!staged) error(404, { message: 'No such upload: it was imported already, has expired (after a day), or belongs to someone else. Upload the file again.', issues: [] });
	const body = stagedRequest.safeParse(await event.request.json().catch(() => ({})));
	if (!body.success) error(400, { message: `The request is not an import request: ${body.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ')}`, issues: [] });
	const encoder = new TextEncoder();
	const stream = new ReadableStream<Uint8Array>({
		async start(controller) {
			let open = true;
			const send = (message: unknown) => {
				if (!open) return;
				try {
					controller.enqueue(encoder.encode(JSON.stringify(message) + '\n'));
				} catch {
					// The browser went away; the import still finishes (or rolls back) on its own.
					open = false;
				}
			};
			let lastSent = 0;
			try {
				const record = await commitImport(
					db,
					{ bytes: staged.bytes, fileName: staged.upload.fileName },
					{ target: staged.upload.target, mapping: body.data.mapping, template: body.data.template, format: body.data.format, mode: body.data.mode, force: body.data.force, prefs: prefsFor(user.unitPreferences) },
					user,
					(progress) => {
						const now = Date.now();
						if (now - lastSent < PROGRESS_INTERVAL_MS && progress.done < progress.total) return;
						lastSent = now;
						send({ type: 'progress', ...progress });
					}
				);
				await staging.discard(staged.upload.id);
				send({ type: 'done', record: { ...record, errors: record.errors.slice(0, 2000) } });
			} catch (err) {
				if (err instanceof ImportRefused) send({ type: 'refused', status: err.status, ...refusalBody(err), errors: err.errors.slice(0, 2000) });
				else {
					console.error('Import failed:', err);
					send({ type: 'failed', message: 'The import failed on the server and was rolled back; nothing was imported. Try again, or tell an admin.' });
				}
			}
			if (open) controller.close();
		}
	});
	return new Response(stream, { headers: { 'content-type': 'application/x-ndjson; charset=utf-8', 'cache-control': 'no-store', 'x-accel-buffering': 'no' } });
};
