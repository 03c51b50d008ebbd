// Reads behind the calibration pages (issue 8): the (rig, projectile) pairs with their approved
// calibration and drafts, one pair's sessions and calibration history, and one calibration's
// report with the residuals and curves its plots need. The fitting, approving and residual
// bookkeeping are the reconciliation engine's (reconcile/); this module only assembles views.
//
// A stored calibration keeps its summary (RMS per kind, outliers, correlation…) but not the
// residual of every shot, so the plots predict each fitted shot again under the stored values
// with predictShot — the same path the fit and the stored predictions take — which reproduces
// the fit's residuals.
import { and, asc, count, desc, eq, inArray, isNull, max, sql } from 'drizzle-orm';
import { alias } from 'drizzle-orm/mysql-core';
import { error } from '@sveltejs/kit';
import { muzzleSpeedBand, evenlySpaced } from '$lib/physics/fit/confidence-band';
import { predictShot } from '$lib/physics/launcher';
import { PhysicsInputError } from '$lib/physics/errors';
import { studentTQuantile } from '$lib/physics/stats/student-t';
import { curveRange } from '$lib/components/charts/scales';
import { formatQuantity, type Prefs } from '$lib/format';
import type { FitCalibrationInput, OptionalParameter } from '$lib/schemas/calibration';
import { db } from '../db';
import { calibrationExclusions, calibrations, projectiles, rangeSessions, rigs, shots, users } from '../db/schema';
import { summaryOf, type CalibrationRow, type CalibrationSummary, type Executor, type StoredParameterKey } from '../reconcile';
import { ConditionsCache, launcherProjectile, launcherRig, storedModel } from '../reconcile/model';
import { adviceFor, crossValidationVerdict, KIND_INFO, PARAMETER_INFO, RESIDUAL_KINDS, STORED_KEYS, type ResidualKindKey } from './advice';

const DAY_MS = 24 * 3600 * 1000;
/** Points of the model curve drawn against fill pressure. */
const CURVE_POINTS = 41;
/**
 * Most shots drawn in the residual plots. Beyond it (imported campaigns run to 10⁵ shots) every
 * k-th shot is predicted and drawn, outliers always: a chart cannot show more points than that
 * anyway, and the page stays quick. The summary figures (RMS, outliers) come from the fit itself.
 */
export const PLOT_SHOT_LIMIT = 4000;

type RigRow = typeof rigs.$inferSelect;
type ProjectileRow = typeof projectiles.$inferSelect;

// ---------------------------------------------------------------------------------------------
// Pairs.

export interface PairLine {
	rigId: number;
	rigName: string;
	projectileId: number;
	projectileName: string;
	sessions: number;
	shots: number;
	lastSessionAt: Date | null;
	approved: { id: number; approvedAt: Date | null; ageDays: number | null } | null;
	drafts: number;
	latestDraft: { id: number; createdAt: Date } | null;
}

