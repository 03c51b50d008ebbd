import { fail, redirect } from '@sveltejs/kit';
import { superValidate, message, setError } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { signInSchema } from '$lib/schemas/accounts';
import { signInWithPassword } from '$lib/server/auth';
import { optionalUser } from '$lib/server/guards';
import { sameOriginPath } from '$lib/server/safe-path';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	if (await optionalUser(event)) redirect(303, sameOriginPath(event.url.searchParams.get('next')));
	return { form: await superValidate(zod4(signInSchema)) };
};

export const actions: Actions = {
	signIn: async (event) => {
		const form = await superValidate(event.request, zod4(signInSchema));
		if (!form.valid) return fail(400, { form });
		// The rate limit, the password check and the audit all happen inside (accounts/sign-in.ts).
		const outcome = await signInWithPassword(event, form.data.email, form.data.password);
		if (outcome.ok) redirect(303, sameOriginPath(event.url.searchParams.get('next')));
		form.data.password = '';
		if (outcome.blockedMinutes > 0)
			return message(form, `Too many failed sign-ins. Wait ${outcome.blockedMinutes} minutes and try again, or ask an admin to reset your password.`, { status: 429 });
		return setError(form, 'password', 'That e-mail and password do not match an active account.');
	}
};
