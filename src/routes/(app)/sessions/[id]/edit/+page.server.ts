import { fail, redirect } from '@sveltejs/kit';
import { superValidate } from 'sveltekit-superforms';
import { requireRole } from '$lib/server/guards';
import { failWithRule, idParam } from '$lib/server/forms';
import * as sessions from '$lib/server/sessions';
import { sessionAdapter, sessionForm, sessionPickers } from '$lib/server/session-forms';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'range_officer');
	const { session } = await sessions.getOr404(idParam(event.params.id, 'range session'));
	const [form, pickers] = await Promise.all([sessionForm(session as never), sessionPickers()]);
	return { session, form, ...pickers };
};

export const actions: Actions = {
	updateSession: async (event) => {
		const user = await requireRole(event, 'range_officer');
		const id = idParam(event.params.id, 'range session');
		const form = await superValidate(event.request, sessionAdapter);
		if (!form.valid) return fail(400, { form });
		try {
			await sessions.update(id, form.data, user);
		} catch (err) {
			return failWithRule(form, err);
		}
		redirect(303, `/sessions/${id}`);
	}
};