/** Every pair that has sessions or calibrations, by rig and projectile name. */
export async function calibrationPairs(tx: Executor = db, now = new Date()): Promise<PairLine[]> {
	const [sessionCounts, shotCounts, calibrationRows, rigRows, projectileRows] = await Promise.all([
		tx
			.select({ rigId: rangeSessions.rigId, projectileId: rangeSessions.projectileId, sessions: count(), lastSessionAt: max(rangeSessions.startedAt) })
			.from(rangeSessions)
			.where(isNull(rangeSessions.deletedAt))
			.groupBy(rangeSessions.rigId, rangeSessions.projectileId),
		tx
			.select({ rigId: rangeSessions.rigId, projectileId: rangeSessions.projectileId, shots: count() })
			.from(shots)
			.innerJoin(rangeSessions, eq(rangeSessions.id, shots.sessionId))
			.where(and(isNull(shots.deletedAt), isNull(rangeSessions.deletedAt)))
			.groupBy(rangeSessions.rigId, rangeSessions.projectileId),
		tx
			.select({
				id: calibrations.id,
				rigId: calibrations.rigId,
				projectileId: calibrations.projectileId,
				status: calibrations.status,
				createdAt: calibrations.createdAt,
				approvedAt: calibrations.approvedAt
			})
			.from(calibrations)
			.orderBy(desc(calibrations.createdAt), desc(calibrations.id)),
		tx.select({ id: rigs.id, name: rigs.name }).from(rigs),
		tx.select({ id: projectiles.id, name: projectiles.name }).from(projectiles)
	]);
	const key = (r: { rigId: number; projectileId: number }) => `${r.rigId}:${r.projectileId}`;
	const rigName = new Map(rigRows.map((r) => [r.id, r.name]));
	const projectileName = new Map(projectileRows.map((p) => [p.id, p.name]));
	const lines = new Map<string, PairLine>();
	const lineOf = (rigId: number, projectileId: number) => {
		const k = key({ rigId, projectileId });
		let line = lines.get(k);
		if (!line) {
			line = {
				rigId,
				rigName: rigName.get(rigId) ?? `Rig ${rigId}`,
				projectileId,
				projectileName: projectileName.get(projectileId) ?? `Projectile ${projectileId}`,
				sessions: 0,
				shots: 0,
				lastSessionAt: null,
				approved: null,
				drafts: 0,
				latestDraft: null
			};
			lines.set(k, line);
		}
		return line;
	};
	for (const s of sessionCounts) Object.assign(lineOf(s.rigId, s.projectileId), { sessions: s.sessions, lastSessionAt: s.lastSessionAt });
	for (const s of shotCounts) lineOf(s.rigId, s.projectileId).shots = s.shots;
	for (const c of calibrationRows) {
		const line = lineOf(c.rigId, c.projectileId);
		if (c.status === 'approved' && !line.approved)
			line.approved = { id: c.id, approvedAt: c.approvedAt, ageDays: c.approvedAt ? (now.getTime() - c.approvedAt.getTime()) / DAY_MS : null };
		if (c.status === 'draft') {
			line.drafts++;
			line.latestDraft ??= { id: c.id, createdAt: c.createdAt };
		}
	}
	return [...lines.values()].sort((a, b) => a.rigName.localeCompare(b.rigName) || a.projectileName.localeCompare(b.projectileName));
}

// ---------------------------------------------------------------------------------------------
// One pair.

async function pairRows(tx: Executor, rigId: number, projectileId: number) {
	const [[rig], [projectile]] = await Promise.all([
		tx.select().from(rigs).where(eq(rigs.id, rigId)).limit(1),
		tx.select().from(projectiles).where(eq(projectiles.id, projectileId)).limit(1)
	]);
	if (!rig) error(404, { message: `No rig with id ${rigId}.` });
	if (!projectile) error(404, { message: `No projectile with id ${projectileId}.` });
	return { rig, projectile };
}

export interface PairSession {
	id: number;
	title: string;
	startedAt: Date;
	status: 'open' | 'closed';
	targetDistanceM: number;
	downrangeChronoM: number | null;
	shots: number;
	withMuzzleSpeed: number;
	withDownrangeSpeed: number;
	withImpact: number;
	fillMinPa: number | null;
	fillMaxPa: number | null;
	distinctFills: number;
}

