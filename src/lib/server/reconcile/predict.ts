// Per-shot predictions, residuals and pass/fail (design/product.md, loop step 4; physics.md §1,
// §3). Each shot is predicted from its gauge reading under the calibration in force for its
// (rig, projectile) through the physics module's predictShot, the same path the fit uses, and
// compared with what was measured: residual = measured − predicted.
//
// Called after every logged shot (for that shot) and after imports of 100 000 rows, so it reads
// shots in pages and writes one multi-row upsert per page; sessions, plans and calibrations are
// loaded once per page for whatever the page needs that is not cached yet.
import { and, asc, eq, gt, inArray, notInArray, sql, type Column } from 'drizzle-orm';
import mysql from 'mysql2';
import { PhysicsInputError } from '$lib/physics/errors';
import { predictShot, type ShotPredictionResult, type ShotSetup } from '$lib/physics/launcher';
import { calibrations, projectiles, rangeSessions, rigs, shotPredictions, shots, testPlans, type SpeedBasis } from '../db/schema';
import { columnName, insertedRow, name, rowOf, selectList, tableName, type Statement } from '../db/raw';
import {
	calibrationsInForce,
	ConditionsCache,
	inForceFor,
	inForceOf,
	launcherProjectile,
	launcherRig,
	type CalibrationInForce,
	type Executor,
	type RangeSessionRow
} from './model';

/** Shots per page: one SELECT and one INSERT … ON DUPLICATE KEY UPDATE each (≈ 0.4 MB of SQL, far under max_allowed_packet). */
export const PREDICTION_PAGE_SIZE = 1000;
/**
 * Relative slack on a tolerance limit, so a reading written exactly at the limit passes although
 * binary rounding puts it a few ulps outside (23.23 m/s for 23 m/s ± 1 %: |23.23 − 23| comes out
 * as 0.23000000000000043 > 0.23).
 */
const LIMIT_SLACK = 1e-9;
const PREDICTION_ERROR_LENGTH = 500;

type ShotRow = typeof shots.$inferSelect;
/** The shot columns a prediction reads. */
export type PredictedShot = Pick<
	ShotRow,
	'id' | 'sessionId' | 'fillGaugePa' | 'muzzleSpeedMps' | 'downrangeSpeedMps' | 'impactXM' | 'impactYM' | 'miss' | 'temperatureC' | 'pressurePa'
>;
type PlanRow = typeof testPlans.$inferSelect;
type PredictionRow = typeof shotPredictions.$inferInsert;

export interface RecomputeSelection {
	/** Every shot of these sessions. */
	sessionIds?: readonly number[];
	/** These shots (in addition to the sessions' shots). */
	shotIds?: readonly number[];
	/**
	 * Every session of this rig (e.g. after its nominal efficiency changed), or of this projectile
	 * (its nominal C_D), or of the pair when both are given.
	 */
	rigId?: number;
	projectileId?: number;
}

export interface RecomputeResult {
	/** Shots whose prediction row was written. */
	shots: number;
	/** Of those, shots the model could not predict (prediction_error set). */
	unpredictable: number;
}

/** Speed judgement of one shot against its plan. */
export interface SpeedJudgement {
	passSpeed: boolean | null;
	speedBasis: SpeedBasis | null;
	judgedSpeedMps: number | null;
}

function withinLimit(deviation: number, limit: number) {
	return Math.abs(deviation) <= limit * (1 + LIMIT_SLACK);
}

function errorText(e: unknown) {
	const message = e instanceof Error ? e.message : String(e);
	return message.length > PREDICTION_ERROR_LENGTH ? message.slice(0, PREDICTION_ERROR_LENGTH - 1) + '…' : message;
}

/**
 * Speed against the plan (design/product.md): at the muzzle on the muzzle chronograph; at the
 * target on the downrange chronograph when the shot has a reading, otherwise on the model's
 * speed at the target plane flown from the measured muzzle speed with the calibration's C_D and
 * elevation bias. A downrange reading is judged as read (the plan names the chronograph, not a
 * corrected value). No measured speed → null. A model flight that does not reach the target
 * plane fails.
 */
