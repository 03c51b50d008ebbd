// The model in force for a (rig, projectile) pair, and the mapping between database rows and the
// physics module's inputs. Everything here reads; nothing writes.
//
// Stored calibrations (calibrations.parameters, typed CalibrationParameters in schema.ts) name
// their parameters eta0, eta1, energyOffsetJ, valveAreaM2, openingTimeS, frictionN,
// dragCoefficient, elevationBiasDeg; the physics module's fit names them efficiency,
// pressureSlope, energyOffset, valveArea, openingTime, friction, dragCoefficient, elevationBias.
// STORED_KEY is the one place that maps one onto the other.
import { and, eq, inArray } from 'drizzle-orm';
import { airDensity } from '$lib/physics/air';
import {
	DEFAULT_MODEL,
	PARAMETER_ORDER,
	neutralParameters,
	type CandidateOutcome,
	type LauncherCalibration,
	type LauncherModel,
	type ModelComparison,
	type LauncherRig,
	type MeasurementSds,
	type ObservationKind,
	type ParameterName,
	type Projectile as LauncherProjectile,
	type RangeConditions
} from '$lib/physics/launcher';
import type { Database, Transaction } from '../db';
import {
	calibrations,
	projectiles,
	rangeSessions,
	rigs,
	type CalibrationParameters
} from '../db/schema';
import { ReconcileError } from './errors';

/** A Drizzle client or an open transaction: every reconcile function runs inside either. */
export type Executor = Database | Transaction;

export type RigRow = typeof rigs.$inferSelect;
export type ProjectileRow = typeof projectiles.$inferSelect;
export type RangeSessionRow = typeof rangeSessions.$inferSelect;
export type CalibrationRow = typeof calibrations.$inferSelect;

export type StoredParameterKey = Exclude<keyof CalibrationParameters, 'pRefPa' | 'model' | 'lossN'>;

export const PARAMETER_NAMES: readonly ParameterName[] = PARAMETER_ORDER;

/** Fit name → key in calibrations.parameters / standardErrors / fitted. */
export const STORED_KEY: Record<ParameterName, StoredParameterKey> = {
	efficiency: 'eta0',
	pressureSlope: 'eta1',
	energyOffset: 'energyOffsetJ',
	valveArea: 'valveAreaM2',
	openingTime: 'openingTimeS',
	friction: 'frictionN',
	dragCoefficient: 'dragCoefficient',
	elevationBias: 'elevationBiasDeg'
};

export function parameterNameOf(key: string): ParameterName | null {
	return PARAMETER_NAMES.find((name) => STORED_KEY[name] === key) ?? null;
}

/** Per residual kind: a value, or null when the calibration had none of that kind. */
export type PerKind = Record<ObservationKind, number | null>;

/**
 * The shape of calibrations.summary as fitCalibration writes it (JSON: non-finite numbers are
 * stored as null). The calibration page shows it as the fit report.
 */
/** A model comparison as stored (JSON: a score that could not be computed is null). */
export type StoredComparison = Omit<ModelComparison, 'candidates'> & {
	candidates: (Omit<CandidateOutcome, 'score'> & { score: number | null })[];
};

export interface CalibrationSummary {
	/** Family and drag law (absent on calibrations made before the valve-flow family). */
	model?: LauncherModel;
	/** The candidates compared by held-out error, when the model was chosen automatically. */
	comparison?: StoredComparison | null;
	/** When the solver stopped early: the cause in plain words. */
	failure?: string | null;
	/** Shots the start could not predict, set aside with the reason. */
	unused?: { shotId: number; reason: string }[];
	converged: boolean;
	message: string;
	/** Parameters that were actually fitted, in the order of calibrations.covariance (stored keys). */
	covarianceParameters: StoredParameterKey[];
	/** Correlation matrix in the same order. */
	correlation: (number | null)[][];
	/** 95 % Student-t intervals of the fitted parameters (stored keys). */
	confidence95: Record<string, { lower: number; upper: number }>;
	/** Requested parameters the data could not determine, with the plain reason; held at `heldAt`. */
	notDetermined: { parameter: StoredParameterKey; reason: string; heldAt: number }[];
	/** Values of parameters that were not fitted (nominal C_D, zero loss…). */
	held: Partial<Record<StoredParameterKey, number>>;
	/** Reference pressure of the efficiency slope, Pa (mean fill gauge pressure of the fitted shots). */
	pRefPa: number;
	fillPressureRangePa: { min: number; max: number };
	nUsed: { shots: number; observations: number } & Record<ObservationKind, number>;
	/** Shots of the chosen sessions left out, and why (counts). */
	left: { excluded: number; deleted: number; voided?: number; withoutMeasurement: number; missesImpactDropped: number };
	rmsByKind: PerKind;
	noiseFloorByKind: PerKind;
	crossValidation: {
		method: 'leave-one-session-out' | 'k-fold';
		folds: number;
		failedFolds: number;
		rmsByKind: PerKind;
	} | null;
	chiSquare: number | null;
	dof: number;
	/** s = √(χ²/dof); ≈ 1 when the measurement SDs describe the scatter. */
	residualScale: number | null;
	/** |standardised residual| > 3: flagged, kept in the fit unless a person excludes them. */
	outliers: { shotId: number; kind: ObservationKind; standardized: number }[];
	measurementSds: MeasurementSds;
	iterations: number;
}

