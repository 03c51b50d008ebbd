import { fail } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import {
	changePasswordSchema,
	createTokenSchema,
	revokeTokenSchema,
	unitPreferencesSchema
} from '$lib/schemas/accounts';
import { prefsFor } from '$lib/format';
import { requireUser } from '$lib/server/guards';
import { signInWithPassword } from '$lib/server/auth';
import * as profile from '$lib/server/accounts/profile';
import * as tokens from '$lib/server/accounts/tokens';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = await requireUser(event);
	const [passwordForm, unitsForm, tokenForm, tokenList] = await Promise.all([
		superValidate(zod4(changePasswordSchema), { id: 'password' }),
		superValidate(prefsFor(user.unitPreferences), zod4(unitPreferencesSchema), { id: 'units', errors: false }),
		superValidate(zod4(createTokenSchema), { id: 'token' }),
		tokens.listApiTokens(user.id)
	]);
	return { passwordForm, unitsForm, tokenForm, tokens: tokenList };
};

export const actions: Actions = {
	changePassword: async (event) => {
		const user = await requireUser(event);
		const form = await superValidate(event.request, zod4(changePasswordSchema), { id: 'password' });
		const { current, password } = form.data;
		// Passwords never travel back to the browser, not even to the person who typed them.
		form.data = { current: '', password: '', confirm: '' };
		if (!form.valid) return fail(400, { form });
		const result = await profile.changePassword(user, current, password, event.getClientAddress());
		if (!result.ok && 'field' in result) return setError(form, 'current', result.message);
		if (!result.ok) return message(form, result.message, { status: 429 });
		// Every session of the user ended with the old password; this one goes on, signed in anew.
		await signInWithPassword(event, user.email, password);
		return message(form, 'Password changed. Your other sessions are signed out.');
	},

	saveUnits: async (event) => {
		const user = await requireUser(event);
		const form = await superValidate(event.request, zod4(unitPreferencesSchema), { id: 'units' });
		if (!form.valid) return fail(400, { form });
		await profile.saveUnitPreferences(user, form.data);
		return message(form, 'Display units saved.');
	},

	createToken: async (event) => {
		const user = await requireUser(event);
		const form = await superValidate(event.request, zod4(createTokenSchema), { id: 'token' });
		if (!form.valid) return fail(400, { form });
		const created = await tokens.createApiToken(user.id, form.data.name);
		form.data.name = '';
		// The clear token goes back in this one response and is never readable again.
		return { form, created: { id: created.id, name: created.name, token: created.token } };
	},

	revokeToken: async (event) => {
		const user = await requireUser(event);
		const form = await superValidate(event.request, zod4(revokeTokenSchema));
		if (!form.valid) return fail(400, { revokeProblem: 'Choose a token to revoke.' });
		if (!(await tokens.revokeApiToken(user.id, form.data.tokenId)))
			return fail(404, { revokeProblem: 'That token is not among yours, or it is revoked already.' });
		return { revoked: form.data.tokenId };
	}
};
