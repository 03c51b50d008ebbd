// A setup sheet request (POST /api/v1/setup-sheet): a test plan, a rig and a projectile from the
// registry, and the geometry and conditions of the range. Bounds and units are those of a range
// session (schemas/range.ts), so a sheet accepts exactly what a session would. The fill pressure
// and elevation are not inputs: the sheet solves for them.
import { z } from 'zod';
import { DRAG_LAWS, LAUNCHER_FAMILIES } from '$lib/physics/launcher/families';
import { rangeSessionInput } from './range';

const session = rangeSessionInput.shape;

/** Gauge reading SD σ_p, Pa: bounds (default: the calibration's gauge SD, else 1 kPa). */
export const SETUP_SHEET_GAUGE_SD_PA = { min: 0, max: 100_000 } as const;

/** Monte Carlo samples of the chance of meeting the plan: default and bounds. */
export const SETUP_SHEET_SAMPLES = { default: 4000, min: 500, max: 100_000 } as const;

export const setupSheetInput = z.object({
	testPlanId: z
		.number({ error: 'Test plan must be chosen.' })
		.int('Test plan must be chosen.')
		.positive('Test plan must be chosen.')
		.meta({ title: 'Test plan id' }),
	rigId: session.rigId,
	projectileId: session.projectileId,
	/** Default: the plan's target distance. */
	targetDistanceM: session.targetDistanceM.optional(),
	azimuthDeg: session.azimuthDeg,
	launchHeightM: session.launchHeightM,
	aimHeightM: session.aimHeightM,
	temperatureC: session.temperatureC,
	pressurePa: session.pressurePa,
	relativeHumidity: session.relativeHumidity,
	windXMps: session.windXMps,
	windZMps: session.windZMps,
	gaugeSdPa: z
		.number({ error: 'Gauge reading SD must be a number.' })
		.min(SETUP_SHEET_GAUGE_SD_PA.min, 'Gauge reading SD must not be negative.')
		.max(SETUP_SHEET_GAUGE_SD_PA.max, `Gauge reading SD must be at most ${SETUP_SHEET_GAUGE_SD_PA.max} Pa.`)
		.optional()
		.meta({
			title: 'Gauge reading SD',
			unit: 'Pa',
			description:
				'SD of setting and reading the fill gauge. Default: the gauge SD the approved calibration was fitted with, else 1000 Pa.'
		}),
	samples: z
		.number({ error: 'Samples must be a number.' })
		.int('Samples must be a whole number.')
		.min(SETUP_SHEET_SAMPLES.min, `Samples must be at least ${SETUP_SHEET_SAMPLES.min}.`)
		.max(SETUP_SHEET_SAMPLES.max, `Samples must be at most ${SETUP_SHEET_SAMPLES.max}.`)
		.default(SETUP_SHEET_SAMPLES.default)
		.meta({ title: 'Monte Carlo samples' }),
	seed: z.number({ error: 'Seed must be a number.' }).int('Seed must be a whole number.').min(0).max(2 ** 32 - 1).optional().meta({ title: 'Monte Carlo seed' })
});
export type SetupSheetInput = z.infer<typeof setupSheetInput>;

// What the sheet answers (for the OpenAPI document; the server builds it in server/setup-sheet).
const chance = z
	.object({ probability: z.number().min(0).max(1), standardError: z.number().meta({ description: 'Monte Carlo standard error √(p(1 − p)/N).' }) })
	.nullable();
const mps = z.number().meta({ unit: 'm/s' });
const metres = z.number().meta({ unit: 'm' });

