// Statistics of a session and of a rig over time (physics.md §6; issue 4): speed strings, impact
// groups, model bias (mean residual with its Student-t interval), drift of the residuals against
// shot order and time (slope t-test), and pass counts against the plan. The formulas live in the
// physics module (speedStats, groupStats, meanWithInterval, linearTrend); this module selects the
// shots (not deleted), pairs them with their stored predictions and groups them per session.
import { and, asc, eq, gte, inArray, isNull, lte } from 'drizzle-orm';
import { groupStats, type GroupStats } from '$lib/physics/stats/group';
import { speedStats, type SpeedStats } from '$lib/physics/stats/speed';
import { DRIFT_P_THRESHOLD, linearTrend, meanWithInterval, type LinearTrend, type MeanInterval } from '$lib/physics/stats/trend';
import {
	calibrations,
	projectiles,
	rangeSessions,
	rigs,
	shotPredictions,
	shots,
	testPlans,
	type SpeedBasis
} from '../db/schema';
import { ReconcileError } from './errors';
import type { Executor, RangeSessionRow } from './model';

const DAY_MS = 24 * 3600 * 1000;

type ShotRow = typeof shots.$inferSelect;
type PredictionRow = typeof shotPredictions.$inferSelect;
type PlanRow = typeof testPlans.$inferSelect;

export type ResidualKind = 'muzzleSpeed' | 'downrangeSpeed' | 'impactX' | 'impactY';
const RESIDUAL_KINDS: ResidualKind[] = ['muzzleSpeed', 'downrangeSpeed', 'impactX', 'impactY'];

export interface ResidualDrift {
	/** Residual against the shot's sequence number (per shot). */
	bySequence: LinearTrend;
	/** Residual against the time since the session's first shot (per second). */
	byTime: LinearTrend;
	/** Either test is significant (p < DRIFT_P_THRESHOLD). */
	flagged: boolean;
}

export interface SessionStatistics {
	session: Pick<
		RangeSessionRow,
		'id' | 'title' | 'status' | 'startedAt' | 'rigId' | 'projectileId' | 'testPlanId' | 'targetDistanceM'
	>;
	counts: {
		/** Shots not deleted. */
		shots: number;
		misses: number;
		withMuzzleSpeed: number;
		withDownrangeSpeed: number;
		withImpact: number;
		/** Shots with a stored prediction the model could make. */
		predicted: number;
		/** Shots with no prediction row yet (recomputePredictions has not run for them). */
		withoutPrediction: number;
	};
	/** Calibrations the stored predictions used; `uncalibrated` when some used nominal values. */
	predictionsFrom: { calibrationIds: number[]; uncalibrated: boolean };
	speed: { muzzle: SpeedStats; downrange: SpeedStats };
	/** Impacts that hit (misses counted apart in `misses`, design/product.md). */
	group: GroupStats & { misses: number };
	/** Mean residual (measured − predicted) with its 95 % Student-t interval, per kind. */
	bias: Record<ResidualKind, MeanInterval> & {
		/** Muzzle-speed bias as a percentage of the session's mean measured muzzle speed. */
		muzzleSpeedPercent: { mean: number; lower: number | null; upper: number | null } | null;
	};
	/** Per kind (each test at DRIFT_P_THRESHOLD), and `flagged` for the session (see sessionDriftFlag). */
	drift: Record<ResidualKind, ResidualDrift> & { flagged: boolean };
	plan: PlanCounts | null;
}

export interface PlanCounts {
	planId: number;
	name: string;
	speedAt: PlanRow['speedAt'];
	shotsRequired: number;
	speed: { passed: number; failed: number; notJudged: number; byBasis: Record<SpeedBasis, number> };
	impact: { passed: number; failed: number; notJudged: number };
	/** Shots that met both the speed and the impact requirement. */
	passedBoth: number;
	/** passedBoth ≥ shotsRequired. */
	requirementMet: boolean;
}

export interface RigCalibrationAge {
	projectileId: number;
	projectileName: string;
	/** Null when the pair has no approved calibration (predictions are uncalibrated). */
	calibrationId: number | null;
	approvedAt: Date | null;
	/** Days from approval to `now`. */
	ageDays: number | null;
}