async function sessionsOfPair(tx: Executor, rigId: number, projectileId: number): Promise<PairSession[]> {
	const sessionRows = await tx
		.select()
		.from(rangeSessions)
		.where(and(eq(rangeSessions.rigId, rigId), eq(rangeSessions.projectileId, projectileId), isNull(rangeSessions.deletedAt)))
		.orderBy(asc(rangeSessions.startedAt), asc(rangeSessions.id));
	if (sessionRows.length === 0) return [];
	const stats = await tx
		.select({
			sessionId: shots.sessionId,
			shots: count(),
			withMuzzleSpeed: count(shots.muzzleSpeedMps),
			withDownrangeSpeed: count(shots.downrangeSpeedMps),
			withImpact: sql<number>`sum(case when ${shots.miss} = 0 and ${shots.impactYM} is not null then 1 else 0 end)`.mapWith(Number),
			fillMinPa: sql<number | null>`min(${shots.fillGaugePa})`.mapWith(Number),
			fillMaxPa: sql<number | null>`max(${shots.fillGaugePa})`.mapWith(Number),
			distinctFills: sql<number>`count(distinct ${shots.fillGaugePa})`.mapWith(Number)
		})
		.from(shots)
		.where(and(inArray(shots.sessionId, sessionRows.map((s) => s.id)), isNull(shots.deletedAt), isNull(shots.voidedAt)))
		.groupBy(shots.sessionId);
	const bySession = new Map(stats.map((s) => [s.sessionId, s]));
	return sessionRows.map((s) => {
		const st = bySession.get(s.id);
		return {
			id: s.id,
			title: s.title,
			startedAt: s.startedAt,
			status: s.status,
			targetDistanceM: s.targetDistanceM,
			downrangeChronoM: s.downrangeChronoM,
			shots: st?.shots ?? 0,
			withMuzzleSpeed: st?.withMuzzleSpeed ?? 0,
			withDownrangeSpeed: s.downrangeChronoM === null ? 0 : (st?.withDownrangeSpeed ?? 0),
			withImpact: st?.withImpact ?? 0,
			fillMinPa: st ? st.fillMinPa : null,
			fillMaxPa: st ? st.fillMaxPa : null,
			distinctFills: st?.distinctFills ?? 0
		};
	});
}

export interface HistoryLine {
	id: number;
	projectileId: number;
	projectileName: string;
	status: 'draft' | 'approved' | 'superseded';
	createdAt: Date;
	createdBy: string | null;
	approvedAt: Date | null;
	approvedBy: string | null;
	supersededAt: Date | null;
	sessions: number;
	shots: number | null;
	converged: boolean;
	/** Requested parameters (stored keys). */
	fitted: string[];
	/** Value, SE and 95 % interval per stored key (absent when not fitted or not determined). */
	values: Partial<Record<StoredParameterKey, { value: number; standardError: number | null; lower: number | null; upper: number | null }>>;
	notes: string | null;
}

/** A rig's calibrations (every projectile), newest first, with who made and approved them. */
export async function rigCalibrationHistory(tx: Executor, rigId: number): Promise<HistoryLine[]> {
	const approver = alias(users, 'approver');
	const rows = await tx
		.select({ calibration: calibrations, projectileName: projectiles.name, createdBy: users.name, approvedBy: approver.name })
		.from(calibrations)
		.innerJoin(projectiles, eq(projectiles.id, calibrations.projectileId))
		.leftJoin(users, eq(users.id, calibrations.createdBy))
		.leftJoin(approver, eq(approver.id, calibrations.approvedBy))
		.where(eq(calibrations.rigId, rigId))
		.orderBy(desc(calibrations.createdAt), desc(calibrations.id));
	return rows.map(({ calibration: c, projectileName, createdBy, approvedBy }) => {
		const summary = summaryOf(c);
		const values: HistoryLine['values'] = {};
		for (const key of STORED_KEYS) {
			const value = c.parameters[key];
			const determined = (summary.covarianceParameters ?? []).includes(key);
			if (value === undefined || !determined) continue;
			const ci = summary.confidence95?.[key];
			values[key] = { value, standardError: c.standardErrors[key] ?? null, lower: ci?.lower ?? null, upper: ci?.upper ?? null };
		}
		return {
			id: c.id,
			projectileId: c.projectileId,
			projectileName,
			status: c.status,
			createdAt: c.createdAt,
			createdBy,
			approvedAt: c.approvedAt,
			approvedBy,
			supersededAt: c.supersededAt,
			sessions: c.sessionIds.length,
			shots: summary.nUsed?.shots ?? null,
			converged: summary.converged !== false,
			fitted: c.fitted,
			values,
			notes: c.notes
		};
	});
}