export const setupSheetOutput = z.object({
	plan: z.object({
		id: z.int(),
		name: z.string(),
		speedAt: z.enum(['muzzle', 'target']),
		requiredSpeedMps: mps,
		speedTolerancePct: z.number().meta({ unit: '%' }),
		toleranceMps: mps,
		impactToleranceM: metres,
		targetDistanceM: metres
	}),
	rig: z.object({ id: z.int(), name: z.string(), ratedPressurePa: z.number().meta({ unit: 'Pa' }) }),
	projectile: z.object({ id: z.int(), name: z.string(), massKg: z.number().meta({ unit: 'kg' }), diameterM: metres }),
	calibration: z.object({
		status: z.enum(['calibrated', 'uncalibrated']),
		calibrationId: z.int().nullable(),
		approvedAt: z.iso.datetime().nullable(),
		model: z.object({ family: z.enum(LAUNCHER_FAMILIES), drag: z.enum(DRAG_LAWS) }),
		fitted: z.array(z.string()).meta({
			description:
				'Parameters the calibration fitted (eta0, eta1, energyOffsetJ, valveAreaM2, openingTimeS, frictionN, dragCoefficient, elevationBiasDeg).'
		}),
		parameters: z.object({
			efficiency: z.number().meta({ description: 'η0 (gas work).' }),
			pressureSlope: z.number().meta({ description: 'η1, dimensionless (gas work).' }),
			pRefPa: z.number().meta({ unit: 'Pa' }),
			energyOffsetJ: z.number().meta({ unit: 'J', description: 'Energy term E (gas work; either sign).' }),
			valveAreaM2: z.number().meta({ unit: 'm²', description: 'Effective valve area C·A_v (valve flow).' }),
			openingTimeS: z.number().meta({ unit: 's', description: 'Valve opening time τ (valve flow).' }),
			frictionN: z.number().meta({ unit: 'N', description: 'Friction F (valve flow).' }),
			dragCoefficient: z.number().meta({ description: 'C_D, or the factor on the sphere correlation under the sphere law.' }),
			elevationBiasDeg: z.number().meta({ unit: '°' })
		}),
		fittedPressureRangePa: z.object({ min: z.number(), max: z.number() }).nullable().meta({ unit: 'Pa' }),
		note: z.string()
	}),
	conditions: z.object({ airDensityKgM3: z.number().meta({ unit: 'kg/m³' }), targetDistanceM: metres }),
	solution: z.object({
		fillGaugePa: z.number().meta({ unit: 'Pa', description: 'Fill pressure to set on the gauge; never above the rated working pressure.' }),
		marginPa: z.number().meta({ unit: 'Pa', description: 'Rated working pressure minus the fill.' }),
		elevationDeg: z.number().meta({ unit: '°', description: 'Elevation to set (the calibrated bias is applied by the model).' }),
		efficiency: z.number().nullable().meta({ description: 'η at the fill (gas work); null for valve flow.' }),
		muzzleSpeedMps: mps,
		targetSpeedMps: mps,
		flightTimeS: z.number().meta({ unit: 's' }),
		impact: z.object({ lateralM: metres, heightM: metres, heightAboveGroundM: metres }),
		outsideCalibratedPressures: z.boolean(),
		speedPerPressureMpsPerPa: z
			.number()
			.meta({ unit: 'm/s per Pa', description: "dv/dp of the plan's speed (at the muzzle or the target) at the fill." }),
		muzzleSpeedPerPressureMpsPerPa: z.number().meta({ unit: 'm/s per Pa', description: 'dv0/dp of the muzzle speed at the fill.' }),
		gauge: z.object({
			sdPa: z.number().meta({ unit: 'Pa', description: 'σ_p: SD of setting and reading the fill gauge.' }),
			sdSource: z.enum(['input', 'calibration', 'default']),
			speedSdMps: z.number().meta({ unit: 'm/s', description: "σ_v = |dv/dp|·σ_p: the plan's speed spread by the gauge error alone." }),
			withinToleranceProbability: z
				.number()
				.min(0)
				.max(1)
				.meta({ description: 'P(|δv| ≤ tolerance) from the gauge error alone, 2Φ(tol/σ_v) − 1.' }),
			exceedsTolerance: z.boolean().meta({ description: 'True when ±1.96 σ_v does not fit in ± the tolerance.' })
		})
	}),
	trajectory: z.array(z.object({ timeS: z.number(), downrangeM: metres, heightM: metres, lateralM: metres, speedMps: mps })),
	spread: z.object({
		speedSdMps: mps.nullable(),
		impactSdM: z.object({ x: metres, y: metres }).nullable(),
		cepM: metres.nullable(),
		sessions: z.int()
	}),
	chance: z
		.object({
			speed: chance,
			impact: chance,
			both: chance,
			samples: z.int(),
			seed: z.int(),
			failedSamples: z.int(),
			gaugeSdPa: z.number().meta({ unit: 'Pa', description: 'Gauge SD the samples drew the fill error from.' }),
			uncalibratedSpread: z.boolean().meta({ description: 'Drawn from the wide spread of an uncalibrated model.' })
		})
		.nullable(),
	chanceNote: z.string().nullable(),
	warnings: z.array(z.string())
});
