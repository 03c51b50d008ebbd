// Chance of meeting a test plan for a setup (physics.md §7): the physics module's seeded Monte
// Carlo (chanceOfMeetingPlan) fed from the database — the calibration in force and its
// covariance, and the rig's shot-to-shot speed SD and impact dispersion estimated from the
// residuals of its recent sessions with the same projectile.
//
// Estimators (pooled within-session SDs; e.g. NIST/SEMATECH e-Handbook of Statistical Methods,
// "pooled standard deviation" [memory]):
// - speed: u = muzzle residual / predicted muzzle speed (relative), pooled over the recent
//   sessions as s_u² = Σ_s Σ_i (u_i − ū_s)² / Σ_s (n_s − 1), then σ_v = s_u × the setup's
//   predicted muzzle speed. Deviations from each session's own mean leave out that session's
//   offset (its conditions, the calibration's bias for it), which is not shot-to-shot scatter;
//   relative residuals let sessions fired at different speeds be pooled, on the assumption that
//   the scatter grows in proportion to speed. The chronograph's reading noise stays in, so σ_v
//   errs on the large (cautious) side.
// - impact: the same pooling of the lateral and vertical impact residuals (metres, not scaled):
//   σ_x, σ_y. Residuals rather than raw impacts, so sweeps over fill pressure (whose mean impact
//   moves with speed) still measure scatter about the predicted point.
// A session contributes when it has at least two residuals of the kind (one degree of freedom).
//
// The gauge (physics.md §7): each sample also draws the error of setting and reading the fill
// gauge, σ_p: the caller's figure, else the gauge SD the approved calibration was fitted with
// (summary.measurementSds.pressurePa), else DEFAULT_GAUGE_SD_PA.
//
// Without an approved calibration the nominal η0 (rig) and C_D (projectile) are not estimates of
// this pair: the Monte Carlo draws them with the wide UNCALIBRATED_SPREAD instead of a confident
// zero, and says so in its notes.
import { and, desc, eq, inArray, isNull } from 'drizzle-orm';
import { airDensity } from '$lib/physics/air';
import { chanceOfMeetingPlan, type ChanceResult, type PlanRequirements } from '$lib/physics/chance';
import { PhysicsInputError } from '$lib/physics/errors';
import { predictShot, type LauncherCalibration, type ParameterName, type ShotSetup } from '$lib/physics/launcher';
import { DEFAULT_GAUGE_SD_PA } from '$lib/physics/solve';
import { rangeSessions, shotPredictions, shots, testPlans } from '../db/schema';
import { ReconcileError } from './errors';
import { calibrationInForce, launcherProjectile, launcherRig, summaryOf, type CalibrationInForce, type Executor } from './model';

/** How many of the pair's most recent sessions the dispersion is estimated from. */
export const DISPERSION_RECENT_SESSIONS = 10;
/** Seed used when the caller gives none: the same setup then always shows the same chances. */
export const DEFAULT_CHANCE_SEED = 20261202;

/**
 * One-SD spread of an uncalibrated model (relative for η0 and C_D, degrees for the elevation):
 * nominal efficiencies of pneumatic launchers and drag coefficients of real projectiles are
 * commonly off by this much (the demo lab's fits move η0 by 10–30 % from the rig's nominal value,
 * and the campaigns' fitted C_D by 20–40 % from the nominal sphere value), so the chance drawn with
 * it is a rough figure, stated as such.
 */
export const UNCALIBRATED_SPREAD = { efficiencyRelative: 0.15, dragRelative: 0.25, elevationDeg: 0.5 } as const;

/** σ_p for a setup: the caller's, else the calibration's gauge SD, else DEFAULT_GAUGE_SD_PA. */
export function gaugeSdFor(
	inForce: Pick<CalibrationInForce, 'record'>,
	given?: number
): { gaugeSdPa: number; source: 'input' | 'calibration' | 'default' } {
	if (given !== undefined) return { gaugeSdPa: given, source: 'input' };
	const fromCalibration = inForce.record ? summaryOf(inForce.record).measurementSds?.pressurePa : undefined;
	if (typeof fromCalibration === 'number' && Number.isFinite(fromCalibration) && fromCalibration >= 0)
		return { gaugeSdPa: fromCalibration, source: 'calibration' };
	return { gaugeSdPa: DEFAULT_GAUGE_SD_PA, source: 'default' };
}

/** The nominal model with the wide spread of UNCALIBRATED_SPREAD as its covariance. */
export function uncalibratedSpread(model: LauncherCalibration): LauncherCalibration {
	const p = model.parameters;
	const sds: [ParameterName, number][] = [
		['efficiency', UNCALIBRATED_SPREAD.efficiencyRelative * p.efficiency],
		['dragCoefficient', UNCALIBRATED_SPREAD.dragRelative * p.dragCoefficient],
		['elevationBias', UNCALIBRATED_SPREAD.elevationDeg]
	];
	return {
		...model,
		fitted: sds.map(([name]) => name),
		identifiable: sds.map(() => true),
		covariance: sds.map((_, i) => sds.map(([, sd], j) => (i === j ? sd * sd : 0)))
	};
}