export interface RigStatistics {
	rig: { id: number; name: string };
	/** Per session, oldest first. */
	sessions: SessionStatistics[];
	/** The approved calibration's age per projectile fired on the rig (or calibrated for it). */
	calibrations: RigCalibrationAge[];
}

/** The columns statistics read (a 100 000-shot session is read whole, so no more than these). */
const SHOT_COLUMNS = {
	id: shots.id,
	sessionId: shots.sessionId,
	sequence: shots.sequence,
	firedAt: shots.firedAt,
	muzzleSpeedMps: shots.muzzleSpeedMps,
	downrangeSpeedMps: shots.downrangeSpeedMps,
	impactXM: shots.impactXM,
	impactYM: shots.impactYM,
	miss: shots.miss,
	deletedAt: shots.deletedAt
};
const PREDICTION_COLUMNS = {
	shotId: shotPredictions.shotId,
	calibrationId: shotPredictions.calibrationId,
	muzzleResidualMps: shotPredictions.muzzleResidualMps,
	downrangeResidualMps: shotPredictions.downrangeResidualMps,
	impactXResidualM: shotPredictions.impactXResidualM,
	impactYResidualM: shotPredictions.impactYResidualM,
	passSpeed: shotPredictions.passSpeed,
	passImpact: shotPredictions.passImpact,
	speedBasis: shotPredictions.speedBasis,
	predictionError: shotPredictions.predictionError
};
type StatisticsShot = Pick<ShotRow, keyof typeof SHOT_COLUMNS>;
type StatisticsPrediction = Pick<PredictionRow, keyof typeof PREDICTION_COLUMNS>;
/** A shot with its stored prediction (null when none has been computed yet). */
export type ShotWithPrediction = { shot: StatisticsShot; prediction: StatisticsPrediction | null };

function residualOf(kind: ResidualKind, p: StatisticsPrediction): number | null {
	switch (kind) {
		case 'muzzleSpeed':
			return p.muzzleResidualMps;
		case 'downrangeSpeed':
			return p.downrangeResidualMps;
		case 'impactX':
			return p.impactXResidualM;
		default:
			return p.impactYResidualM;
	}
}

function drift(points: { sequence: number; seconds: number; residual: number }[]): ResidualDrift {
	const residuals = points.map((p) => p.residual);
	const bySequence = linearTrend(residuals, points.map((p) => p.sequence));
	const byTime = linearTrend(residuals, points.map((p) => p.seconds));
	return { bySequence, byTime, flagged: bySequence.driftFlag || byTime.driftFlag };
}

/**
 * The session's drift flag. Screening up to four residual kinds against two positions at 5 % each
 * would flag about one session in four on noise alone, so the session flag holds the family-wise
 * rate at DRIFT_P_THRESHOLD: some test's p < DRIFT_P_THRESHOLD / m over the m tests that could be
 * formed (Bonferroni; conservative here, since sequence and time are nearly collinear).
 */
function sessionDriftFlag(drifts: Record<ResidualKind, ResidualDrift>): boolean {
	const pValues = RESIDUAL_KINDS.flatMap((k) => [drifts[k].bySequence, drifts[k].byTime])
		.map((t) => t.pValue)
		.filter((p): p is number => p !== null);
	return pValues.some((p) => p < DRIFT_P_THRESHOLD / pValues.length);
}

function planCounts(plan: PlanRow, rows: ShotWithPrediction[]): PlanCounts {
	const speed = {
		passed: 0,
		failed: 0,
		notJudged: 0,
		byBasis: { muzzle_chronograph: 0, downrange_chronograph: 0, model_from_muzzle: 0 } as Record<SpeedBasis, number>
	};
	const impact = { passed: 0, failed: 0, notJudged: 0 };
	let passedBoth = 0;
	for (const { prediction: p } of rows) {
		const s = p?.passSpeed ?? null;
		const i = p?.passImpact ?? null;
		if (s === null) speed.notJudged++;
		else if (s) speed.passed++;
		else speed.failed++;
		if (p?.speedBasis) speed.byBasis[p.speedBasis]++;
		if (i === null) impact.notJudged++;
		else if (i) impact.passed++;
		else impact.failed++;
		if (s === true && i === true) passedBoth++;
	}
	return {
		planId: plan.id,
		name: plan.name,
		speedAt: plan.speedAt,
		shotsRequired: plan.shotsRequired,
		speed,
		impact,
		passedBoth,
		requirementMet: passedBoth >= plan.shotsRequired
	};
}