export function judgeSpeed(
	plan: Pick<PlanRow, 'speedAt' | 'requiredSpeedMps' | 'speedTolerancePct'> | null,
	shot: Pick<ShotRow, 'muzzleSpeedMps' | 'downrangeSpeedMps'>,
	speedAtTargetFromMuzzle: (muzzleSpeedMps: number) => number | null
): SpeedJudgement {
	const none: SpeedJudgement = { passSpeed: null, speedBasis: null, judgedSpeedMps: null };
	if (!plan) return none;
	const limit = (plan.requiredSpeedMps * plan.speedTolerancePct) / 100;
	const judge = (speed: number | null, basis: SpeedBasis): SpeedJudgement => ({
		passSpeed: speed === null ? false : withinLimit(speed - plan.requiredSpeedMps, limit),
		speedBasis: basis,
		judgedSpeedMps: speed
	});
	if (plan.speedAt === 'muzzle')
		return shot.muzzleSpeedMps === null ? none : judge(shot.muzzleSpeedMps, 'muzzle_chronograph');
	if (shot.downrangeSpeedMps !== null) return judge(shot.downrangeSpeedMps, 'downrange_chronograph');
	if (shot.muzzleSpeedMps === null) return none;
	return judge(speedAtTargetFromMuzzle(shot.muzzleSpeedMps), 'model_from_muzzle');
}

/** Impact against the plan: radius from the aim point ≤ tolerance; a miss fails; no impact → null. */
export function judgeImpact(
	plan: Pick<PlanRow, 'impactToleranceM'> | null,
	shot: Pick<ShotRow, 'miss' | 'impactXM' | 'impactYM'>
): boolean | null {
	if (!plan) return null;
	if (shot.miss) return false;
	if (shot.impactXM === null || shot.impactYM === null) return null;
	return withinLimit(Math.hypot(shot.impactXM, shot.impactYM), plan.impactToleranceM);
}

const difference = (measured: number | null, predicted: number | null | undefined) =>
	measured === null || predicted === null || predicted === undefined ? null : measured - predicted;

/** The prediction row of one shot. Pure apart from the flights; never throws for bad shot data. */
function predictionRow(
	shot: PredictedShot,
	session: RangeSessionRow,
	plan: PlanRow | null,
	inForce: CalibrationInForce,
	conditionsCache: ConditionsCache
): PredictionRow {
	const model = inForce.model;
	let prediction: ShotPredictionResult;
	let setup: ShotSetup | null = null;
	try {
		setup = {
			rig: launcherRig(inForce.rig),
			projectile: launcherProjectile(inForce.projectile),
			session: conditionsCache.of(session, shot),
			fillGaugePa: shot.fillGaugePa
		};
		prediction = predictShot(
			model,
			setup,
			session.downrangeChronoM === null ? {} : { downrangeDistanceM: session.downrangeChronoM }
		);
	} catch (e) {
		if (!(e instanceof PhysicsInputError)) throw e;
		prediction = { ok: false, reason: e.message };
	}

	const speedAtTargetFromMuzzle = (muzzleSpeedMps: number) => {
		if (!setup) return null;
		try {
			const flown = predictShot(model, setup, { muzzleSpeedMps });
			return flown.ok && flown.impact.reached ? flown.impact.speedMps : null;
		} catch (e) {
			if (e instanceof PhysicsInputError) return null;
			throw e;
		}
	};
	const speed = judgeSpeed(plan, shot, speedAtTargetFromMuzzle);
	const passImpact = judgeImpact(plan, shot);
	const base = {
		shotId: shot.id,
		calibrationId: inForce.calibrationId,
		passSpeed: speed.passSpeed,
		passImpact,
		speedBasis: speed.speedBasis,
		judgedSpeedMps: speed.judgedSpeedMps
	};
	if (!prediction.ok) {
		return {
			...base,
			predictedMuzzleMps: null,
			predictedTargetMps: null,
			predictedDownrangeMps: null,
			predictedImpactXM: null,
			predictedImpactYM: null,
			muzzleResidualMps: null,
			downrangeResidualMps: null,
			impactXResidualM: null,
			impactYResidualM: null,
			outsideCalibratedPressures: false,
			predictionError: errorText(prediction.reason)
		};
	}
	const reached = prediction.impact.reached;
	// Impact offsets are on the target face from the aim point: x = the flight's lateral z at the
	// plane, y = its height there − the aim height (predictShot's impact.heightM).
	const predictedImpactXM = reached ? prediction.impact.lateralM : null;
	const predictedImpactYM = reached ? prediction.impact.heightM : null;
	const measuredImpact = !shot.miss;
	return {
		...base,
		predictedMuzzleMps: prediction.muzzleSpeedMps,
		predictedTargetMps: reached ? prediction.impact.speedMps : null,
		predictedDownrangeMps: prediction.downrange?.speedMps ?? null,
		predictedImpactXM,
		predictedImpactYM,
		muzzleResidualMps: difference(shot.muzzleSpeedMps, prediction.muzzleSpeedMps),
		downrangeResidualMps: difference(shot.downrangeSpeedMps, prediction.downrange?.speedMps),
		impactXResidualM: measuredImpact ? difference(shot.impactXM, predictedImpactXM) : null,
		impactYResidualM: measuredImpact ? difference(shot.impactYM, predictedImpactYM) : null,
		outsideCalibratedPressures: prediction.outsideCalibratedPressures,
		predictionError: null
	};
}

