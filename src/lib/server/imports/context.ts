// What an import needs to know about where its rows go: the target session (or, for sessions
// from a column, the sessions whose titles the file names and the template new ones copy), the
// sequence numbers those sessions already use, the rig's rated pressure, and the model that
// predicts their shots (for the unit check). Read under row locks when committing, so two imports
// or a tablet logging into the same session cannot hand out the same sequence number.
import { and, eq, inArray, isNull, sql } from 'drizzle-orm';
import { hasRole } from '$lib/roles';
import { predictShot } from '$lib/physics/launcher';
import { PhysicsInputError } from '$lib/physics/errors';
import type { ImportTarget } from '$lib/schemas/imports';
import { rangeSessions, rigs, shots } from '../db/schema';
import {
	calibrationsInForce,
	ConditionsCache,
	inForceFor,
	launcherProjectile,
	launcherRig,
	type Executor,
	type RangeSessionRow
} from '../reconcile/model';
import { ImportRefused } from './errors';
import type { Predictor } from './plausibility';
import { titleKey, type CheckContext, type SessionTarget } from './validate';

export type TargetsLoaded = {
	context: CheckContext;
	predictors: Map<string, Predictor>;
	/** The session rows by id (the target, or the template and the matched sessions). */
	sessionRows: Map<number, RangeSessionRow>;
	/** The session new sessions copy (sessions from a column). */
	template: RangeSessionRow | null;
};

type Options = { lock: boolean; nowMs?: number };

async function sessionById(tx: Executor, id: number, lock: boolean) {
	const query = tx.select().from(rangeSessions).where(eq(rangeSessions.id, id));
	const [row] = lock ? await query.for('update') : await query;
	return row ?? null;
}

async function ratedPressures(tx: Executor, rigIds: number[]) {
	if (rigIds.length === 0) return new Map<number, number>();
	const rows = await tx.select({ id: rigs.id, rated: rigs.ratedPressurePa }).from(rigs).where(inArray(rigs.id, rigIds));
	return new Map(rows.map((r) => [r.id, r.rated]));
}

async function sequencesOf(tx: Executor, sessionIds: number[]) {
	const bySession = new Map<number, Map<number, boolean>>();
	for (const id of sessionIds) bySession.set(id, new Map());
	if (sessionIds.length === 0) return bySession;
	const rows = await tx
		.select({ sessionId: shots.sessionId, sequence: shots.sequence, deleted: sql<number>`${shots.deletedAt} IS NOT NULL`.mapWith(Number) })
		.from(shots)
		.where(inArray(shots.sessionId, sessionIds));
	for (const r of rows) bySession.get(r.sessionId)!.set(r.sequence, r.deleted === 1);
	return bySession;
}

function maxOf(sequences: Map<number, boolean>) {
	let max = 0;
	for (const s of sequences.keys()) if (s > max) max = s;
	return max;
}

function targetFrom(row: RangeSessionRow, rated: number, existing: Map<number, boolean>, blocked: string | null): SessionTarget {
	return {
		key: `session:${row.id}`,
		id: row.id,
		title: row.title,
		startedAtMs: row.startedAt.getTime(),
		blocked,
		ratedPressurePa: rated,
		existing,
		maxSequence: maxOf(existing),
		downrangeChronoM: row.downrangeChronoM,
		temperatureC: row.temperatureC,
		pressurePa: row.pressurePa
	};
}

const closedMessage = (title: string) => `Session “${title}” is closed; only a lead may add shots to it now.`;

/** A predictor per target: the calibration in force (or the nominal values) of its rig and projectile. */
async function predictorsFor(tx: Executor, targets: { key: string; session: RangeSessionRow }[]) {
	const pairs = targets.map((t) => ({ rigId: t.session.rigId, projectileId: t.session.projectileId }));
	const inForce = await calibrationsInForce(tx, pairs);
	const conditions = new ConditionsCache();
	const predictors = new Map<string, Predictor>();
	for (const { key, session } of targets) {
		const pair = inForceFor(inForce, session.rigId, session.projectileId);
		const rig = launcherRig(pair.rig);
		const projectile = launcherProjectile(pair.projectile);
		const range = conditions.of(session);
		const downrange = session.downrangeChronoM === null ? {} : { downrangeDistanceM: session.downrangeChronoM };
		predictors.set(key, (fillGaugePa) => {
			try {
				const p = predictShot(pair.model, { rig, projectile, session: range, fillGaugePa }, downrange);
				return p.ok ? { muzzleMps: p.muzzleSpeedMps, downrangeMps: p.downrange?.speedMps ?? null } : null;
			} catch (e) {
				if (e instanceof PhysicsInputError) return null;
				throw e;
			}
		});
	}
	return predictors;
}