/** What predicts a pair's shots: its approved calibration, or the nominal values (uncalibrated). */
export interface CalibrationInForce {
	rigId: number;
	projectileId: number;
	/** Null when nominal η (rig) and C_D (projectile) are used. */
	calibrationId: number | null;
	uncalibrated: boolean;
	approvedAt: Date | null;
	/** The approved calibration row; null when uncalibrated. */
	record: CalibrationRow | null;
	rig: RigRow;
	projectile: ProjectileRow;
	/** Input for the physics module's predictShot and the Monte Carlo. */
	model: LauncherCalibration;
}

export function launcherRig(rig: RigRow): LauncherRig {
	return {
		reservoirM3: rig.reservoirM3,
		deadM3: rig.deadM3,
		boreDiameterM: rig.boreDiameterM,
		travelM: rig.travelM
	};
}

export function launcherProjectile(projectile: ProjectileRow): LauncherProjectile {
	return { massKg: projectile.massKg, diameterM: projectile.diameterM };
}

/** Conditions a shot flew in: its own temperature and pressure when logged, else its session's. */
export interface ShotConditions {
	temperatureC: number | null;
	pressurePa: number | null;
}

/**
 * Range conditions of a shot for the physics module, memoised per (session, temperature,
 * pressure): a session's shots share a few distinct conditions, and CIPM-2007 need not run
 * 100 000 times for an import.
 */
export class ConditionsCache {
	private readonly entries = new Map<string, RangeConditions>();

	of(session: RangeSessionRow, shot?: ShotConditions): RangeConditions {
		const temperatureC = shot?.temperatureC ?? session.temperatureC;
		const pressurePa = shot?.pressurePa ?? session.pressurePa;
		const key = `${session.id}|${temperatureC}|${pressurePa}`;
		let conditions = this.entries.get(key);
		if (!conditions) {
			conditions = {
				sessionId: String(session.id),
				targetDistanceM: session.targetDistanceM,
				elevationDeg: session.elevationDeg,
				azimuthDeg: session.azimuthDeg,
				launchHeightM: session.launchHeightM,
				aimHeightM: session.aimHeightM,
				airDensityKgM3: airDensity({ temperatureC, pressurePa, relativeHumidity: session.relativeHumidity }),
				ambientPa: pressurePa,
				temperatureC,
				wind: { xMps: session.windXMps, zMps: session.windZMps }
			};
			this.entries.set(key, conditions);
		}
		return conditions;
	}
}

/** Nominal model: the rig's nominal efficiency, the projectile's nominal C_D, nothing else. */
export function nominalModel(
	rig: Pick<RigRow, 'nominalEfficiency' | 'ratedPressurePa'>,
	projectile: Pick<ProjectileRow, 'nominalDragCoefficient'>
): LauncherCalibration {
	return {
		model: DEFAULT_MODEL,
		parameters: {
			// Any positive p_ref: with a zero slope it does not enter the prediction.
			...neutralParameters(rig.ratedPressurePa),
			efficiency: rig.nominalEfficiency,
			dragCoefficient: projectile.nominalDragCoefficient
		},
		fitted: [],
		identifiable: [],
		covariance: [],
		// Nominal values claim no pressure range, so no prediction is flagged as extrapolated.
		fillPressureRangePa: { min: 0, max: Infinity }
	};
}

export function summaryOf(row: CalibrationRow): CalibrationSummary {
	return row.summary as unknown as CalibrationSummary;
}