/**
 * The upsert is written as one statement of literals rather than through Drizzle's builder: for
 * 100 000 shots × 18 columns the builder and mysql2's placeholder substitution cost more than
 * predicting the shots (measured: ≈ 1.3 s per 20 000 rows against ≈ 0.07 s). Numbers are written
 * with JavaScript's shortest round-trip form (a valid MariaDB literal, exponent included),
 * strings through mysql2's escape — the same escaping its own client-side substitution applies.
 * Column names come from the Drizzle table, so they cannot drift from schema.ts. computed_at is
 * written from the app's clock (UTC, ms), so the single-shot path knows the stored row without
 * reading it back.
 */
const sqlName = (key: keyof typeof shotPredictions.$inferInsert) => columnName(shotPredictions[key]);
const WRITTEN_COLUMNS = [
	'shotId',
	'calibrationId',
	'predictedMuzzleMps',
	'predictedTargetMps',
	'predictedDownrangeMps',
	'predictedImpactXM',
	'predictedImpactYM',
	'muzzleResidualMps',
	'downrangeResidualMps',
	'impactXResidualM',
	'impactYResidualM',
	'passSpeed',
	'passImpact',
	'speedBasis',
	'judgedSpeedMps',
	'outsideCalibratedPressures',
	'predictionError'
] as const satisfies readonly (keyof PredictionRow)[];
const WRITTEN_NAMES = [...WRITTEN_COLUMNS.map(sqlName), sqlName('computedAt')];
/** "INSERT INTO shot_predictions (…the written columns…)", shared by every statement that writes predictions. */
const INSERT_INTO_PREDICTIONS = `INSERT INTO ${tableName(shotPredictions)} (${WRITTEN_NAMES.map((n) => `\`${n}\``).join(', ')})`;
const UPSERT_HEAD = `${INSERT_INTO_PREDICTIONS} VALUES `;
const UPSERT_TAIL =
	' ON DUPLICATE KEY UPDATE ' +
	WRITTEN_NAMES.slice(1)
		.map((n) => `\`${n}\` = VALUES(\`${n}\`)`)
		.join(', ');

function literal(value: unknown): string {
	if (value === null || value === undefined) return 'NULL';
	if (typeof value === 'number') return Number.isFinite(value) ? String(value) : 'NULL';
	if (typeof value === 'boolean') return value ? '1' : '0';
	return mysql.escape(String(value));
}

/** computed_at as the column writes it (DATETIME(3) text in UTC). */
const timeText = (at: Date) => shotPredictions.computedAt.mapToDriverValue(at);

function upsertStatement(rows: PredictionRow[], computedAt: Date): string {
	const at = `'${timeText(computedAt)}'`;
	const values = rows.map((row) => '(' + WRITTEN_COLUMNS.map((key) => literal(row[key])).join(',') + ',' + at + ')').join(',');
	return UPSERT_HEAD + values + UPSERT_TAIL;
}

