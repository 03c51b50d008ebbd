import { error } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/guards';
import { idParam } from '$lib/server/forms';
import * as records from '$lib/server/imports/records';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'analyst');
	const id = idParam(event.params.id, 'import');
	const record = await records.getImport(db, id);
	if (!record) error(404, { message: `No import with id ${id}.` });
	return { record };
};
