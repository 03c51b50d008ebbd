// A setup sheet request (POST /api/v1/setup-sheet): a test plan, a rig and a projectile from the
// registry, and the geometry and conditions of the range. Bounds and units are those of a range
// session (schemas/range.ts), so a sheet accepts exactly what a session would. The fill pressure
// and elevation are not inputs: the sheet solves for them.
import { z } from 'zod';
import { rangeSessionInput } from './range';

const session = rangeSessionInput.shape;

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
		fitted: z.array(z.string()).meta({ description: 'Parameters the calibration fitted (eta0, eta1, lossN, dragCoefficient, elevationBiasDeg).' }),
		parameters: z.object({
			efficiency: z.number(),
			pressureSlope: z.number(),
			pRefPa: z.number().meta({ unit: 'Pa' }),
			lossN: z.number().meta({ unit: 'N' }),
			dragCoefficient: z.number(),
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
		efficiency: z.number(),
		muzzleSpeedMps: mps,
		targetSpeedMps: mps,
		flightTimeS: z.number().meta({ unit: 's' }),
		impact: z.object({ lateralM: metres, heightM: metres, heightAboveGroundM: metres }),
		outsideCalibratedPressures: z.boolean()
	}),
	trajectory: z.array(z.object({ timeS: z.number(), downrangeM: metres, heightM: metres, lateralM: metres, speedMps: mps })),
	spread: z.object({
		speedSdMps: mps.nullable(),
		impactSdM: z.object({ x: metres, y: metres }).nullable(),
		cepM: metres.nullable(),
		sessions: z.int()
	}),
	chance: z
		.object({ speed: chance, impact: chance, both: chance, samples: z.int(), seed: z.int(), failedSamples: z.int() })
		.nullable(),
	chanceNote: z.string().nullable(),
	warnings: z.array(z.string())
});