/** One row's values in WRITTEN_NAMES order, for a statement with placeholders (db/raw.ts). */
function rowValues(row: PredictionRow, computedAt: Date): unknown[] {
	const value = (v: unknown) => (v === undefined || (typeof v === 'number' && !Number.isFinite(v)) ? null : v);
	return [...WRITTEN_COLUMNS.map((key) => value(row[key])), timeText(computedAt)];
}

function upsert(tx: Executor, rows: PredictionRow[], computedAt: Date): Promise<unknown> {
	if (rows.length === 0) return Promise.resolve();
	return tx.execute(sql.raw(upsertStatement(rows, computedAt)));
}

/** The shot columns a prediction reads (not notes, UUIDs, audit columns). */
const SHOT_COLUMNS = {
	id: shots.id,
	sessionId: shots.sessionId,
	fillGaugePa: shots.fillGaugePa,
	muzzleSpeedMps: shots.muzzleSpeedMps,
	downrangeSpeedMps: shots.downrangeSpeedMps,
	impactXM: shots.impactXM,
	impactYM: shots.impactYM,
	miss: shots.miss,
	temperatureC: shots.temperatureC,
	pressurePa: shots.pressurePa
};

/** Loads what a page of shots needs (sessions, plans, calibrations in force), caching across pages. */
class Context {
	readonly sessions = new Map<number, RangeSessionRow>();
	readonly plans = new Map<number, PlanRow>();
	inForce = new Map<string, CalibrationInForce>();
	readonly conditions = new ConditionsCache();

	constructor(private readonly tx: Executor) {}

	async load(page: PredictedShot[]) {
		const missingSessions = [...new Set(page.map((s) => s.sessionId))].filter((id) => !this.sessions.has(id));
		if (missingSessions.length > 0) {
			const rows = await this.tx.select().from(rangeSessions).where(inArray(rangeSessions.id, missingSessions));
			for (const row of rows) this.sessions.set(row.id, row);
			const planIds = [...new Set(rows.map((r) => r.testPlanId))].filter(
				(id): id is number => id !== null && !this.plans.has(id)
			);
			const pairs = rows
				.filter((r) => !this.inForce.has(`${r.rigId}:${r.projectileId}`))
				.map((r) => ({ rigId: r.rigId, projectileId: r.projectileId }));
			const [plans, inForce] = await Promise.all([
				planIds.length > 0 ? this.tx.select().from(testPlans).where(inArray(testPlans.id, planIds)) : [],
				calibrationsInForce(this.tx, pairs)
			]);
			for (const plan of plans) this.plans.set(plan.id, plan);
			for (const [key, value] of inForce) this.inForce.set(key, value);
		}
	}

	row(shot: PredictedShot): PredictionRow {
		const session = this.sessions.get(shot.sessionId)!;
		const plan = session.testPlanId === null ? null : (this.plans.get(session.testPlanId) ?? null);
		return predictionRow(shot, session, plan, inForceFor(this.inForce, session.rigId, session.projectileId), this.conditions);
	}
}

/** A promise whose rejection is handled later (awaited), not reported as unhandled meanwhile. */
function deferred<T>(promise: Promise<T>): Promise<T> {
	promise.catch(() => undefined);
	return promise;
}

/**
 * Recompute the predictions, residuals and pass/fail of the selected shots (deleted ones too, so
 * a restored shot is current) and upsert them into shot_predictions. Runs in the caller's
 * transaction when given one. Shots the model cannot predict get their prediction_error set and
 * null predictions; pass/fail is still judged from what was measured where it can be.
 *
 * Pages are pipelined: the next page's SELECT is queued before this page's upsert, so the
 * predictions of page n are computed while MariaDB writes page n − 1.
 */