/** The fit form's starting values: every session, C_D when some shot has a downrange speed. */
function defaultFitForm(sessions: PairSession[]): FitCalibrationInput {
	const withDownrange = sessions.some((s) => s.withDownrangeSpeed > 0);
	return { sessionIds: sessions.map((s) => s.id), model: 'auto', drag: 'constant', parameters: withDownrange ? ['dragCoefficient'] : [], exclusions: [], notes: null };
}

const OPTIONAL_OF_STORED: Partial<Record<string, OptionalParameter>> = {
	eta1: 'pressureSlope',
	energyOffsetJ: 'energyOffset',
	dragCoefficient: 'dragCoefficient',
	elevationBiasDeg: 'elevationBias'
};

/** A new fit that starts from a stored calibration's choices (a refit), plus shots to leave out. */
async function refitForm(
	tx: Executor,
	from: CalibrationRow,
	sessions: PairSession[],
	extraExclusions: { sessionId: number; sequence: number }[]
): Promise<FitCalibrationInput> {
	const live = new Set(sessions.map((s) => s.id));
	const excluded = await tx
		.select({ sessionId: shots.sessionId, sequence: shots.sequence, reason: calibrationExclusions.reason })
		.from(calibrationExclusions)
		.innerJoin(shots, eq(shots.id, calibrationExclusions.shotId))
		.where(eq(calibrationExclusions.calibrationId, from.id))
		.orderBy(asc(shots.sessionId), asc(shots.sequence));
	const exclusions = excluded.filter((e) => live.has(e.sessionId));
	for (const e of extraExclusions)
		if (live.has(e.sessionId) && !exclusions.some((x) => x.sessionId === e.sessionId && x.sequence === e.sequence))
			exclusions.push({ ...e, reason: '' });
	return {
		sessionIds: from.sessionIds.filter((id) => live.has(id)),
		// A refit keeps the model the stored calibration settled on.
		model: from.parameters.model?.family ?? 'gas-work',
		drag: from.parameters.model?.drag ?? 'constant',
		parameters: from.fitted.flatMap((k) => (OPTIONAL_OF_STORED[k] ? [OPTIONAL_OF_STORED[k]!] : [])),
		exclusions,
		notes: null
	};
}

/** Parse "12:7,12:9" (session:sequence pairs) from a URL parameter; anything else is ignored. */
export function parseShotRefs(raw: string | null): { sessionId: number; sequence: number }[] {
	if (!raw) return [];
	return raw.split(',').flatMap((part) => {
		const m = part.trim().match(/^(\d+):(\d+)$/);
		return m ? [{ sessionId: Number(m[1]), sequence: Number(m[2]) }] : [];
	});
}

/** The pair page: rig, projectile, sessions, the rig's calibration history and the fit form's values. */
export async function pairView(
	rigId: number,
	projectileId: number,
	options: { fromCalibrationId?: number | null; exclude?: { sessionId: number; sequence: number }[]; now?: Date } = {},
	tx: Executor = db
) {
	const { rig, projectile } = await pairRows(tx, rigId, projectileId);
	const [sessions, history] = await Promise.all([sessionsOfPair(tx, rigId, projectileId), rigCalibrationHistory(tx, rigId)]);
	let form = defaultFitForm(sessions);
	let refitOf: number | null = null;
	if (options.fromCalibrationId) {
		const [from] = await tx.select().from(calibrations).where(eq(calibrations.id, options.fromCalibrationId)).limit(1);
		if (from && from.rigId === rigId && from.projectileId === projectileId) {
			form = await refitForm(tx, from, sessions, options.exclude ?? []);
			refitOf = from.id;
		}
	}
	const pairHistory = history.filter((h) => h.projectileId === projectileId);
	const approved = pairHistory.find((h) => h.status === 'approved') ?? null;
	return {
		rig: { id: rig.id, name: rig.name, ratedPressurePa: rig.ratedPressurePa, nominalEfficiency: rig.nominalEfficiency, deletedAt: rig.deletedAt },
		projectile: { id: projectile.id, name: projectile.name, nominalDragCoefficient: projectile.nominalDragCoefficient, deletedAt: projectile.deletedAt },
		sessions,
		history,
		approved,
		form,
		refitOf,
		now: options.now ?? new Date()
	};
}

