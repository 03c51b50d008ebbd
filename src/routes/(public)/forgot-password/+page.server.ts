import { fail } from '@sveltejs/kit';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { forgotPasswordSchema } from '$lib/schemas/accounts';
import * as passwordLinks from '$lib/server/accounts/password-tokens';
import type { Actions, PageServerLoad } from './$types';

// Public on purpose: people who cannot sign in ask for a link here.

/** The one answer, whether or not the address has an account (no account discovery). */
const ANSWER =
	'If an active account uses that address, a link to set a new password is on its way. It works once, for one hour. Nothing arrived? Check the address, or ask an admin.';

export const load: PageServerLoad = async () => ({ form: await superValidate(zod4(forgotPasswordSchema)) });

export const actions: Actions = {
	requestReset: async (event) => {
		const form = await superValidate(event.request, zod4(forgotPasswordSchema));
		if (!form.valid) return fail(400, { form });
		await passwordLinks.requestPasswordReset(form.data.email, event.getClientAddress());
		return message(form, ANSWER);
	}
};