export async function recomputePredictions(tx: Executor, selection: RecomputeSelection): Promise<RecomputeResult> {
	const result: RecomputeResult = { shots: 0, unpredictable: 0 };
	const context = new Context(tx);
	const computedAt = new Date();
	const ofRigOrProjectile =
		selection.rigId === undefined && selection.projectileId === undefined
			? []
			: await sessionIdsOfPair(tx, selection.rigId, selection.projectileId);
	const sessionIds = [...new Set([...(selection.sessionIds ?? []), ...ofRigOrProjectile])];
	const shotIds = [...new Set(selection.shotIds ?? [])].sort((a, b) => a - b);

	// Pages: keyset pages in id order over the sessions' shots (each page an index range), then
	// the listed shots in chunks, less those the sessions already covered.
	let lastId = 0;
	let sessionsDone = sessionIds.length === 0;
	let chunkStart = 0;
	const nextPage = async (): Promise<PredictedShot[] | null> => {
		while (!sessionsDone) {
			const page = await tx
				.select(SHOT_COLUMNS)
				.from(shots)
				.where(and(inArray(shots.sessionId, sessionIds), gt(shots.id, lastId)))
				.orderBy(asc(shots.id))
				.limit(PREDICTION_PAGE_SIZE);
			if (page.length < PREDICTION_PAGE_SIZE) sessionsDone = true;
			if (page.length > 0) {
				lastId = page[page.length - 1].id;
				return page;
			}
		}
		while (chunkStart < shotIds.length) {
			const chunk = shotIds.slice(chunkStart, chunkStart + PREDICTION_PAGE_SIZE);
			chunkStart += PREDICTION_PAGE_SIZE;
			const page = await tx
				.select(SHOT_COLUMNS)
				.from(shots)
				.where(and(inArray(shots.id, chunk), sessionIds.length > 0 ? notInArray(shots.sessionId, sessionIds) : undefined))
				.orderBy(asc(shots.id));
			if (page.length > 0) return page;
		}
		return null;
	};

	let upcoming = deferred(nextPage());
	let writing: Promise<unknown> = Promise.resolve();
	for (;;) {
		const page = await upcoming;
		if (!page) break;
		// nextPage reads lastId synchronously before its first await, so it is safe to start now.
		upcoming = deferred(nextPage());
		await context.load(page);
		const rows = page.map((shot) => context.row(shot));
		await writing;
		writing = deferred(upsert(tx, rows, computedAt));
		result.shots += rows.length;
		result.unpredictable += rows.filter((r) => r.predictionError !== null).length;
	}
	await writing;
	return result;
}

/**
 * The sessions of a rig and/or projectile, deleted ones included (their shots keep predictions),
 * in id order; `lock` takes their row locks (FOR UPDATE) for the rest of the transaction.
 */
export async function sessionIdsOfPair(
	tx: Executor,
	rigId: number | undefined,
	projectileId: number | undefined,
	options: { lock?: boolean } = {}
): Promise<number[]> {
	const query = tx
		.select({ id: rangeSessions.id })
		.from(rangeSessions)
		.where(
			and(
				rigId === undefined ? undefined : eq(rangeSessions.rigId, rigId),
				projectileId === undefined ? undefined : eq(rangeSessions.projectileId, projectileId)
			)
		)
		.orderBy(asc(rangeSessions.id));
	const rows = options.lock ? await query.for('update') : await query;
	return rows.map((r) => r.id);
}

// A session's (s) rig (r), projectile (p) and plan (tp, when it has one), joined: what the
// single-shot statements below read, and check.
const SESSION_REFERENCES =
	`JOIN ${tableName(rigs)} r ON ${name(rigs.id, 'r')} = ${name(rangeSessions.rigId, 's')} ` +
	`JOIN ${tableName(projectiles)} p ON ${name(projectiles.id, 'p')} = ${name(rangeSessions.projectileId, 's')} ` +
	`LEFT JOIN ${tableName(testPlans)} tp ON ${name(testPlans.id, 'tp')} = ${name(rangeSessions.testPlanId, 's')}`;

// What one shot's prediction reads besides the shot and its session, in one statement that
// share-locks it (see predictionInputsRead): the rig, the projectile, the plan (when the session
// has one) and the pair's approved calibration (a row per approved calibration: one, or none),
// found through the session. Under REPEATABLE READ the lock on that index range also holds the
// gap where an approval would put a newly approved row. Written once as text (db/raw.ts).
const PREDICTION_INPUTS_LOCKED =
	`SELECT ${selectList(rigs, 'r')}, ${selectList(projectiles, 'p')}, ${selectList(testPlans, 'tp')}, ${selectList(calibrations, 'c')} ` +
	`FROM ${tableName(rangeSessions)} s ${SESSION_REFERENCES} ` +
	`LEFT JOIN ${tableName(calibrations)} c ON ${name(calibrations.rigId, 'c')} = ${name(rangeSessions.rigId, 's')} AND ${name(calibrations.projectileId, 'c')} = ${name(rangeSessions.projectileId, 's')} ` +
	`AND ${name(calibrations.status, 'c')} = 'approved' ` +
	`WHERE ${name(rangeSessions.id, 's')} = ? LOCK IN SHARE MODE`;