/**
 * The shot ids of (session, sequence) references, for the fit action. Returns the index of the
 * first reference that names no live shot, so the form can point at it.
 */
export async function resolveShotRefs(
	refs: readonly { sessionId: number; sequence: number }[],
	tx: Executor = db
): Promise<{ ok: true; shotIds: number[] } | { ok: false; index: number }> {
	if (refs.length === 0) return { ok: true, shotIds: [] };
	const sessionIds = [...new Set(refs.map((r) => r.sessionId))];
	const rows = await tx
		.select({ id: shots.id, sessionId: shots.sessionId, sequence: shots.sequence })
		.from(shots)
		.where(and(inArray(shots.sessionId, sessionIds), isNull(shots.deletedAt)));
	const idOf = new Map(rows.map((r) => [`${r.sessionId}:${r.sequence}`, r.id]));
	const shotIds: number[] = [];
	for (let i = 0; i < refs.length; i++) {
		const id = idOf.get(`${refs[i].sessionId}:${refs[i].sequence}`);
		if (id === undefined) return { ok: false, index: i };
		shotIds.push(id);
	}
	return { ok: true, shotIds };
}

// ---------------------------------------------------------------------------------------------
// One calibration.

export interface ResidualPoint {
	shotId: number;
	sessionId: number;
	sequence: number;
	/** Position in the fitted shots: sessions in date order, then by sequence (from 1). */
	order: number;
	firedAt: Date;
	fillGaugePa: number;
	muzzle: { measured: number; predicted: number; residual: number } | null;
	downrange: { measured: number; predicted: number; residual: number } | null;
	impact: { residualX: number; residualY: number } | null;
	/** Kinds flagged as outliers by the fit (|standardised residual| > 3). */
	outlierKinds: ResidualKindKey[];
}

