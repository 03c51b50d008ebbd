// The setup sheet (product brief, "setup sheet"; issue 8): for a test plan, a rig, a projectile and
// the day's conditions, the fill pressure and elevation that hit the plan's speed and aim point
// under the approved calibration of the pair (or the nominal values, marked uncalibrated), the
// predicted shot, its trajectory, the spread to expect and the chance of meeting the plan.
// A fill above the rig's rated working pressure is never proposed: the sheet is refused instead.
//
// The sheet also says what the gauge's reading error σ_p does to the speed at the answer
// (σ_v = |dv/dp|·σ_p, physics.md §4) and, when that alone spreads the speed beyond the plan's
// tolerance, says so; the chance of meeting the plan draws the same gauge error (§7).
//
// Messages are for people and use the caller's display units (the numbers in the answer are SI).
import { and, asc, desc, eq, isNotNull, isNull } from 'drizzle-orm';
import { airDensity } from '$lib/physics/air';
import { PhysicsInputError } from '$lib/physics/errors';
import { exactCep } from '$lib/physics/stats/cep';
import { gaugeSpread } from '$lib/physics/solve';
import { modelOf, type CalibrationParameters, type LauncherModel } from '$lib/physics/launcher';
import type { FlightPathPoint } from '$lib/physics/flight/driver';
import { formatQuantity, type Prefs } from '$lib/format';
import type { SetupSheetInput } from '$lib/schemas/setup-sheet';
import { projectiles, rangeSessions, rigs, testPlans } from '../db/schema';
import { calibrationInForce, chanceOfMeetingPlanForSetup, ReconcileError, STORED_KEY, type Executor } from '../reconcile';
import { gaugeSdFor } from '../reconcile/chance';
import { solveSetup, type SetupRefusalCode } from './solve';

/** Within this fraction of the rating the sheet says the margin is small. */
const SMALL_MARGIN_FRACTION = 0.1;

type Chance = { probability: number; standardError: number };

export interface SetupSheet {
	plan: {
		id: number;
		name: string;
		speedAt: 'muzzle' | 'target';
		requiredSpeedMps: number;
		speedTolerancePct: number;
		toleranceMps: number;
		impactToleranceM: number;
		targetDistanceM: number;
	};
	rig: { id: number; name: string; ratedPressurePa: number };
	projectile: { id: number; name: string; massKg: number; diameterM: number };
	calibration: {
		status: 'calibrated' | 'uncalibrated';
		calibrationId: number | null;
		approvedAt: Date | null;
		/** Family and drag law of the model in force. */
		model: LauncherModel;
		/** Stored keys of the parameters the calibration fitted (eta0, dragCoefficient, …). */
		fitted: string[];
		parameters: CalibrationParameters;
		/** Fill pressures the calibration was fitted over; null for nominal values. */
		fittedPressureRangePa: { min: number; max: number } | null;
		note: string;
	};
	conditions: { airDensityKgM3: number; targetDistanceM: number };
	solution: {
		fillGaugePa: number;
		marginPa: number;
		elevationDeg: number;
		/** η at the fill (gas work); null for valve flow. */
		efficiency: number | null;
		muzzleSpeedMps: number;
		/** Speed where the flight meets the target plane. */
		targetSpeedMps: number;
		flightTimeS: number;
		/** Impact relative to the aim point: lateralM + to the right, heightM + up. */
		impact: { lateralM: number; heightM: number; heightAboveGroundM: number };
		outsideCalibratedPressures: boolean;
		/** dv/dp of the plan's speed (at the muzzle or the target) at the fill, m/s per Pa. */
		speedPerPressureMpsPerPa: number;
		/** dv0/dp of the muzzle speed at the fill, m/s per Pa. */
		muzzleSpeedPerPressureMpsPerPa: number;
		/** What the gauge's setting/reading error does to the plan's speed at this fill. */
		gauge: {
			/** σ_p, Pa, and where it came from (the request, the calibration's gauge SD, or 1 kPa). */
			sdPa: number;
			sdSource: 'input' | 'calibration' | 'default';
			/** σ_v = |dv/dp|·σ_p, m/s. */
			speedSdMps: number;
			/** P(|δv| ≤ tolerance) from the gauge error alone: 2Φ(tol/σ_v) − 1. */
			withinToleranceProbability: number;
			/** ±1.96 σ_v exceeds ±tolerance: the gauge alone puts more than 1 shot in 20 outside. */
			exceedsTolerance: boolean;
		};
	};
	trajectory: FlightPathPoint[];
	/** The scatter the chance was computed with: the pair's recent residuals (pooled within sessions). */
	spread: {
		speedSdMps: number | null;
		impactSdM: { x: number; y: number } | null;
		/** Circular error probable of that impact scatter about the predicted point. */
		cepM: number | null;
		sessions: number;
	};
	chance: {
		speed: Chance | null;
		impact: Chance | null;
		both: Chance | null;
		samples: number;
		seed: number;
		failedSamples: number;
		/** The gauge SD the samples drew from, Pa. */
		gaugeSdPa: number;
		/** True when drawn from the wide spread of an uncalibrated model (no approved calibration). */
		uncalibratedSpread: boolean;
	} | null;
	/** Why there is no chance figure (e.g. no history of the pair to estimate its scatter from). */
	chanceNote: string | null;
	warnings: string[];
}