/** Statistics of one session from its (not deleted) shots and their stored predictions. Pure. */
export function statisticsOf(session: RangeSessionRow, rows: ShotWithPrediction[], plan: PlanRow | null): SessionStatistics {
	const live = rows.filter((r) => r.shot.deletedAt === null).sort((a, b) => a.shot.sequence - b.shot.sequence);
	const muzzle = live.map((r) => r.shot.muzzleSpeedMps).filter((v): v is number => v !== null);
	const downrange = live.map((r) => r.shot.downrangeSpeedMps).filter((v): v is number => v !== null);
	const hits = live.filter((r) => !r.shot.miss && r.shot.impactXM !== null && r.shot.impactYM !== null);
	const misses = live.filter((r) => r.shot.miss).length;
	// A loop, not Math.min(...array): an imported session can hold more shots than a call has arguments.
	const firstFired = live.reduce((t, r) => Math.min(t, r.shot.firedAt.getTime()), Infinity);

	const bias = {} as Record<ResidualKind, MeanInterval>;
	const drifts = {} as Record<ResidualKind, ResidualDrift>;
	for (const kind of RESIDUAL_KINDS) {
		const points = live.flatMap((r) => {
			const v = r.prediction ? residualOf(kind, r.prediction) : null;
			return v === null ? [] : [{ sequence: r.shot.sequence, seconds: (r.shot.firedAt.getTime() - firstFired) / 1000, residual: v }];
		});
		bias[kind] = meanWithInterval(points.map((p) => p.residual));
		drifts[kind] = drift(points);
	}
	const meanSpeed = speedStats(muzzle).mean;
	const b = bias.muzzleSpeed;
	const percent = (v: number | null) => (v === null || !meanSpeed ? null : (100 * v) / meanSpeed);
	const predictions = live.map((r) => r.prediction).filter((p): p is StatisticsPrediction => p !== null);

	return {
		session: {
			id: session.id,
			title: session.title,
			status: session.status,
			startedAt: session.startedAt,
			rigId: session.rigId,
			projectileId: session.projectileId,
			testPlanId: session.testPlanId,
			targetDistanceM: session.targetDistanceM
		},
		counts: {
			shots: live.length,
			misses,
			withMuzzleSpeed: muzzle.length,
			withDownrangeSpeed: downrange.length,
			withImpact: hits.length,
			predicted: predictions.filter((p) => p.predictionError === null).length,
			withoutPrediction: live.length - predictions.length
		},
		predictionsFrom: {
			calibrationIds: [...new Set(predictions.map((p) => p.calibrationId).filter((id): id is number => id !== null))].sort(
				(x, y) => x - y
			),
			uncalibrated: predictions.some((p) => p.calibrationId === null)
		},
		speed: { muzzle: speedStats(muzzle), downrange: speedStats(downrange) },
		group: { ...groupStats(hits.map((r) => ({ x: r.shot.impactXM!, y: r.shot.impactYM! }))), misses },
		bias: {
			...bias,
			muzzleSpeedPercent: b.mean === null || !meanSpeed ? null : { mean: percent(b.mean)!, lower: percent(b.lower), upper: percent(b.upper) }
		},
		drift: { ...drifts, flagged: sessionDriftFlag(drifts) },
		plan: plan ? planCounts(plan, live) : null
	};
}

async function shotsWithPredictions(tx: Executor, sessionIds: number[]): Promise<Map<number, ShotWithPrediction[]>> {
	const bySession = new Map<number, ShotWithPrediction[]>(sessionIds.map((id) => [id, []]));
	if (sessionIds.length === 0) return bySession;
	const rows = await tx
		.select({ shot: SHOT_COLUMNS, prediction: PREDICTION_COLUMNS })
		.from(shots)
		.leftJoin(shotPredictions, eq(shotPredictions.shotId, shots.id))
		.where(and(inArray(shots.sessionId, sessionIds), isNull(shots.deletedAt), isNull(shots.voidedAt)))
		.orderBy(asc(shots.sessionId), asc(shots.sequence));
	for (const row of rows)
		bySession.get(row.shot.sessionId)!.push({ shot: row.shot, prediction: row.prediction?.shotId == null ? null : row.prediction });
	return bySession;
}

