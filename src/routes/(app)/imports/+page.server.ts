import { fail } from '@sveltejs/kit';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { deleteTemplateSchema } from '$lib/schemas/imports';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/guards';
import { parseListParams } from '$lib/server/listing';
import * as records from '$lib/server/imports/records';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'analyst');
	const params = parseListParams(event.url, ['createdAt'] as const, 'createdAt', 'desc');
	const [list, templates, deleteForm] = await Promise.all([
		records.listImports(db, params),
		records.listTemplates(db),
		superValidate(zod4(deleteTemplateSchema), { id: 'delete-template' })
	]);
	return {
		list,
		templates: templates.map((t) => ({ id: t.id, name: t.name, createdByName: t.createdByName, createdAt: t.createdAt, columns: t.mapping.columns.filter((c) => c.field).length })),
		deleteForm
	};
};

export const actions: Actions = {
	deleteTemplate: async (event) => {
		const user = await requireRole(event, 'analyst');
		const form = await superValidate(event.request, zod4(deleteTemplateSchema), { id: 'delete-template' });
		if (!form.valid) return fail(400, { form });
		const deleted = await records.deleteTemplate(db, form.data.id, user);
		if (!deleted) return message(form, 'That template was deleted already.', { status: 404 });
		return message(form, 'Template deleted.');
	}
};