export type SetupSheetResult =
	| { ok: true; sheet: SetupSheet }
	| { ok: false; code: SetupRefusalCode; field: string; message: string };

async function liveRow<T extends { deletedAt: Date | null }>(rows: Promise<T[]>, field: string, what: string, id: number): Promise<T> {
	const [row] = await rows;
	if (!row) throw new ReconcileError(field, `No ${what} with id ${id}.`, 404);
	if (row.deletedAt) throw new ReconcileError(field, `The ${what} “${(row as { name?: string }).name ?? id}” is deleted; restore it first.`);
	return row;
}

/** The setup sheet for the input; refusals (above the rating, no elevation…) come back as ok: false. */
export async function setupSheet(tx: Executor, input: SetupSheetInput, prefs: Prefs): Promise<SetupSheetResult> {
	const [plan, rig, projectile] = await Promise.all([
		liveRow(tx.select().from(testPlans).where(eq(testPlans.id, input.testPlanId)).limit(1), 'testPlanId', 'test plan', input.testPlanId),
		liveRow(tx.select().from(rigs).where(eq(rigs.id, input.rigId)).limit(1), 'rigId', 'rig', input.rigId),
		liveRow(tx.select().from(projectiles).where(eq(projectiles.id, input.projectileId)).limit(1), 'projectileId', 'projectile', input.projectileId)
	]);
	const inForce = await calibrationInForce(tx, rig.id, projectile.id);
	const q = (quantity: Parameters<typeof formatQuantity>[0], value: number | null | undefined, small = false) =>
		formatQuantity(quantity, value, prefs, { small });
	const targetDistanceM = input.targetDistanceM ?? plan.targetDistanceM;
	const toleranceMps = (plan.requiredSpeedMps * plan.speedTolerancePct) / 100;
	const wind = { xMps: input.windXMps, zMps: input.windZMps };
	const gauge = gaugeSdFor(inForce, input.gaugeSdPa);

	let airDensityKgM3: number;
	try {
		airDensityKgM3 = airDensity({ temperatureC: input.temperatureC, pressurePa: input.pressurePa, relativeHumidity: input.relativeHumidity });
	} catch (e) {
		if (e instanceof PhysicsInputError) throw new ReconcileError('temperatureC', `The air model cannot take these conditions: ${e.message}`);
		throw e;
	}

	const solution = solveSetup({
		calibration: inForce.model,
		rig: { reservoirM3: rig.reservoirM3, deadM3: rig.deadM3, boreDiameterM: rig.boreDiameterM, travelM: rig.travelM, ratedPressurePa: rig.ratedPressurePa },
		projectile: { massKg: projectile.massKg, diameterM: projectile.diameterM },
		plan: { speedAt: plan.speedAt, requiredSpeedMps: plan.requiredSpeedMps, targetDistanceM },
		range: {
			launchHeightM: input.launchHeightM,
			aimHeightM: input.aimHeightM,
			azimuthDeg: input.azimuthDeg,
			airDensityKgM3,
			ambientPa: input.pressurePa,
			temperatureC: input.temperatureC,
			wind
		}
	});
	if (!solution.ok) {
		const needed = `${q('speed', plan.requiredSpeedMps)} ${plan.speedAt === 'muzzle' ? 'at the muzzle' : 'at the target'}`;
		const rating = `${rig.name}’s rated working pressure of ${q('pressure', rig.ratedPressurePa)}`;
		const gives = solution.speedAtRatedMps === null ? '' : ` (the rating gives ${q('speed', solution.speedAtRatedMps)})`;
		const peak = solution.peak;
		switch (solution.code) {
			case 'beyond-curve-peak':
				return {
					ok: false,
					code: solution.code,
					field: 'testPlanId',
					message: `Refused: ${needed} is out of reach for ${rig.name} with this calibration. Its predicted speed rises to at most ${q('speed', peak?.speedMps)} at a fill of ${q('pressure', peak?.fillGaugePa)} and falls at higher fills, up to the rated ${q('pressure', rig.ratedPressurePa)}; choose a slower plan, a lighter projectile or another rig.`
				};
			case 'efficiency-out-of-range':
			case 'below-curve':
				return {
					ok: false,
					code: solution.code,
					field: 'testPlanId',
					message: `Refused: ${needed} is below what the calibration predicts for ${rig.name} at any fill it covers. ${solution.reason}`
				};
			case 'above-rated-pressure':
				return {
					ok: false,
					code: solution.code,
					field: 'testPlanId',
					message: `Refused: ${needed} needs more than ${rating}${gives}. Shotwright never sets a fill above the rating; choose a rig rated higher, a lighter projectile or a slower plan.`
				};
			case 'does-not-leave-barrel':
			case 'target-not-reached':
				return {
					ok: false,
					code: solution.code,
					field: 'testPlanId',
					message: `Refused: even at ${rating} the projectile ${solution.code === 'does-not-leave-barrel' ? 'would not leave the barrel' : `comes down before the target plane at ${q('length', targetDistanceM)}`}.`
				};
			case 'no-elevation':
				return { ok: false, code: solution.code, field: 'aimHeightM', message: `No elevation puts the shot on the aim point: ${solution.reason}` };
			default:
				return { ok: false, code: solution.code, field: 'testPlanId', message: `The model cannot solve this setup: ${solution.reason}` };
		}
	}

	const chance = await chanceOfMeetingPlanForSetup(tx, {
		rigId: rig.id,
		projectileId: projectile.id,
		testPlanId: plan.id,
		setup: {
			fillGaugePa: solution.fillGaugePa,
			elevationDeg: solution.elevationDeg,
			azimuthDeg: input.azimuthDeg,
			launchHeightM: input.launchHeightM,
			aimHeightM: input.aimHeightM,
			targetDistanceM,
			temperatureC: input.temperatureC,
			pressurePa: input.pressurePa,
			relativeHumidity: input.relativeHumidity,
			windXMps: input.windXMps,
			windZMps: input.windZMps
		},
		gaugeSdPa: gauge.gaugeSdPa,
		samples: input.samples,
		seed: input.seed
	});
	const dispersion = chance.dispersion;
	const impactSd = dispersion?.impactSdM ?? null;

	const p = solution.prediction;
	const fittedRange = inForce.uncalibrated ? null : inForce.model.fillPressureRangePa;
	const warnings: string[] = [];
	if (p.outsideCalibratedPressures && fittedRange)
		warnings.push(
			`The fill lies outside the pressures this calibration was fitted over (${q('pressure', fittedRange.min)} to ${q('pressure', fittedRange.max)}): the prediction is an extrapolation.`
		);
	if (solution.marginPa < SMALL_MARGIN_FRACTION * rig.ratedPressurePa)
		warnings.push(`The fill is within ${SMALL_MARGIN_FRACTION * 100} % of the rated working pressure (${q('pressure', rig.ratedPressurePa)}): check the relief valve setting.`);
	const judged = plan.speedAt === 'muzzle' ? 'muzzle speed' : 'speed at the target';
	const spread = gaugeSpread(solution.speedPerPressureMpsPerPa, gauge.gaugeSdPa, toleranceMps);
	if (spread.exceedsTolerance)
		warnings.push(
			`The gauge alone spreads the ${judged} beyond the plan’s tolerance: at this fill the ${judged} moves ${q('speed', solution.speedPerPressureMpsPerPa * 1000)} per kPa, so a gauge error of ${q('pressure', gauge.gaugeSdPa)} (1 SD) moves it by ${q('speed', spread.speedSdMps)} (1 SD), and by itself only ${(100 * spread.withinToleranceProbability).toFixed(0)} % of shots would be within ± ${q('speed', toleranceMps)}. Use a finer gauge or set the fill more carefully.`
		);
	if (chance.ok) for (const note of chance.chance.notes) if (!p.warnings.includes(note)) warnings.push(note);

	const parameters = inForce.model.parameters;
	return {
		ok: true,
		sheet: {
			plan: {
				id: plan.id,
				name: plan.name,
				speedAt: plan.speedAt,
				requiredSpeedMps: plan.requiredSpeedMps,
				speedTolerancePct: plan.speedTolerancePct,
				toleranceMps,
				impactToleranceM: plan.impactToleranceM,
				targetDistanceM: plan.targetDistanceM
			},
			rig: { id: rig.id, name: rig.name, ratedPressurePa: rig.ratedPressurePa },
			projectile: { id: projectile.id, name: projectile.name, massKg: projectile.massKg, diameterM: projectile.diameterM },
			calibration: {
				status: inForce.uncalibrated ? 'uncalibrated' : 'calibrated',
				calibrationId: inForce.calibrationId,
				approvedAt: inForce.approvedAt,
				model: modelOf(inForce.model),
				fitted: inForce.model.fitted.map((n) => STORED_KEY[n]),
				parameters: { ...parameters },
				fittedPressureRangePa: fittedRange,
				note: inForce.uncalibrated
					? `No calibration of ${rig.name} with ${projectile.name} is approved yet; the rig’s nominal efficiency ${parameters.efficiency} and the projectile’s nominal drag coefficient ${parameters.dragCoefficient} are used.`
					: `Calibration #${inForce.calibrationId}, approved for ${rig.name} with ${projectile.name}.`
			},
			conditions: { airDensityKgM3, targetDistanceM },
			solution: {
				fillGaugePa: solution.fillGaugePa,
				marginPa: solution.marginPa,
				elevationDeg: solution.elevationDeg,
				efficiency: p.efficiency,
				muzzleSpeedMps: p.muzzleSpeedMps,
				targetSpeedMps: p.impact.speedMps,
				flightTimeS: p.impact.timeS,
				impact: { lateralM: p.impact.lateralM, heightM: p.impact.heightM, heightAboveGroundM: p.impact.heightAboveGroundM },
				outsideCalibratedPressures: p.outsideCalibratedPressures,
				speedPerPressureMpsPerPa: solution.speedPerPressureMpsPerPa,
				muzzleSpeedPerPressureMpsPerPa: solution.muzzleSpeedPerPressureMpsPerPa,
				gauge: {
					sdPa: gauge.gaugeSdPa,
					sdSource: gauge.source,
					speedSdMps: spread.speedSdMps,
					withinToleranceProbability: spread.withinToleranceProbability,
					exceedsTolerance: spread.exceedsTolerance
				}
			},
			trajectory: solution.trajectory,
			spread: {
				speedSdMps: dispersion?.speedSdMps ?? null,
				impactSdM: impactSd,
				cepM: impactSd && impactSd.x > 0 && impactSd.y > 0 ? exactCep(impactSd.x, impactSd.y) : null,
				sessions: dispersion?.sessionIds.length ?? 0
			},
			chance: chance.ok
				? {
						speed: chance.chance.speed,
						impact: chance.chance.impact,
						both: chance.chance.both,
						samples: chance.chance.samples,
						seed: chance.chance.seed,
						failedSamples: chance.chance.failedSamples,
						gaugeSdPa: chance.chance.gaugeSdPa,
						uncalibratedSpread: chance.uncalibrated
					}
				: null,
			chanceNote: chance.ok ? null : chance.reason,
			warnings
		}
	};
}

