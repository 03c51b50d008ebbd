// Solving a setup sheet (shared/design/physics.md §4): the fill pressure that gives the plan's
// speed (at the muzzle or at the target plane) and the elevation that puts the shot on the aim
// point, under a calibration of either family and either drag law (or the nominal values). Pure:
// no database, so it is unit-tested on its own; setup-sheet/index.ts feeds it from the registry.
//
// The two unknowns are coupled when the speed is judged at the target: the speed at the plane
// depends a little on the path (hence on the elevation), and the elevation on the muzzle speed.
// Fixed-point iteration: solve the fill pressure at the current elevation (solveFillPressure: a
// scan of [0, rated] and Brent for the LOWEST pressure, the curve's peak when none reaches the
// speed), then the low-arc elevation for the resulting muzzle speed under the calibration's drag
// law (solveCalibratedElevation), until the elevation stops moving. The coupling is weak (a degree
// of elevation changes the path length by a fraction of a per mille), so two or three rounds
// settle it; a speed at the muzzle needs one. The calibrated elevation bias δθ is added to the set
// elevation in every flight (as predictShot does), so the sheet gives the elevation to set on the
// rig's scale.
import {
	flightPath,
	modelOf,
	predictShot,
	solveCalibratedElevation,
	solveFillPressure,
	sutherlandViscosity,
	temperatureKOf,
	type CurvePeak,
	type FillPressureFailure,
	type FlightPathPoint,
	type LauncherCalibration,
	type LauncherRig,
	type PlannedShot,
	type Projectile,
	type ShotPrediction
} from '$lib/physics';

/** Rounds of the fill/elevation iteration before giving up. */
const MAX_ROUNDS = 8;
/** The elevation has settled when a round moves it by less than this, degrees (≈ 2 µm at 100 m). */
const ELEVATION_SETTLED_DEG = 1e-6;
/** Points of the trajectory drawn on the sheet. */
const TRAJECTORY_SAMPLES = 80;

export interface SetupProblem {
	calibration: LauncherCalibration;
	rig: LauncherRig & { ratedPressurePa: number };
	projectile: Projectile;
	plan: { speedAt: 'muzzle' | 'target'; requiredSpeedMps: number; targetDistanceM: number };
	range: {
		launchHeightM: number;
		/** Height of the aim point above the ground at the target plane, m. */
		aimHeightM: number;
		azimuthDeg: number;
		airDensityKgM3: number;
		/** Barometric pressure, Pa. */
		ambientPa: number;
		/** Air temperature, °C (valve-flow gas temperature, sphere-law viscosity); default 15 °C. */
		temperatureC?: number;
		wind: { xMps: number; zMps: number };
	};
}

export type SetupRefusalCode = FillPressureFailure | 'no-elevation' | 'not-settled' | 'not-predicted';

export type SetupSolution =
	| {
			ok: true;
			fillGaugePa: number;
			/** Rated working pressure minus the fill, Pa. */
			marginPa: number;
			/** Elevation to set on the rig, degrees (the calibrated bias is not included). */
			elevationDeg: number;
			/** The prediction at the solved fill pressure and elevation (predictShot). */
			prediction: ShotPrediction;
			/** dv/dp of the plan's speed (muzzle or target) at the fill, m/s per Pa. */
			speedPerPressureMpsPerPa: number;
			/** dv0/dp of the muzzle speed at the fill, m/s per Pa. */
			muzzleSpeedPerPressureMpsPerPa: number;
			trajectory: FlightPathPoint[];
			rounds: number;
	  }
	| {
			ok: false;
			code: SetupRefusalCode;
			/** The solver's own words (SI units); the sheet rewords the common refusals in the user's units. */
			reason: string;
			/** The speed the plan judges (muzzle or target) at the rated pressure, when it can be predicted. */
			speedAtRatedMps: number | null;
			/** The curve's highest judged speed over [0, rated] and where, when it was located. */
			peak: CurvePeak | null;
	  };

function plannedShot(p: SetupProblem, elevationDeg: number): PlannedShot {
	return {
		rig: p.rig,
		projectile: p.projectile,
		session: {
			targetDistanceM: p.plan.targetDistanceM,
			elevationDeg,
			azimuthDeg: p.range.azimuthDeg,
			launchHeightM: p.range.launchHeightM,
			aimHeightM: p.range.aimHeightM,
			airDensityKgM3: p.range.airDensityKgM3,
			ambientPa: p.range.ambientPa,
			temperatureC: p.range.temperatureC,
			wind: p.range.wind
		}
	};
}