/**
 * The statement reading the rig, projectile, plan and calibrations of a session, share-locked for
 * the rest of the transaction: the read behind logging one shot (recomputePredictions does its
 * own). The caller holds the session row for update (the share lock on it is then its own).
 *
 * An approval locks the pair's sessions and calibrations for update while it recomputes every
 * shot of the pair, and an edit of the rig, projectile or plan locks that row while it recomputes
 * their shots: so such a change either committed before this read (and shows in it) or waits for
 * the caller's transaction, and its recomputation then sees the caller's shot. MariaDB spells the
 * shared lock LOCK IN SHARE MODE (10.11 has no FOR SHARE).
 */
export function predictionInputsRead(sessionId: number): Statement {
	return { sql: PREDICTION_INPUTS_LOCKED, values: [sessionId] };
}

/** What a shot's prediction needs besides the shot and its session. */
export interface PredictionInputs {
	inForce: CalibrationInForce;
	plan: PlanRow | null;
}

/** Rows of predictionInputsRead's statement, nested by table alias (db/raw.ts's batch). */
export type PredictionInputRows = Record<string, Record<string, unknown>>[];

/** The inputs in the rows predictionInputsRead read. Throws ReconcileError(404) without a rig or projectile. */
export function predictionInputs(rows: PredictionInputRows, session: RangeSessionRow): PredictionInputs {
	const refs = rows[0];
	const calibrationId = columnName(calibrations.id);
	const inForce = inForceOf(
		refs ? rowOf(rigs, refs.r) : undefined,
		refs ? rowOf(projectiles, refs.p) : undefined,
		rows.filter((r) => r.c[calibrationId] !== null).map((r) => rowOf(calibrations, r.c)),
		session
	);
	const plan = refs && refs.tp[columnName(testPlans.id)] !== null ? rowOf(testPlans, refs.tp) : null;
	return { inForce, plan };
}

export type ShotPrediction = typeof shotPredictions.$inferSelect;

/** The prediction of a shot just stored, as its row in shot_predictions. */
export function predictNewShot(shot: PredictedShot, session: RangeSessionRow, inputs: PredictionInputs, computedAt = new Date()): ShotPrediction {
	return insertedRow(shotPredictions, {
		...predictionRow(shot, session, inputs.plan, inputs.inForce, new ConditionsCache()),
		computedAt
	});
}

// The prediction of a shot just stored, written only while its session's row is as it was when
// the shot was stored (its updated_at): a session edited since then has recomputed the shot's
// prediction itself, or will. A plain INSERT: should an approval or an edit have written this
// shot's prediction first, it fails on the key rather than overwrite theirs.
const INSERT_PREDICTION_IF_SESSION_UNCHANGED =
	`${INSERT_INTO_PREDICTIONS} SELECT ${WRITTEN_NAMES.map(() => '?').join(', ')} FROM ${tableName(rangeSessions)} s ` +
	`WHERE ${name(rangeSessions.id, 's')} = ? AND ${name(rangeSessions.updatedAt, 's')} = ?`;

/**
 * The statement storing `prediction` for its shot if the session row still has the updated_at
 * it had when the shot was stored (as MariaDB wrote it: DATETIME(3) text); it writes nothing
 * otherwise, and fails with a duplicate key when the shot's prediction was written meanwhile.
 */
export function insertPredictionIfSessionUnchanged(prediction: ShotPrediction, sessionId: number, sessionUpdatedAt: string): Statement {
	return {
		sql: INSERT_PREDICTION_IF_SESSION_UNCHANGED,
		values: [...rowValues(prediction, prediction.computedAt), sessionId, sessionUpdatedAt]
	};
}