/**
 * The target sessions of an import. One session: it must exist, be live, and be open (or the
 * user a lead). Sessions from a column: the template must exist; each title in the file (case
 * and spacing ignored) names one live session, or none — then a new session copies the
 * template — or several, and then its rows are refused as ambiguous.
 */
export async function loadTargets(
	tx: Executor,
	target: ImportTarget,
	titles: Map<string, string> | null,
	user: AppUser,
	options: Options
): Promise<TargetsLoaded> {
	const nowMs = options.nowMs ?? Date.now();
	const isLead = hasRole(user.role, 'lead');
	if (target.kind === 'session') {
		const row = await sessionById(tx, target.sessionId, options.lock);
		if (!row || row.deletedAt) throw new ImportRefused(`No range session with id ${target.sessionId}.`, 404, 'session', [], 'sessionId');
		if (row.status === 'closed' && !isLead) throw new ImportRefused(closedMessage(row.title), 403, 'session', [], 'sessionId');
		const [rated, sequences] = await Promise.all([ratedPressures(tx, [row.rigId]), sequencesOf(tx, [row.id])]);
		const single = targetFrom(row, rated.get(row.rigId)!, sequences.get(row.id)!, null);
		const predictors = await predictorsFor(tx, [{ key: single.key, session: row }]);
		return { context: { single, byTitle: new Map(), nowMs }, predictors, sessionRows: new Map([[row.id, row]]), template: null };
	}

	const template = await sessionById(tx, target.templateSessionId, false);
	if (!template || template.deletedAt)
		throw new ImportRefused(`No range session with id ${target.templateSessionId} to copy for new sessions.`, 404, 'session', [], 'templateSessionId');
	const wanted = [...(titles ?? new Map()).entries()];
	const matched = wanted.length
		? await (options.lock
				? tx
						.select()
						.from(rangeSessions)
						.where(and(inArray(rangeSessions.title, wanted.map(([, t]) => t)), isNull(rangeSessions.deletedAt)))
						.orderBy(rangeSessions.id)
						.for('update')
				: tx
						.select()
						.from(rangeSessions)
						.where(and(inArray(rangeSessions.title, wanted.map(([, t]) => t)), isNull(rangeSessions.deletedAt))))
		: [];
	const byKey = new Map<string, RangeSessionRow[]>();
	for (const row of matched) byKey.set(titleKey(row.title), [...(byKey.get(titleKey(row.title)) ?? []), row]);
	const existingIds = matched.map((r) => r.id);
	const [rated, sequences] = await Promise.all([
		ratedPressures(tx, [...new Set([template.rigId, ...matched.map((r) => r.rigId)])]),
		sequencesOf(tx, existingIds)
	]);
	const byTitle = new Map<string, SessionTarget>();
	const sessionRows = new Map<number, RangeSessionRow>([[template.id, template]]);
	const modelOf: { key: string; session: RangeSessionRow }[] = [];
	for (const [key, title] of wanted) {
		const rows = byKey.get(key) ?? [];
		if (rows.length > 1) {
			byTitle.set(key, {
				...targetFrom(rows[0], rated.get(rows[0].rigId)!, new Map(), `${rows.length} sessions are titled “${rows[0].title}” (ids ${rows.map((r) => r.id).join(', ')}); rename all but one, or import into one session.`),
				key: `title:${key}`
			});
			continue;
		}
		if (rows.length === 1) {
			const row = rows[0];
			sessionRows.set(row.id, row);
			const t = targetFrom(row, rated.get(row.rigId)!, sequences.get(row.id)!, row.status === 'closed' && !isLead ? closedMessage(row.title) : null);
			byTitle.set(key, t);
			modelOf.push({ key: t.key, session: row });
			continue;
		}
		const fresh: SessionTarget = {
			key: `new:${key}`,
			id: null,
			title,
			startedAtMs: null,
			blocked: null,
			ratedPressurePa: rated.get(template.rigId)!,
			existing: new Map(),
			maxSequence: 0,
			downrangeChronoM: template.downrangeChronoM,
			temperatureC: template.temperatureC,
			pressurePa: template.pressurePa
		};
		byTitle.set(key, fresh);
		modelOf.push({ key: fresh.key, session: template });
	}
	modelOf.push({ key: `template:${template.id}`, session: template });
	const predictors = await predictorsFor(tx, modelOf);
	return { context: { single: null, byTitle, nowMs }, predictors, sessionRows, template };
}