function predictAt(p: SetupProblem, fillGaugePa: number, elevationDeg: number) {
	return predictShot(p.calibration, { ...plannedShot(p, elevationDeg), fillGaugePa });
}

/** The judged speed at the rated pressure, to say how far short the rig falls. */
function speedAtRated(p: SetupProblem, elevationDeg: number): number | null {
	try {
		const r = predictAt(p, p.rig.ratedPressurePa, elevationDeg);
		if (!r.ok) return null;
		if (p.plan.speedAt === 'muzzle') return r.muzzleSpeedMps;
		return r.impact.reached ? r.impact.speedMps : null;
	} catch {
		return null;
	}
}

/** Solve the fill pressure and elevation for the plan; refuse anything above the rated pressure. */
export function solveSetup(p: SetupProblem): SetupSolution {
	let elevationDeg = 0;
	let settledAt = 0;
	let fillGaugePa = NaN;
	let perPressure = { judged: NaN, muzzle: NaN };
	for (let round = 1; round <= MAX_ROUNDS; round++) {
		const fill = solveFillPressure({
			calibration: p.calibration,
			shot: plannedShot(p, elevationDeg),
			at: p.plan.speedAt,
			requiredSpeedMps: p.plan.requiredSpeedMps,
			ratedPressurePa: p.rig.ratedPressurePa
		});
		if (!fill.ok)
			return { ok: false, code: fill.code, reason: fill.reason, speedAtRatedMps: speedAtRated(p, elevationDeg), peak: fill.peak };
		fillGaugePa = fill.fillGaugePa;
		perPressure = { judged: fill.speedPerPressureMpsPerPa, muzzle: fill.muzzleSpeedPerPressureMpsPerPa };
		const aim = solveCalibratedElevation(p.calibration, plannedShot(p, 0), fill.muzzleSpeedMps);
		if (!aim.ok) return { ok: false, code: 'no-elevation', reason: aim.reason, speedAtRatedMps: null, peak: null };
		const moved = Math.abs(aim.elevationDeg - elevationDeg);
		elevationDeg = aim.elevationDeg;
		if (p.plan.speedAt === 'muzzle' || moved < ELEVATION_SETTLED_DEG) {
			settledAt = round;
			break;
		}
	}
	if (settledAt === 0)
		return {
			ok: false,
			code: 'not-settled',
			reason: `The fill pressure and elevation did not settle in ${MAX_ROUNDS} rounds.`,
			speedAtRatedMps: null,
			peak: null
		};

	const prediction = predictAt(p, fillGaugePa, elevationDeg);
	if (!prediction.ok) return { ok: false, code: 'not-predicted', reason: prediction.reason, speedAtRatedMps: null, peak: null };
	const c = p.calibration.parameters;
	const shot = plannedShot(p, elevationDeg);
	const path = flightPath(
		{
			speedMps: prediction.muzzleSpeedMps,
			elevationDeg: elevationDeg + c.elevationBiasDeg,
			azimuthDeg: p.range.azimuthDeg,
			launchHeightM: p.range.launchHeightM,
			targetDistanceM: p.plan.targetDistanceM,
			massKg: p.projectile.massKg,
			diameterM: p.projectile.diameterM,
			dragCoefficient: c.dragCoefficient,
			airDensityKgM3: p.range.airDensityKgM3,
			wind: p.range.wind,
			...(modelOf(p.calibration).drag === 'sphere'
				? { dragLaw: { kind: 'sphere' as const, dynamicViscosityPaS: sutherlandViscosity(temperatureKOf(shot.session)) } }
				: {})
		},
		{ samples: TRAJECTORY_SAMPLES }
	);
	return {
		ok: true,
		fillGaugePa,
		marginPa: p.rig.ratedPressurePa - fillGaugePa,
		elevationDeg,
		prediction,
		speedPerPressureMpsPerPa: perPressure.judged,
		muzzleSpeedPerPressureMpsPerPa: perPressure.muzzle,
		trajectory: path.points,
		rounds: settledAt
	};
}