const UNCALIBRATED_NOTE =
	`No approved calibration: the chance is drawn from the wide spread of an uncalibrated model ` +
	`(nominal η0 ± ${UNCALIBRATED_SPREAD.efficiencyRelative * 100} %, C_D ± ${UNCALIBRATED_SPREAD.dragRelative * 100} %, ` +
	`elevation ± ${UNCALIBRATED_SPREAD.elevationDeg}°, one SD), so it is a rough figure; calibrate the pair for a confident one.`;

export interface SetupInput {
	/** Fill pressure on the gauge, Pa. */
	fillGaugePa: number;
	elevationDeg: number;
	azimuthDeg?: number;
	launchHeightM: number;
	/** Height of the aim point above the ground at the target plane, m. */
	aimHeightM: number;
	/** Default: the plan's target distance. */
	targetDistanceM?: number;
	temperatureC: number;
	pressurePa: number;
	/** 0..1. */
	relativeHumidity: number;
	windXMps?: number;
	windZMps?: number;
}

export interface ChanceForSetupInput {
	rigId: number;
	projectileId: number;
	/** The plan whose tolerances are checked; or give `plan` directly. */
	testPlanId?: number;
	plan?: PlanRequirements & { targetDistanceM?: number };
	setup: SetupInput;
	seed?: number;
	samples?: number;
	/** SD of setting and reading the fill gauge, Pa; default gaugeSdFor (calibration, else 1 kPa). */
	gaugeSdPa?: number;
	/** Overrides of the estimated dispersion (e.g. for a rig without history). */
	dispersion?: { speedSdMps?: number; impactSdM?: { x: number; y: number } };
	recentSessions?: number;
}

export interface DispersionEstimate {
	/** Pooled relative SD of muzzle speed, and its value at this setup's predicted speed. */
	speedSdRelative: number | null;
	speedSdMps: number | null;
	impactSdM: { x: number; y: number } | null;
	/** Sessions that contributed, newest first, and the pooled degrees of freedom. */
	sessionIds: number[];
	dof: { speed: number; impactX: number; impactY: number };
	/** Which figures came from the caller instead of the estimate. */
	overridden: { speed: boolean; impact: boolean };
}

interface ChanceBasis {
	calibrationId: number | null;
	uncalibrated: boolean;
	/** σ_p the samples drew the gauge error from, Pa, and where it came from. */
	gaugeSdPa: number;
	gaugeSdSource: 'input' | 'calibration' | 'default';
}

export type ChanceForSetup =
	| ({ ok: true; chance: ChanceResult; dispersion: DispersionEstimate } & ChanceBasis)
	| ({ ok: false; reason: string; dispersion: DispersionEstimate | null } & ChanceBasis);

/** Pooled within-group SD: √(Σ_g Σ_i (x − x̄_g)² / Σ_g (n_g − 1)); null when no group has 2 values. */
export function pooledWithinSd(groups: readonly (readonly number[])[]): { sd: number | null; dof: number } {
	let sum = 0;
	let dof = 0;
	for (const g of groups) {
		if (g.length < 2) continue;
		const mean = g.reduce((s, v) => s + v, 0) / g.length;
		for (const v of g) sum += (v - mean) ** 2;
		dof += g.length - 1;
	}
	return { sd: dof > 0 ? Math.sqrt(sum / dof) : null, dof };
}

/** Residual scatter of the pair's recent sessions (see the estimators above). */
export async function estimateDispersion(
	tx: Executor,
	rigId: number,
	projectileId: number,
	recentSessions = DISPERSION_RECENT_SESSIONS
) {
	const recent = await tx
		.select({ id: rangeSessions.id })
		.from(rangeSessions)
		.where(and(eq(rangeSessions.rigId, rigId), eq(rangeSessions.projectileId, projectileId), isNull(rangeSessions.deletedAt)))
		.orderBy(desc(rangeSessions.startedAt), desc(rangeSessions.id))
		.limit(recentSessions);
	const sessionIds = recent.map((r) => r.id);
	const rows =
		sessionIds.length === 0
			? []
			: await tx
					.select({
						sessionId: shots.sessionId,
						muzzle: shotPredictions.muzzleResidualMps,
						predictedMuzzle: shotPredictions.predictedMuzzleMps,
						x: shotPredictions.impactXResidualM,
						y: shotPredictions.impactYResidualM
					})
					.from(shots)
					.innerJoin(shotPredictions, eq(shotPredictions.shotId, shots.id))
					.where(and(inArray(shots.sessionId, sessionIds), isNull(shots.deletedAt)));
	const group = (pick: (r: (typeof rows)[number]) => number | null) =>
		sessionIds.map((id) =>
			rows.filter((r) => r.sessionId === id).flatMap((r) => {
				const v = pick(r);
				return v === null ? [] : [v];
			})
		);
	const speed = pooledWithinSd(
		group((r) => (r.muzzle === null || !r.predictedMuzzle ? null : r.muzzle / r.predictedMuzzle))
	);
	const x = pooledWithinSd(group((r) => r.x));
	const y = pooledWithinSd(group((r) => r.y));
	return { sessionIds, speedSdRelative: speed.sd, impactSd: x.sd !== null && y.sd !== null ? { x: x.sd, y: y.sd } : null, dof: { speed: speed.dof, impactX: x.dof, impactY: y.dof } };
}