/**
 * What a prediction made from a session row and predictionInputsRead's rows was made from, as
 * MariaDB holds it: the updated_at (DATETIME(3) text) of the session, rig, projectile and plan,
 * and the id of the approved calibration (approved rows change only their status). A prediction
 * is current while these are. To the millisecond: two edits of one row within the same
 * millisecond, a shot logged between them, would go unseen — every edit recomputes the shots it
 * touches, and the next one would correct it.
 */
export interface InputVersions {
	sessionUpdatedAt: string;
	rigUpdatedAt: string;
	projectileUpdatedAt: string;
	planUpdatedAt: string | null;
	approvedCalibrationId: number | null;
}

export function inputVersions(sessionRaw: Record<string, unknown>, rows: PredictionInputRows): InputVersions | null {
	const refs = rows[0];
	if (!refs) return null;
	const updated = (raw: Record<string, unknown>, column: Column) => raw[columnName(column)] as string | null;
	const approved = rows.map((r) => r.c[columnName(calibrations.id)] as number | null).filter((id): id is number => id !== null);
	return {
		sessionUpdatedAt: String(updated(sessionRaw, rangeSessions.updatedAt)),
		rigUpdatedAt: String(updated(refs.r, rigs.updatedAt)),
		projectileUpdatedAt: String(updated(refs.p, projectiles.updatedAt)),
		planUpdatedAt: updated(refs.tp, testPlans.updatedAt),
		approvedCalibrationId: approved.length > 0 ? Math.max(...approved) : null
	};
}

/**
 * The user variable the caller's batch sets to the id of the shot it has just inserted, or to
 * NULL when that INSERT stored nothing (shots.ts).
 */
export const INSERTED_SHOT_ID_VARIABLE = '@inserted_shot_id';

// The prediction of the shot the same batch has just inserted (INSERTED_SHOT_ID_VARIABLE; named
// by its clientUuid too), written only if what it was computed from is
// what MariaDB holds now (the batch has locked it): the session, rig, projectile and plan rows
// unchanged since, and the same approved calibration. Otherwise it writes nothing.
const INSERT_PREDICTION_IF_INPUTS_UNCHANGED =
	`${INSERT_INTO_PREDICTIONS} SELECT ${name(shots.id, 'sh')}, ${WRITTEN_NAMES.slice(1)
		.map(() => '?')
		.join(', ')} ` +
	`FROM ${tableName(shots)} sh ` +
	`JOIN ${tableName(rangeSessions)} s ON ${name(rangeSessions.id, 's')} = ${name(shots.sessionId, 'sh')} ${SESSION_REFERENCES} ` +
	`WHERE ${name(shots.id, 'sh')} = ${INSERTED_SHOT_ID_VARIABLE} AND ${name(shots.clientUuid, 'sh')} = ? ` +
	`AND ${name(rangeSessions.updatedAt, 's')} = ? AND ${name(rigs.updatedAt, 'r')} = ? AND ${name(projectiles.updatedAt, 'p')} = ? ` +
	`AND ${name(testPlans.updatedAt, 'tp')} <=> ? ` +
	`AND (SELECT MAX(${name(calibrations.id, 'c')}) FROM ${tableName(calibrations)} c WHERE ${name(calibrations.rigId, 'c')} = ${name(rangeSessions.rigId, 's')} ` +
	`AND ${name(calibrations.projectileId, 'c')} = ${name(rangeSessions.projectileId, 's')} AND ${name(calibrations.status, 'c')} = 'approved') <=> ?`;

/**
 * The statement storing `prediction`, computed from inputs at `versions`, for the shot with
 * `clientUuid` that the same batch has just inserted — only if those inputs are still current.
 */
export function insertPredictionIfInputsUnchanged(clientUuid: string, prediction: Omit<ShotPrediction, 'shotId'>, versions: InputVersions): Statement {
	return {
		sql: INSERT_PREDICTION_IF_INPUTS_UNCHANGED,
		values: [
			...rowValues({ shotId: 0, ...prediction }, prediction.computedAt).slice(1),
			clientUuid,
			versions.sessionUpdatedAt,
			versions.rigUpdatedAt,
			versions.projectileUpdatedAt,
			versions.planUpdatedAt,
			versions.approvedCalibrationId
		]
	};
}