/** Predict every fitted shot again under the stored values (see the header). */
async function residualsUnder(tx: Executor, row: CalibrationRow, rig: RigRow, projectile: ProjectileRow) {
	const sessionRows = row.sessionIds.length
		? await tx.select().from(rangeSessions).where(inArray(rangeSessions.id, row.sessionIds)).orderBy(asc(rangeSessions.startedAt), asc(rangeSessions.id))
		: [];
	const shotRows = sessionRows.length
		? await tx
				.select()
				.from(shots)
				.where(and(inArray(shots.sessionId, sessionRows.map((s) => s.id)), isNull(shots.deletedAt), isNull(shots.voidedAt)))
				.orderBy(asc(shots.sessionId), asc(shots.sequence))
		: [];
	const excludedRows = await tx
		.select({ shotId: calibrationExclusions.shotId })
		.from(calibrationExclusions)
		.where(eq(calibrationExclusions.calibrationId, row.id));
	const excluded = new Set(excludedRows.map((e) => e.shotId));
	const summary = summaryOf(row);
	const outliers = new Map<number, ResidualKindKey[]>();
	for (const o of summary.outliers ?? []) outliers.set(o.shotId, [...(outliers.get(o.shotId) ?? []), o.kind]);

	const model = storedModel(row, projectile, rig);
	const conditions = new ConditionsCache();
	const rigInput = launcherRig(rig);
	const projectileInput = launcherProjectile(projectile);
	const sessionOrder = new Map(sessionRows.map((s, i) => [s.id, i]));
	const fitted = [...shotRows]
		.filter((s) => !excluded.has(s.id))
		.sort((a, b) => sessionOrder.get(a.sessionId)! - sessionOrder.get(b.sessionId)! || a.sequence - b.sequence);
	const stride = Math.max(1, Math.ceil(fitted.length / PLOT_SHOT_LIMIT));
	const drawn = fitted.filter((s, i) => i % stride === 0 || outliers.has(s.id));
	const positionOf = new Map(fitted.map((s, i) => [s.id, i + 1]));
	const points: ResidualPoint[] = [];
	let ambientSum = 0;
	let unpredictable = 0;
	for (const shot of drawn) {
		const session = sessionRows.find((s) => s.id === shot.sessionId)!;
		const setup = { rig: rigInput, projectile: projectileInput, session: conditions.of(session, shot), fillGaugePa: shot.fillGaugePa };
		ambientSum += setup.session.ambientPa;
		let predicted: ReturnType<typeof predictShot>;
		try {
			predicted = predictShot(model, setup, session.downrangeChronoM ? { downrangeDistanceM: session.downrangeChronoM } : {});
		} catch (e) {
			if (!(e instanceof PhysicsInputError)) throw e;
			predicted = { ok: false, reason: e.message };
		}
		if (!predicted.ok) {
			unpredictable++;
			continue;
		}
		const pair = (measured: number | null, value: number | null | undefined) =>
			measured !== null && measured > 0 && value !== null && value !== undefined ? { measured, predicted: value, residual: measured - value } : null;
		const hit = !shot.miss && shot.impactXM !== null && shot.impactYM !== null && predicted.impact.reached;
		points.push({
			shotId: shot.id,
			sessionId: shot.sessionId,
			sequence: shot.sequence,
			order: positionOf.get(shot.id)!,
			firedAt: shot.firedAt,
			fillGaugePa: shot.fillGaugePa,
			muzzle: pair(shot.muzzleSpeedMps, predicted.muzzleSpeedMps),
			downrange: session.downrangeChronoM ? pair(shot.downrangeSpeedMps, predicted.downrange?.speedMps) : null,
			impact: hit ? { residualX: shot.impactXM! - predicted.impact.lateralM, residualY: shot.impactYM! - predicted.impact.heightM } : null,
			outlierKinds: outliers.get(shot.id) ?? []
		});
	}
	const ambientPa = points.length ? ambientSum / points.length : 101_325;
	return { points, sessions: sessionRows, ambientPa, unpredictable, model, stride };
}

export interface ParameterView {
	key: StoredParameterKey;
	label: string;
	symbol: string;
	quantity: 'force' | 'angle' | null;
	meaning: string;
	/** The value predictions use (fitted, or held when not fitted). */
	value: number | null;
	standardError: number | null;
	lower: number | null;
	upper: number | null;
	status: 'fitted' | 'not-determined' | 'held';
	/** Why it is not determined, and what data would determine it. */
	reason: string | null;
	advice: string | null;
}

