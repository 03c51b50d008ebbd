import { error, fail, redirect } from '@sveltejs/kit';
import { requireRole, requireUser } from '$lib/server/guards';
import { idParam } from '$lib/server/forms';
import * as sessions from '$lib/server/sessions';
import * as shots from '$lib/server/shots';
import { notifyLeadsOfClose, sessionView } from '$lib/server/session-view';
import type { Actions, PageServerLoad } from './$types';

const SHOTS_PER_PAGE = 100;

function pageParam(url: URL) {
	const raw = url.searchParams.get('page');
	const n = raw === null ? 1 : Number(raw);
	if (!Number.isInteger(n) || n < 1) error(400, { message: `URL parameter "page" must be a whole number from 1; got "${raw}".` });
	return n;
}

export const load: PageServerLoad = async (event) => {
	await requireUser(event);
	const id = idParam(event.params.id, 'range session');
	const [view, table] = await Promise.all([sessionView(id), shots.listForSession(id, { page: pageParam(event.url), pageSize: SHOTS_PER_PAGE })]);
	return { view, table, mailed: event.url.searchParams.get('mailed') };
};

/** A broken session rule (closed, not found, not allowed) becomes a message on the page. */
function ruleFailure(err: unknown) {
	if (err instanceof sessions.SessionRuleError) return fail(err.status, { message: err.message });
	throw err;
}

export const actions: Actions = {
	closeSession: async (event) => {
		const user = await requireRole(event, 'range_officer');
		const id = idParam(event.params.id, 'range session');
		try {
			await sessions.close(id, user);
		} catch (err) {
			return ruleFailure(err);
		}
		// The session is closed whatever happens to the mail; a mail failure is reported, not hidden.
		const mailed = await notifyLeadsOfClose(id).then(String, () => 'failed');
		redirect(303, `/sessions/${id}?mailed=${mailed}`);
	},
	reopenSession: async (event) => {
		const user = await requireRole(event, 'lead');
		const id = idParam(event.params.id, 'range session');
		try {
			await sessions.reopen(id, user);
		} catch (err) {
			return ruleFailure(err);
		}
		redirect(303, `/sessions/${id}`);
	},
	deleteSession: async (event) => {
		const user = await requireRole(event, 'range_officer');
		try {
			await sessions.setDeleted(idParam(event.params.id, 'range session'), true, user);
		} catch (err) {
			return ruleFailure(err);
		}
		redirect(303, '/sessions');
	},
	restoreSession: async (event) => {
		const user = await requireRole(event, 'range_officer');
		const id = idParam(event.params.id, 'range session');
		try {
			await sessions.setDeleted(id, false, user);
		} catch (err) {
			return ruleFailure(err);
		}
		redirect(303, `/sessions/${id}`);
	}
};