/** A stored calibration as the physics module's LauncherCalibration. */
export function storedModel(row: CalibrationRow, projectile: ProjectileRow, rig: Pick<RigRow, 'travelM'>): LauncherCalibration {
	const p = row.parameters;
	const summary = summaryOf(row);
	const fitted = (summary.covarianceParameters ?? [])
		.map((key) => ((key as string) === 'lossN' ? 'energyOffset' : parameterNameOf(key)))
		.filter((name): name is ParameterName => name !== null);
	const pRefPa = p.pRefPa ?? summary.pRefPa ?? 1;
	const neutral = neutralParameters(pRefPa);
	return {
		model: p.model ?? DEFAULT_MODEL,
		parameters: {
			...neutral,
			efficiency: p.eta0 ?? neutral.efficiency,
			pressureSlope: p.eta1 ?? 0,
			// Calibrations made before the energy term stored a loss force F: E = F·L.
			energyOffsetJ: p.energyOffsetJ ?? (p.lossN ?? 0) * rig.travelM,
			valveAreaM2: p.valveAreaM2 ?? neutral.valveAreaM2,
			openingTimeS: p.openingTimeS ?? neutral.openingTimeS,
			frictionN: p.frictionN ?? 0,
			dragCoefficient: p.dragCoefficient ?? projectile.nominalDragCoefficient,
			elevationBiasDeg: p.elevationBiasDeg ?? 0
		},
		fitted,
		// Non-finite variances were stored as null (JSON): such a parameter carries no uncertainty
		// the Monte Carlo could draw from.
		identifiable: fitted.map((_, j) => {
			const variance = row.covariance[j]?.[j];
			return typeof variance === 'number' && Number.isFinite(variance);
		}),
		covariance: row.covariance,
		fillPressureRangePa: summary.fillPressureRangePa ?? { min: 0, max: Infinity }
	};
}

function pairKey(rigId: number, projectileId: number) {
	return `${rigId}:${projectileId}`;
}

/**
 * The calibration in force for one pair from its rows: the rig, the projectile (undefined when
 * missing → ReconcileError 404) and the pair's calibrations (any status; the approved one is used).
 */
export function inForceOf(
	rig: RigRow | undefined,
	projectile: ProjectileRow | undefined,
	pairCalibrations: readonly CalibrationRow[],
	ids: { rigId: number; projectileId: number }
): CalibrationInForce {
	if (!rig) throw new ReconcileError('rigId', `No rig with id ${ids.rigId}.`, 404);
	if (!projectile) throw new ReconcileError('projectileId', `No projectile with id ${ids.projectileId}.`, 404);
	let record: CalibrationRow | null = null;
	for (const row of pairCalibrations) {
		if (row.status !== 'approved') continue;
		// approveCalibration keeps one approved row per pair; should two ever coexist, the newer wins.
		if (!record || (row.approvedAt?.getTime() ?? 0) > (record.approvedAt?.getTime() ?? 0)) record = row;
	}
	return {
		rigId: ids.rigId,
		projectileId: ids.projectileId,
		calibrationId: record?.id ?? null,
		uncalibrated: record === null,
		approvedAt: record?.approvedAt ?? null,
		record,
		rig,
		projectile,
		model: record ? storedModel(record, projectile, rig) : nominalModel(rig, projectile)
	};
}

/**
 * The calibration in force for each pair, in three queries whatever the number of pairs.
 * Throws ReconcileError(404) when a rig or projectile does not exist.
 */
export async function calibrationsInForce(
	tx: Executor,
	pairs: readonly { rigId: number; projectileId: number }[]
): Promise<Map<string, CalibrationInForce>> {
	const out = new Map<string, CalibrationInForce>();
	if (pairs.length === 0) return out;
	const rigIds = [...new Set(pairs.map((p) => p.rigId))];
	const projectileIds = [...new Set(pairs.map((p) => p.projectileId))];
	const [rigRows, projectileRows, approved] = await Promise.all([
		tx.select().from(rigs).where(inArray(rigs.id, rigIds)),
		tx.select().from(projectiles).where(inArray(projectiles.id, projectileIds)),
		tx
			.select()
			.from(calibrations)
			.where(
				and(
					eq(calibrations.status, 'approved'),
					inArray(calibrations.rigId, rigIds),
					inArray(calibrations.projectileId, projectileIds)
				)
			)
	]);
	const rigById = new Map(rigRows.map((r) => [r.id, r]));
	const projectileById = new Map(projectileRows.map((p) => [p.id, p]));
	for (const { rigId, projectileId } of pairs) {
		const key = pairKey(rigId, projectileId);
		if (out.has(key)) continue;
		const ofPair = approved.filter((c) => c.rigId === rigId && c.projectileId === projectileId);
		out.set(key, inForceOf(rigById.get(rigId), projectileById.get(projectileId), ofPair, { rigId, projectileId }));
	}
	return out;
}

export function inForceFor(map: Map<string, CalibrationInForce>, rigId: number, projectileId: number) {
	const found = map.get(pairKey(rigId, projectileId));
	if (!found) throw new Error(`no calibration in force loaded for rig ${rigId}, projectile ${projectileId}`);
	return found;
}

/**
 * The calibration in force for a (rig, projectile): the approved one, or — when none is
 * approved — the nominal η of the rig and C_D of the projectile, marked uncalibrated
 * (calibrationId null).
 */
export async function calibrationInForce(tx: Executor, rigId: number, projectileId: number): Promise<CalibrationInForce> {
	return inForceFor(await calibrationsInForce(tx, [{ rigId, projectileId }]), rigId, projectileId);
}