async function plansOf(tx: Executor, sessions: RangeSessionRow[]) {
	const ids = [...new Set(sessions.map((s) => s.testPlanId).filter((id): id is number => id !== null))];
	const rows = ids.length === 0 ? [] : await tx.select().from(testPlans).where(inArray(testPlans.id, ids));
	return new Map(rows.map((p) => [p.id, p]));
}

/** Statistics of one range session. Throws ReconcileError(404) for an unknown session. */
export async function sessionStatistics(tx: Executor, sessionId: number): Promise<SessionStatistics> {
	const [session] = await tx.select().from(rangeSessions).where(eq(rangeSessions.id, sessionId)).limit(1);
	if (!session) throw new ReconcileError('sessionId', `No range session with id ${sessionId}.`, 404);
	const [rows, plans] = await Promise.all([shotsWithPredictions(tx, [sessionId]), plansOf(tx, [session])]);
	return statisticsOf(session, rows.get(sessionId)!, session.testPlanId === null ? null : (plans.get(session.testPlanId) ?? null));
}

/**
 * A rig over time: the statistics of each of its sessions (not deleted, started in [from, to]) in
 * date order, and the age of the approved calibration for each projectile fired on it.
 */
export async function rigStatistics(
	tx: Executor,
	rigId: number,
	range: { from?: Date | null; to?: Date | null; now?: Date } = {}
): Promise<RigStatistics> {
	const [rig] = await tx.select({ id: rigs.id, name: rigs.name }).from(rigs).where(eq(rigs.id, rigId)).limit(1);
	if (!rig) throw new ReconcileError('rigId', `No rig with id ${rigId}.`, 404);
	const sessions = await tx
		.select()
		.from(rangeSessions)
		.where(
			and(
				eq(rangeSessions.rigId, rigId),
				isNull(rangeSessions.deletedAt),
				range.from ? gte(rangeSessions.startedAt, range.from) : undefined,
				range.to ? lte(rangeSessions.startedAt, range.to) : undefined
			)
		)
		.orderBy(asc(rangeSessions.startedAt), asc(rangeSessions.id));
	const [rows, plans, approved] = await Promise.all([
		shotsWithPredictions(
			tx,
			sessions.map((s) => s.id)
		),
		plansOf(tx, sessions),
		tx
			.select({ calibration: calibrations, projectileName: projectiles.name })
			.from(calibrations)
			.innerJoin(projectiles, eq(projectiles.id, calibrations.projectileId))
			.where(and(eq(calibrations.rigId, rigId), eq(calibrations.status, 'approved')))
	]);
	const now = range.now ?? new Date();
	const ages = new Map<number, RigCalibrationAge>();
	for (const { calibration: c, projectileName } of approved)
		ages.set(c.projectileId, {
			projectileId: c.projectileId,
			projectileName,
			calibrationId: c.id,
			approvedAt: c.approvedAt,
			ageDays: c.approvedAt ? (now.getTime() - c.approvedAt.getTime()) / DAY_MS : null
		});
	const firedProjectiles = [...new Set(sessions.map((s) => s.projectileId))].filter((id) => !ages.has(id));
	if (firedProjectiles.length > 0) {
		const names = await tx
			.select({ id: projectiles.id, name: projectiles.name })
			.from(projectiles)
			.where(inArray(projectiles.id, firedProjectiles));
		for (const p of names)
			ages.set(p.id, { projectileId: p.id, projectileName: p.name, calibrationId: null, approvedAt: null, ageDays: null });
	}
	return {
		rig,
		sessions: sessions.map((s) =>
			statisticsOf(s, rows.get(s.id)!, s.testPlanId === null ? null : (plans.get(s.testPlanId) ?? null))
		),
		calibrations: [...ages.values()].sort((a, b) => a.projectileId - b.projectileId)
	};
}