/**
 * Probability that one shot of `setup` meets the plan's speed tolerance, its impact radius and
 * both, with Monte Carlo standard errors (seeded), under the calibration in force for the pair.
 * Returns ok: false with the reason when the setup cannot be predicted or no dispersion is known.
 */
export async function chanceOfMeetingPlanForSetup(tx: Executor, input: ChanceForSetupInput): Promise<ChanceForSetup> {
	let plan: PlanRequirements & { targetDistanceM?: number };
	if (input.testPlanId !== undefined) {
		const [row] = await tx.select().from(testPlans).where(eq(testPlans.id, input.testPlanId)).limit(1);
		if (!row) throw new ReconcileError('testPlanId', `No test plan with id ${input.testPlanId}.`, 404);
		plan = {
			speed: {
				targetMps: row.requiredSpeedMps,
				toleranceMps: (row.requiredSpeedMps * row.speedTolerancePct) / 100,
				at: row.speedAt
			},
			impactRadiusM: row.impactToleranceM,
			targetDistanceM: row.targetDistanceM
		};
	} else if (input.plan) plan = input.plan;
	else throw new ReconcileError('testPlanId', 'Choose a test plan (or give its requirements).');

	const s = input.setup;
	const targetDistanceM = s.targetDistanceM ?? plan.targetDistanceM;
	if (targetDistanceM === undefined)
		throw new ReconcileError('setup.targetDistanceM', 'Give the target distance of the setup.');
	const inForce = await calibrationInForce(tx, input.rigId, input.projectileId);
	const gauge = gaugeSdFor(inForce, input.gaugeSdPa);
	const base = { calibrationId: inForce.calibrationId, uncalibrated: inForce.uncalibrated, gaugeSdPa: gauge.gaugeSdPa, gaugeSdSource: gauge.source };

	let setup: ShotSetup;
	try {
		setup = {
			rig: launcherRig(inForce.rig),
			projectile: launcherProjectile(inForce.projectile),
			fillGaugePa: s.fillGaugePa,
			session: {
				targetDistanceM,
				elevationDeg: s.elevationDeg,
				azimuthDeg: s.azimuthDeg ?? 0,
				launchHeightM: s.launchHeightM,
				aimHeightM: s.aimHeightM,
				airDensityKgM3: airDensity({ temperatureC: s.temperatureC, pressurePa: s.pressurePa, relativeHumidity: s.relativeHumidity }),
				ambientPa: s.pressurePa,
				temperatureC: s.temperatureC,
				wind: { xMps: s.windXMps ?? 0, zMps: s.windZMps ?? 0 }
			}
		};
	} catch (e) {
		if (e instanceof PhysicsInputError) throw new ReconcileError(`setup.${e.field}`, e.message);
		throw e;
	}
	const nominal = predictShot(inForce.model, setup);
	if (!nominal.ok) return { ok: false, reason: nominal.reason, ...base, dispersion: null };

	const estimate = await estimateDispersion(tx, input.rigId, input.projectileId, input.recentSessions);
	const given = input.dispersion ?? {};
	const speedSdMps =
		given.speedSdMps ?? (estimate.speedSdRelative === null ? null : estimate.speedSdRelative * nominal.muzzleSpeedMps);
	const impactSdM = given.impactSdM ?? estimate.impactSd;
	const dispersion: DispersionEstimate = {
		speedSdRelative: estimate.speedSdRelative,
		speedSdMps,
		impactSdM,
		sessionIds: estimate.sessionIds,
		dof: estimate.dof,
		overridden: { speed: given.speedSdMps !== undefined, impact: given.impactSdM !== undefined }
	};
	if (speedSdMps === null || impactSdM === null)
		return {
			ok: false,
			reason:
				'The rig has no recent sessions with this projectile from which to estimate its speed and impact scatter (two or more predicted shots per session are needed).',
			...base,
			dispersion
		};
	try {
		const chance = chanceOfMeetingPlan({
			calibration: inForce.uncalibrated ? uncalibratedSpread(inForce.model) : inForce.model,
			setup,
			plan: { speed: plan.speed, impactRadiusM: plan.impactRadiusM },
			speedSdMps,
			gaugeSdPa: gauge.gaugeSdPa,
			impactSdM,
			samples: input.samples,
			seed: input.seed ?? DEFAULT_CHANCE_SEED
		});
		if (inForce.uncalibrated) chance.notes.unshift(UNCALIBRATED_NOTE);
		return { ok: true, chance, ...base, dispersion };
	} catch (e) {
		if (e instanceof PhysicsInputError) {
			if (e.field === 'setup') return { ok: false, reason: e.message, ...base, dispersion };
			throw new ReconcileError(e.field, e.message);
		}
		throw e;
	}
}
