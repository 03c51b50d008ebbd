import { fail, isRedirect, redirect } from '@sveltejs/kit';
import { superValidate, message, setError } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { signInSchema } from '$lib/schemas/accounts';
import { authActionEvent, signIn } from '$lib/server/auth';
import { optionalUser } from '$lib/server/guards';
import * as rateLimit from '$lib/server/accounts/rate-limit';
import * as accounts from '$lib/server/accounts/sign-in';
import type { Actions, PageServerLoad } from './$types';

/** Auth.js throws (rather than redirects) when authorize() refuses the credentials. */
function isCredentialsFailure(thrown: unknown) {
	return (thrown as { type?: string } | null)?.type === 'CredentialsSignin';
}

/** Only same-site paths are followed after sign-in (no open redirect). */
function safeNext(value: string | null) {
	return value && value.startsWith('/') && !value.startsWith('//') ? value : '/';
}

export const load: PageServerLoad = async (event) => {
	if (await optionalUser(event)) redirect(303, safeNext(event.url.searchParams.get('next')));
	return { form: await superValidate(zod4(signInSchema)) };
};

export const actions: Actions = {
	signIn: async (event) => {
		const form = await superValidate(event.request, zod4(signInSchema));
		if (!form.valid) return fail(400, { form });
		const address = event.getClientAddress();
		const waitMinutes = await rateLimit.signInBlockedFor(form.data.email, address);
		if (waitMinutes > 0)
			return message(form, `Too many failed sign-ins. Wait ${waitMinutes} minutes and try again, or ask an admin to reset your password.`, { status: 429 });

		const next = safeNext(event.url.searchParams.get('next'));
		try {
			await signIn(authActionEvent(event, { providerId: 'credentials', email: form.data.email, password: form.data.password, redirectTo: next }));
		} catch (thrown) {
			if (isRedirect(thrown) && !thrown.location.includes('error=')) {
				await rateLimit.clearAccountFailures(form.data.email);
				redirect(303, next);
			}
			if (!isRedirect(thrown) && !isCredentialsFailure(thrown)) throw thrown;
		}
		await accounts.recordFailedSignIn(form.data.email, address);
		form.data.password = '';
		return setError(form, 'password', 'That e-mail and password do not match an active account.');
	}
};
