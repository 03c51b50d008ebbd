// POST /api/v1/imports: a script uploads a chronograph file in one request (multipart: file,
// sessionId or templateSessionId, optional mapping JSON or template name, mode, force) and gets
// the import record back — counts, the rejected rows with their reasons, the sessions it went
// to — or a refusal in the API's error shape with every invalid cell.
import { db } from '../db';
import { endpoint, ok } from '../api';
import { requireRole } from '../guards';
import { prefsFor } from '$lib/format';
import { commitImport } from './commit';
import { asRefusal, flagFromFields, mappingFromFields, modeFromFields, readUploadForm, targetFromFields } from './http';

function templateFromFields(fields: FormData) {
	const raw = fields.get('template');
	return typeof raw === 'string' && raw.trim() !== '' ? raw.trim() : null;
}

export const importApi = {
	create: endpoint(async (event) => {
		const user = await requireRole(event, 'analyst');
		try {
			const { file, fields } = await readUploadForm(event.request);
			const record = await commitImport(
				db,
				{ bytes: new Uint8Array(await file.arrayBuffer()), fileName: file.name || 'upload.csv' },
				{
					target: targetFromFields(fields),
					mapping: mappingFromFields(fields),
					template: templateFromFields(fields),
					mode: modeFromFields(fields),
					force: flagFromFields(fields, 'force'),
					prefs: prefsFor(user.unitPreferences)
				},
				user
			);
			return ok(record, 201);
		} catch (err) {
			return asRefusal(err);
		}
	})
};
