import { fail } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { inviteSchema } from '$lib/schemas/accounts';
import { requireRole } from '$lib/server/guards';
import * as admin from '$lib/server/accounts/admin';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'admin');
	const [users, inviteForm] = await Promise.all([admin.listUsers(), superValidate(zod4(inviteSchema))]);
	return { users, inviteForm };
};

export const actions: Actions = {
	invite: async (event) => {
		const actor = await requireRole(event, 'admin');
		const form = await superValidate(event.request, zod4(inviteSchema));
		if (!form.valid) return fail(400, { form });
		try {
			const result = await admin.inviteUser(actor, form.data);
			if (!result.ok) return setError(form, result.field, result.message);
		} catch (err) {
			if (err instanceof admin.MailDeliveryError)
				return message(form, `${err.message} The account exists: send the invitation again from its page.`, { status: 502 });
			throw err;
		}
		return message(form, `Invitation sent to ${form.data.email}.`);
	}
};