/** One calibration's report, plots and approval state; 404 unless it belongs to the pair. */
export async function calibrationDetail(rigId: number, projectileId: number, calibrationId: number, prefs: Prefs, tx: Executor = db) {
	const approver = alias(users, 'approver');
	const [found] = await tx
		.select({ calibration: calibrations, createdBy: users.name, approvedBy: approver.name })
		.from(calibrations)
		.leftJoin(users, eq(users.id, calibrations.createdBy))
		.leftJoin(approver, eq(approver.id, calibrations.approvedBy))
		.where(eq(calibrations.id, calibrationId))
		.limit(1);
	if (!found || found.calibration.rigId !== rigId || found.calibration.projectileId !== projectileId)
		error(404, { message: `No calibration with id ${calibrationId} for this rig and projectile.` });
	const row = found.calibration;
	const { rig, projectile } = await pairRows(tx, rigId, projectileId);
	const summary: CalibrationSummary = summaryOf(row);
	const [residuals, exclusions, [approvedNow]] = await Promise.all([
		residualsUnder(tx, row, rig, projectile),
		tx
			.select({ shotId: calibrationExclusions.shotId, reason: calibrationExclusions.reason, sessionId: shots.sessionId, sequence: shots.sequence })
			.from(calibrationExclusions)
			.innerJoin(shots, eq(shots.id, calibrationExclusions.shotId))
			.where(eq(calibrationExclusions.calibrationId, row.id))
			.orderBy(asc(shots.sessionId), asc(shots.sequence)),
		tx
			.select({ id: calibrations.id, approvedAt: calibrations.approvedAt })
			.from(calibrations)
			.where(and(eq(calibrations.rigId, rigId), eq(calibrations.projectileId, projectileId), eq(calibrations.status, 'approved')))
			.limit(1)
	]);

	const fills = residuals.points.map((p) => p.fillGaugePa);
	const range = summary.fillPressureRangePa ?? { min: Math.min(...fills), max: Math.max(...fills) };
	const fillRangeText =
		range.min === range.max ? formatQuantity('pressure', range.min, prefs) : `${formatQuantity('pressure', range.min, prefs)} to ${formatQuantity('pressure', range.max, prefs)}`;
	const data = {
		downrangeSpeeds: summary.nUsed?.downrangeSpeed ?? 0,
		impactHeights: summary.nUsed?.impactHeight ?? 0,
		fillRangeText,
		distinctFills: new Set(fills).size
	};
	const notDetermined = new Map((summary.notDetermined ?? []).map((n) => [n.parameter, n]));
	const fittedKeys = summary.covarianceParameters ?? [];
	const gasWork = (row.parameters.model?.family ?? 'gas-work') === 'gas-work';
	const keys = STORED_KEYS.filter((k) => (k === 'eta0' && gasWork) || row.fitted.includes(k) || fittedKeys.includes(k) || k === 'dragCoefficient');
	const parameters: ParameterView[] = keys.map((key) => {
		const info = PARAMETER_INFO[key];
		const nd = notDetermined.get(key);
		const fitted = fittedKeys.includes(key);
		const ci = summary.confidence95?.[key];
		const value = row.parameters[key] ?? summary.held?.[key] ?? nd?.heldAt ?? null;
		return {
			key,
			label: info.label,
			symbol: info.symbol,
			quantity: info.quantity as ParameterView['quantity'],
			meaning: info.meaning,
			value: value ?? null,
			standardError: fitted ? (row.standardErrors[key] ?? null) : null,
			lower: fitted ? (ci?.lower ?? null) : null,
			upper: fitted ? (ci?.upper ?? null) : null,
			status: fitted ? 'fitted' : nd ? 'not-determined' : 'held',
			reason: nd?.reason ?? null,
			advice: nd ? adviceFor(key, data) : null
		};
	});

	// The model curve of muzzle speed against fill pressure, with its 95 % band (delta method).
	const [lo, hi] = curveRange(fills, rig.ratedPressurePa);
	const quantile = summary.dof > 0 ? studentTQuantile(0.975, summary.dof) : null;
	const band =
		quantile === null || residuals.points.length === 0
			? { points: [], omitted: [] }
			: muzzleSpeedBand(
					residuals.model,
					{ rig: launcherRig(rig), projectile: launcherProjectile(projectile), ambientPa: residuals.ambientPa },
					evenlySpaced(lo, hi, CURVE_POINTS),
					quantile
				);

	const sessionTitles = new Map(residuals.sessions.map((s) => [s.id, s.title]));
	// Shots the fit's start set aside, named as the range knows them: session and shot number.
	const unusedIds = (summary.unused ?? []).map((u) => u.shotId);
	const unusedRefs = unusedIds.length
		? await tx.select({ id: shots.id, sessionId: shots.sessionId, sequence: shots.sequence }).from(shots).where(inArray(shots.id, unusedIds))
		: [];
	const unusedRef = new Map(unusedRefs.map((r) => [r.id, r]));
	return {
		rig: { id: rig.id, name: rig.name, ratedPressurePa: rig.ratedPressurePa, nominalEfficiency: rig.nominalEfficiency },
		projectile: { id: projectile.id, name: projectile.name, nominalDragCoefficient: projectile.nominalDragCoefficient },
		calibration: {
			id: row.id,
			status: row.status,
			createdAt: row.createdAt,
			createdBy: found.createdBy,
			approvedAt: row.approvedAt,
			approvedBy: found.approvedBy,
			supersededAt: row.supersededAt,
			notes: row.notes,
			fitted: row.fitted
		},
		approvedNow: approvedNow ?? null,
		summary: {
			converged: summary.converged !== false,
			message: summary.message,
			nUsed: summary.nUsed,
			left: summary.left,
			dof: summary.dof,
			chiSquare: summary.chiSquare,
			residualScale: summary.residualScale,
			pRefPa: summary.pRefPa,
			fillPressureRangePa: range,
			measurementSds: summary.measurementSds,
			crossValidation: summary.crossValidation,
			model: row.parameters.model ?? { family: 'gas-work' as const, drag: 'constant' as const },
			comparison: summary.comparison ?? null,
			failure: summary.failure ?? null,
			unused: (summary.unused ?? []).map((u) => {
				const ref = unusedRef.get(u.shotId);
				return { ...u, sessionTitle: ref ? (sessionTitles.get(ref.sessionId) ?? `Session ${ref.sessionId}`) : null, sequence: ref?.sequence ?? null };
			})
		},
		parameters,
		correlation: {
			labels: fittedKeys.map((k) => PARAMETER_INFO[k].symbol),
			matrix: summary.correlation ?? []
		},
		kinds: RESIDUAL_KINDS.filter((k) => (summary.nUsed?.[k] ?? 0) > 0).map((k) => ({
			kind: k,
			...KIND_INFO[k],
			n: summary.nUsed[k],
			rms: summary.rmsByKind?.[k] ?? null,
			crossValidated: summary.crossValidation?.rmsByKind?.[k] ?? null,
			noiseFloor: summary.noiseFloorByKind?.[k] ?? null
		})),
		verdict: crossValidationVerdict(summary),
		outliers: (summary.outliers ?? []).map((o) => {
			const point = residuals.points.find((p) => p.shotId === o.shotId);
			return {
				...o,
				sessionId: point?.sessionId ?? null,
				sessionTitle: point ? (sessionTitles.get(point.sessionId) ?? null) : null,
				sequence: point?.sequence ?? null
			};
		}),
		sessions: residuals.sessions.map((s) => ({ id: s.id, title: s.title, startedAt: s.startedAt, downrangeChronoM: s.downrangeChronoM })),
		exclusions: exclusions.map((e) => ({ ...e, sessionTitle: sessionTitles.get(e.sessionId) ?? `Session ${e.sessionId}` })),
		residuals: residuals.points,
		unpredictable: residuals.unpredictable,
		/** 1, or k when only every k-th shot (and every outlier) is drawn (PLOT_SHOT_LIMIT). */
		plotStride: residuals.stride,
		curve: { points: band.points, omitted: band.omitted, ambientPa: residuals.ambientPa, quantile, method: 'delta' as const }
	};
}

export type CalibrationDetail = Awaited<ReturnType<typeof calibrationDetail>>;
export type PairView = Awaited<ReturnType<typeof pairView>>;

/** True when the calibration exists and belongs to the pair (the URL's rig and projectile). */
export async function calibrationOfPair(calibrationId: number, rigId: number, projectileId: number, tx: Executor = db): Promise<boolean> {
	const [row] = await tx
		.select({ rigId: calibrations.rigId, projectileId: calibrations.projectileId })
		.from(calibrations)
		.where(eq(calibrations.id, calibrationId))
		.limit(1);
	return Boolean(row && row.rigId === rigId && row.projectileId === projectileId);
}
