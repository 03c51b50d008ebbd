import { error, fail, type RequestEvent } from '@sveltejs/kit';
import { message, superValidate, type Infer } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { changeRoleSchema, revokeTokenSchema, type RoleFormMessage } from '$lib/schemas/accounts';
import { requireRole } from '$lib/server/guards';
import * as admin from '$lib/server/accounts/admin';
import * as tokens from '$lib/server/accounts/tokens';
import { ROLE_LABELS } from '$lib/roles';
import type { Actions, PageServerLoad } from './$types';

const NOT_FOUND = { message: 'No user with that id.' };

function userId(event: Pick<RequestEvent, 'params'>) {
	const id = Number(event.params.id);
	if (!Number.isInteger(id) || id <= 0) error(404, NOT_FOUND);
	return id;
}

/** A refused rule (last admin, own account, …) goes back to the page as `problem`. */
async function ruled<T>(work: () => Promise<T>) {
	try {
		return { value: await work() };
	} catch (err) {
		if (err instanceof admin.AccountRuleError || err instanceof admin.MailDeliveryError) return { problem: err.message };
		throw err;
	}
}

export const load: PageServerLoad = async (event) => {
	const actor = await requireRole(event, 'admin');
	const detail = await admin.userDetail(userId(event));
	if (!detail) error(404, NOT_FOUND);
	const roleForm = await superValidate<Infer<typeof changeRoleSchema>, RoleFormMessage>({ role: detail.user.role }, zod4(changeRoleSchema));
	return { ...detail, roleForm, isSelf: actor.id === detail.user.id };
};

export const actions: Actions = {
	changeRole: async (event) => {
		const actor = await requireRole(event, 'admin');
		const id = userId(event);
		const form = await superValidate<Infer<typeof changeRoleSchema>, RoleFormMessage>(event.request, zod4(changeRoleSchema));
		if (!form.valid) return fail(400, { form });
		const outcome = await ruled(() => admin.changeRole(actor, id, form.data.role));
		if ('problem' in outcome) return message(form, { tone: 'problem', text: outcome.problem }, { status: 409 });
		if (!outcome.value) error(404, NOT_FOUND);
		return message(form, { tone: 'ok', text: outcome.value.changed ? `Role changed to ${ROLE_LABELS[form.data.role]}.` : 'The role was already that; nothing changed.' });
	},

	disable: async (event) => {
		const actor = await requireRole(event, 'admin');
		const outcome = await ruled(() => admin.setDisabled(actor, userId(event), true));
		if ('problem' in outcome) return fail(409, { problem: outcome.problem });
		if (!outcome.value) error(404, NOT_FOUND);
		return { notice: 'Account disabled. Its sessions and API tokens stop working now.' };
	},

	enable: async (event) => {
		const actor = await requireRole(event, 'admin');
		const outcome = await ruled(() => admin.setDisabled(actor, userId(event), false));
		if ('problem' in outcome) return fail(409, { problem: outcome.problem });
		if (!outcome.value) error(404, NOT_FOUND);
		return { notice: 'Account enabled again.' };
	},

	resendInvitation: async (event) => {
		const actor = await requireRole(event, 'admin');
		const outcome = await ruled(() => admin.resendInvitation(actor, userId(event)));
		if ('problem' in outcome) return fail(409, { problem: outcome.problem });
		if (!outcome.value) error(404, NOT_FOUND);
		return { notice: 'A new invitation is on its way.' };
	},

	revokeToken: async (event) => {
		const actor = await requireRole(event, 'admin');
		const id = userId(event);
		const form = await superValidate(event.request, zod4(revokeTokenSchema));
		if (!form.valid) return fail(400, { problem: 'Choose a token to revoke.' });
		if (!(await tokens.revokeApiToken(id, form.data.tokenId, actor.id)))
			return fail(404, { problem: 'That token does not belong to this user, or it is revoked already.' });
		return { notice: 'Token revoked.' };
	}
};
