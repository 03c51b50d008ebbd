import { fail, redirect } from '@sveltejs/kit';
import { superValidate } from 'sveltekit-superforms';
import { requireRole } from '$lib/server/guards';
import { failWithRule } from '$lib/server/forms';
import * as sessions from '$lib/server/sessions';
import { NEW_SESSION_DEFAULTS, sessionAdapter, sessionForm, sessionPickers } from '$lib/server/session-forms';
import { blankNumberFields } from '$lib/schemas/blank';
import { rangeSessionInput } from '$lib/schemas/range';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'range_officer');
	const [form, pickers] = await Promise.all([sessionForm({ ...NEW_SESSION_DEFAULTS, startedAt: new Date() }), sessionPickers()]);
	return { form, ...pickers, blankFields: blankNumberFields(rangeSessionInput, NEW_SESSION_DEFAULTS) };
};

export const actions: Actions = {
	createSession: async (event) => {
		const user = await requireRole(event, 'range_officer');
		const form = await superValidate(event.request, sessionAdapter);
		if (!form.valid) return fail(400, { form });
		let id: number;
		try {
			id = (await sessions.create(form.data, user)).id;
		} catch (err) {
			return failWithRule(form, err);
		}
		redirect(303, `/sessions/${id}`);
	}
};