/**
 * What the setup page offers: live plans, rigs and projectiles, and for each plan the rig and
 * projectile of its most recent session (the sheet starts from them).
 */
export async function setupChoices(tx: Executor) {
	const [planRows, rigRows, projectileRows, recent] = await Promise.all([
		tx
			.select({
				id: testPlans.id,
				name: testPlans.name,
				speedAt: testPlans.speedAt,
				requiredSpeedMps: testPlans.requiredSpeedMps,
				speedTolerancePct: testPlans.speedTolerancePct,
				impactToleranceM: testPlans.impactToleranceM,
				targetDistanceM: testPlans.targetDistanceM
			})
			.from(testPlans)
			.where(isNull(testPlans.deletedAt))
			.orderBy(asc(testPlans.name)),
		tx.select({ id: rigs.id, name: rigs.name, ratedPressurePa: rigs.ratedPressurePa }).from(rigs).where(isNull(rigs.deletedAt)).orderBy(asc(rigs.name)),
		tx.select({ id: projectiles.id, name: projectiles.name }).from(projectiles).where(isNull(projectiles.deletedAt)).orderBy(asc(projectiles.name)),
		tx
			.select({ planId: rangeSessions.testPlanId, rigId: rangeSessions.rigId, projectileId: rangeSessions.projectileId })
			.from(rangeSessions)
			.where(and(isNotNull(rangeSessions.testPlanId), isNull(rangeSessions.deletedAt)))
			.orderBy(desc(rangeSessions.startedAt), desc(rangeSessions.id))
	]);
	const lastUse: Record<number, { rigId: number; projectileId: number }> = {};
	for (const r of recent) if (r.planId !== null && !(r.planId in lastUse)) lastUse[r.planId] = { rigId: r.rigId, projectileId: r.projectileId };
	return { plans: planRows, rigs: rigRows, projectiles: projectileRows, lastUse };
}
