import { fail } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { IMPORT_FIELDS, importMapping, MAX_IMPORT_BYTES, saveTemplateSchema } from '$lib/schemas/imports';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/guards';
import { storableBytes } from '$lib/server/imports/commit';
import * as records from '$lib/server/imports/records';
import * as sessions from '$lib/server/sessions';
import type { Actions, PageServerLoad } from './$types';

/** Sessions offered in the pickers: the latest, open ones first. */
const SESSION_CHOICES = 500;

export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'analyst');
	const [list, templates, storable, templateForm] = await Promise.all([
		sessions.list({ q: null, sort: 'startedAt', dir: 'desc', page: 1, pageSize: SESSION_CHOICES, deleted: false }),
		records.listTemplates(db),
		storableBytes(db),
		superValidate(zod4(saveTemplateSchema), { id: 'template' })
	]);
	const choices = list.rows
		.map((s) => ({ id: s.id, title: s.title, status: s.status, rig: s.rig, projectile: s.projectile, startedAt: s.startedAt, shotCount: s.shotCount as number | null }))
		.sort((a, b) => (a.status === b.status ? 0 : a.status === 'open' ? -1 : 1));
	const param = (name: string) => {
		const n = Number(event.url.searchParams.get(name));
		return Number.isSafeInteger(n) && n > 0 ? n : null;
	};
	// The session asked for by the link must be offered even when it is older than the latest SESSION_CHOICES.
	for (const id of [param('sessionId'), param('templateSessionId')]) {
		if (id === null || choices.some((c) => c.id === id)) continue;
		const found = await sessions.get(id);
		if (found && !found.session.deletedAt)
			choices.unshift({ id, title: found.session.title, status: found.session.status, rig: found.rig.name, projectile: found.projectile.name, startedAt: found.session.startedAt, shotCount: null });
	}
	return {
		sessions: choices,
		templates: templates.map((t) => ({ id: t.id, name: t.name, mapping: t.mapping, createdByName: t.createdByName })),
		maxBytes: Math.min(MAX_IMPORT_BYTES, storable.limit),
		fields: IMPORT_FIELDS,
		sessionId: param('sessionId'),
		templateSessionId: param('templateSessionId'),
		templateForm
	};
};

export const actions: Actions = {
	saveTemplate: async (event) => {
		const user = await requireRole(event, 'analyst');
		const form = await superValidate(event.request, zod4(saveTemplateSchema), { id: 'template' });
		if (!form.valid) return fail(400, { form });
		let mapping;
		try {
			mapping = importMapping.parse(JSON.parse(form.data.mapping));
		} catch {
			return setError(form, 'mapping', 'The mapping to save is not a column mapping.');
		}
		if (!mapping.columns.some((c) => c.field)) return setError(form, 'mapping', 'Map at least one column before saving a template.');
		const existing = await records.templateByName(db, form.data.name);
		if (existing && !form.data.replace)
			return setError(form, 'name', `A template named “${existing.name}” exists; tick “replace it” to overwrite it, or choose another name.`, { status: 409 });
		const saved = await records.saveTemplate(db, existing?.name ?? form.data.name, mapping, user);
		return message(form, saved.replaced ? `Template “${form.data.name}” replaced.` : `Template “${form.data.name}” saved.`);
	}
};
