// What the session page, its printable report and the close-out e-mail show: the session with
// its rig, projectile and plan, every live shot with its prediction, and the statistics.
import { error } from '@sveltejs/kit';
import { db } from './db';
import * as sessions from './sessions';
import * as shots from './shots';
import { ReconcileError, sessionStatistics } from './reconcile';
import { appLink } from './mail';
import { queueForLeads } from './leads';
import { recordAudit } from './audit';

export async function sessionView(id: number) {
	const [view, allShots, statistics] = await Promise.all([
		sessions.getOr404(id),
		shots.allForSession(id),
		// An unknown session is getOr404's 404; the statistics' own "not found" (a ReconcileError)
		// must not win the race and turn it into a 500.
		sessionStatistics(db, id).catch((e: unknown) => (e instanceof ReconcileError && e.status === 404 ? null : Promise.reject(e)))
	]);
	if (!statistics) error(404, { message: `No range session with id ${id}.` });
	return { ...view, shots: allShots, statistics };
}

export type SessionView = Awaited<ReturnType<typeof sessionView>>;

const fixed = (v: number | null | undefined, digits: number, unit: string) => (v === null || v === undefined ? '—' : `${v.toFixed(digits)} ${unit}`);

/** The close-out summary for leads, in SI with the units written out (e-mail has no preferences). */
export function closeOutText(view: SessionView, link: string) {
	const s = view.statistics;
	const lines = [
		`Range session "${view.session.title}" was closed.`,
		`Rig: ${view.rig.name}; projectile: ${view.projectile.name}; test plan: ${view.plan?.name ?? 'none'}.`,
		'',
		`Shots: ${s.counts.shots} (misses: ${s.counts.misses}).`,
		`Muzzle speed: mean ${fixed(s.speed.muzzle.mean, 2, 'm/s')}, SD ${fixed(s.speed.muzzle.sd, 2, 'm/s')}, extreme spread ${fixed(s.speed.muzzle.extremeSpread, 2, 'm/s')}.`,
		`Group: CEP ${fixed(s.group.cepExact === null ? null : s.group.cepExact * 1000, 1, 'mm')}, mean radius ${fixed(s.group.meanRadius === null ? null : s.group.meanRadius * 1000, 1, 'mm')}.`,
		`Model bias (muzzle speed): ${fixed(s.bias.muzzleSpeed.mean, 2, 'm/s')}${s.bias.muzzleSpeedPercent ? ` (${s.bias.muzzleSpeedPercent.mean.toFixed(2)} %)` : ''}${s.predictionsFrom.uncalibrated ? ', against uncalibrated nominal values' : ''}.`,
		s.drift.flagged ? 'Drift: residuals trend with sequence or time (flagged).' : 'Drift: none flagged.',
		s.plan ? `Plan: ${s.plan.passedBoth} of ${s.plan.shotsRequired} required shots met speed and impact (${s.plan.requirementMet ? 'met' : 'NOT met'}).` : '',
		'',
		`Report: ${link}`
	];
	return lines.filter((l, i, all) => l !== '' || all[i - 1] !== '').join('\n');
}

export const SESSION_REPORT_MAIL = 'session_report';

/**
 * Queue the close-out report for every active lead (the outbox sends it, mail/outbox.ts), with
 * an audit event in the same transaction. On close, and when a lead asks for it again (resend).
 * Returns how many leads it was queued for.
 */
export async function queueSessionReport(id: number, actor: AppUser, reason: 'closed' | 'resent') {
	const view = await sessionView(id);
	const text = closeOutText(view, appLink(`/sessions/${id}/report`));
	return db.transaction(async (tx) => {
		const queued = await queueForLeads(tx, { kind: SESSION_REPORT_MAIL, entityId: id, subject: `Session closed: ${view.session.title}`, text });
		await recordAudit(tx, { userId: actor.id, action: reason === 'closed' ? 'report_mail_queued' : 'report_mail_resent', entityType: 'range_session', entityId: id, after: { leads: queued } });
		return queued;
	});
}
