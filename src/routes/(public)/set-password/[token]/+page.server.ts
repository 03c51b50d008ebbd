import { fail, redirect } from '@sveltejs/kit';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { setPasswordSchema } from '$lib/schemas/accounts';
import * as passwordLinks from '$lib/server/accounts/password-tokens';
import type { Actions, PageServerLoad } from './$types';

// Public on purpose: the token in the address is the credential (hashed in the database,
// one use, expiring). Signed-in or not makes no difference.

export const load: PageServerLoad = async ({ params }) => {
	const link = await passwordLinks.checkPasswordToken(params.token);
	return {
		link: link && { purpose: link.purpose, name: link.name, email: link.email, expiresAt: link.expiresAt },
		form: await superValidate(zod4(setPasswordSchema))
	};
};

export const actions: Actions = {
	setPassword: async (event) => {
		const form = await superValidate(event.request, zod4(setPasswordSchema));
		if (!form.valid) return fail(400, { form });
		const redeemed = await passwordLinks.redeemPasswordToken(event.params.token, form.data.password);
		if (!redeemed) {
			form.data.password = form.data.confirm = '';
			return message(form, 'This link has expired or has been used already. Ask for a new one.', { status: 410 });
		}
		redirect(303, '/signin?password=set');
	}
};
