import { error, fail, redirect } from '@sveltejs/kit';
import { requireRole, requireUser } from '$lib/server/guards';
import { idParam } from '$lib/server/forms';
import { pageNumber } from '$lib/server/listing';
import * as sessions from '$lib/server/sessions';
import * as shots from '$lib/server/shots';
import * as sessionReport from '$lib/server/session-view';
import { deliveryOf } from '$lib/server/mail/outbox';
import type { Actions, PageServerLoad } from './$types';

const SHOTS_PER_PAGE = 100;

export const load: PageServerLoad = async (event) => {
	await requireUser(event);
	const id = idParam(event.params.id, 'range session');
	const page = pageNumber(event.url);
	const [view, table, delivery] = await Promise.all([
		sessionReport.sessionView(id),
		shots.listForSession(id, { page, pageSize: SHOTS_PER_PAGE }),
		deliveryOf(sessionReport.SESSION_REPORT_MAIL, id)
	]);
	return { view, table, mailed: event.url.searchParams.get('mailed'), delivery };
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
		// The report is queued, not sent here: closing never waits on the mail server.
		const mailed = await sessionReport.queueSessionReport(id, user, 'closed');
		redirect(303, `/sessions/${id}?mailed=${mailed}`);
	},
	resendReport: async (event) => {
		const user = await requireRole(event, 'lead');
		const id = idParam(event.params.id, 'range session');
		const { session } = await sessions.getOr404(id);
		if (session.deletedAt) error(404, { message: `No range session with id ${id}.` });
		if (session.status !== 'closed') return fail(409, { message: 'The report goes out once the session is closed.' });
		const queued = await sessionReport.queueSessionReport(id, user, 'resent');
		redirect(303, `/sessions/${id}?mailed=${queued}`);
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
