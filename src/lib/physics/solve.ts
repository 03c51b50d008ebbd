// Solving a setup (shared/design/physics.md §4): the fill pressure that gives a required speed at
// the muzzle or at the target plane under a calibration (either family, either drag law), never
// above the rig's rated working pressure, with the sensitivity dv/dp at the answer; and the
// elevation that puts the shot at an aim height on the target plane (the low arc).
//
// The speed–pressure curve of a calibration need not be monotone: with η1 < 0 the gas-work curve
// rises, peaks and falls; a choking valve flattens the valve-flow curve; at low pressure the
// projectile stays in the barrel (no prediction at all). So the fill pressure is found by a scan
// of the whole window [0, rated] on a grid fine enough to see a hump (PRESSURE_SCAN_INTERVALS),
// then a bracketed root find (Brent 1973, ./roots.ts) on the FIRST grid interval where the speed
// crosses the required one from below: the answer is the LOWEST pressure that reaches it. If none
// does, the curve's highest point is located (golden section, Kiefer 1953, on the grid points
// either side of the best one) and reported, so a refusal always says what the rig can do.
//
// The elevation is found the same way: a scan up from −90° for the first elevation that is high
// enough, then Brent (the low arc).

import { errorFunction } from 'simple-statistics';
import { PhysicsInputError, requireInRange, requireNonNegative, requirePositive } from './errors';
import { flyToPlane, type FlightInput, type FlightOptions, type FlightResult } from './flight/driver';
import { validateLauncher, type EfficiencyModel, type LauncherInput } from './internal';
import {
	calibratedMuzzleSpeed,
	efficiencyAtPressure,
	flyUnder,
	modelOf,
	muzzleWithDerivatives,
	neutralParameters,
	predictShot,
	type LauncherCalibration,
	type ShotSetup
} from './launcher/model';
import { brentRoot, goldenSectionMaximum } from './roots';
import { fromSI } from './units';

/**
 * Intervals of the scan over [0, rated pressure]. 96 intervals (≈ 1 % of the window each) resolve
 * a hump of the gas-work curve with η1 < 0 (its width is a sizeable fraction of p_ref) and the
 * threshold where the projectile first leaves the barrel; a hump narrower than a grid step is
 * still found by the golden-section search around the best grid point.
 */
const PRESSURE_SCAN_INTERVALS = 96;
/** Absolute tolerance of the fill pressure, Pa: Brent to machine precision, cheap on this curve. */
const PRESSURE_TOLERANCE_PA = 0;
/** Tolerance of the peak's location, Pa (a hundredth of a pascal; the speed is flat there). */
const PEAK_TOLERANCE_PA = 1e-2;
/**
 * A Brent result counts as a root when the speed there is within this fraction of the required
 * one; otherwise the bracket held a jump (a prediction that starts at a speed above the required
 * one: η entering (0, 1], a shot that just reaches the target plane), not a crossing.
 */
const ROOT_ACCEPT_RELATIVE = 1e-7;
/** Relative step of the central difference of the speed in the fill pressure (of P0 = p + p_a). */
const PRESSURE_STEP_RELATIVE = 1e-4;
/** Relative step of the central difference ∂v_target/∂v_muzzle. */
const SPEED_STEP_RELATIVE = 1e-4;
/** Elevation scan step, degrees: fine enough not to step over the hump of a short lob. */
const ELEVATION_SCAN_STEP_DEG = 2.5;
/** Absolute tolerance of the elevation, degrees (1e-9° moves a 100 m shot by 2 µm). */
const ELEVATION_TOLERANCE_DEG = 1e-9;
/** Gauge reading SD when none is known, Pa (1 kPa: a 0.25 %-of-span gauge of 4 bar). */
export const DEFAULT_GAUGE_SD_PA = 1000;
/**
 * Two-sided 95 % quantile of the normal distribution: the gauge error alone "spreads the speed
 * beyond the tolerance" when ±1.96 σ_v does not fit inside ±tolerance, i.e. it alone would put
 * more than one shot in twenty outside.
 */
const GAUGE_COVERAGE_Z = 1.959963984540054;

// ---------------------------------------------------------------------------------------------
// Fill pressure.

/** A planned shot without its fill pressure: rig, projectile and range (set elevation). */
export type PlannedShot = Omit<ShotSetup, 'fillGaugePa'>;

/**
 * Fill pressure for a required speed under a calibration. `at: 'muzzle'` judges the muzzle speed;
 * `at: 'target'` the ground speed where the flight (at the session's set elevation plus the
 * calibrated δθ, under the calibration's drag law) meets the target plane. Gauge pressures in Pa;
 * `ratedPressurePa` is the rig's rated (maximum allowable) working pressure: no answer exceeds it.
 */
export interface FillPressureRequest {
	calibration: LauncherCalibration;
	shot: PlannedShot;
	at: 'muzzle' | 'target';
	requiredSpeedMps: number;
	ratedPressurePa: number;
}

/** The launcher as muzzleSpeed takes it, with a constant η or an η(p) = η0 + η1 (p − p_ref)/p_ref. */
export type LauncherSetup = Omit<LauncherInput, 'efficiency'> & {
	efficiency: number | (EfficiencyModel & { fittedRangePa?: { minPa: number; maxPa: number } });
};

/** The shot downrange as flyToPlane takes it, less what the launcher decides (speed, mass). */
export type ShotConditions = Omit<FlightInput, 'speedMps' | 'massKg'>;

/**
 * The same question for a plain gas-work launcher (muzzleSpeed's input, constant η or η(p)) and,
 * at the target, a flyToPlane shot: converted to a calibration and solved the same way.
 */
export type LauncherFillPressureRequest = LauncherSetup & {
	requiredSpeedMps: number;
	ratedPressurePa: number;
} & ({ at: 'muzzle' } | { at: 'target'; shot: ShotConditions });

export type FillPressureFailure =
	/** The curve still rises at the rating: the speed needs more than the rated pressure. */
	| 'above-rated-pressure'
	/** The curve peaks inside the window below the required speed: no pressure reaches it. */
	| 'beyond-curve-peak'
	| 'does-not-leave-barrel'
	| 'target-not-reached'
	| 'efficiency-out-of-range'
	/** The curve starts above the required speed: it would need a lower pressure than the model covers. */
	| 'below-curve';

/** The highest judged speed of the curve over [0, rated], and where. */
export interface CurvePeak {
	fillGaugePa: number;
	speedMps: number;
}

export interface FillPressureSolution {
	ok: true;
	fillGaugePa: number;
	/** The judged speed at the answer (muzzle or target), m/s. */
	speedMps: number;
	muzzleSpeedMps: number;
	/** η at the answer (gas work), null for valve flow. */
	efficiency: number | null;
	/** dv/dp of the judged speed at the answer, m/s per Pa of fill (≥ 0: the lowest root is on a rising flank). */
	speedPerPressureMpsPerPa: number;
	/** dv0/dp of the muzzle speed at the answer, m/s per Pa. */
	muzzleSpeedPerPressureMpsPerPa: number;
	/** Rated working pressure minus the answer, Pa. */
	marginPa: number;
	/** The flight at the answer (at: 'target' only). */
	flight?: FlightResult;
	/** E.g. the answer lies outside the pressures the calibration was fitted over. */
	warnings: string[];
}

export type FillPressureResult =
	| FillPressureSolution
	| {
			ok: false;
			code: FillPressureFailure;
			reason: string;
			/** The curve's highest speed over the window and its pressure; null when nothing can be predicted. */
			peak: CurvePeak | null;
	  };

const bar = (pa: number) => `${fromSI('pressure', 'bar', pa).toFixed(3)} bar`;
const mps = (v: number) => `${v.toFixed(3)} m/s`;

/** Why a point of the curve has no judged speed. */
type Miss = 'barrel' | 'efficiency' | 'short';

interface Point {
	pressurePa: number;
	/** Judged speed, or null with the reason. */
	speedMps: number | null;
	muzzleSpeedMps: number | null;
	efficiency: number | null;
	miss: Miss | null;
	flight?: FlightResult;
}

function evaluator(req: FillPressureRequest): (fillGaugePa: number) => Point {
	const { calibration, shot } = req;
	const model = modelOf(calibration);
	const p = calibration.parameters;
	return (fillGaugePa) => {
		const setup: ShotSetup = { ...shot, fillGaugePa };
		const m = calibratedMuzzleSpeed(model, p, setup, fillGaugePa);
		if (!m.ok) {
			const efficiency = model.family === 'gas-work' ? efficiencyAtPressure(p, fillGaugePa) : null;
			const miss: Miss = efficiency !== null && !(efficiency > 0 && efficiency <= 1) ? 'efficiency' : 'barrel';
			return { pressurePa: fillGaugePa, speedMps: null, muzzleSpeedMps: null, efficiency, miss };
		}
		if (req.at === 'muzzle')
			return { pressurePa: fillGaugePa, speedMps: m.speedMps, muzzleSpeedMps: m.speedMps, efficiency: m.efficiency, miss: null };
		const flight = flyUnder(
			model.drag,
			setup,
			m.speedMps,
			p.dragCoefficient,
			shot.session.elevationDeg + p.elevationBiasDeg,
			shot.session.targetDistanceM
		);
		return {
			pressurePa: fillGaugePa,
			speedMps: flight.reached ? flight.speedMps : null,
			muzzleSpeedMps: m.speedMps,
			efficiency: m.efficiency,
			miss: flight.reached ? null : 'short',
			flight
		};
	};
}

/** A plain launcher request as a calibration request (gas work, constant C_D). */
function calibrationRequest(req: LauncherFillPressureRequest): FillPressureRequest {
	const curve = typeof req.efficiency === 'number' ? { eta0: req.efficiency } : req.efficiency;
	validateLauncher({ ...req, efficiency: typeof req.efficiency === 'number' ? req.efficiency : 1 });
	requireInRange(curve.eta0, 'eta0', { min: 0, max: 1, minExclusive: true });
	const pRefPa = curve.eta1 ? requirePositive(curve.pRefPa ?? Number.NaN, 'pRefPa') : (curve.pRefPa ?? 1);
	const flight = req.at === 'target' ? req.shot : null;
	const range = typeof req.efficiency === 'number' ? undefined : req.efficiency.fittedRangePa;
	return {
		calibration: {
			model: { family: 'gas-work', drag: 'constant' },
			parameters: {
				...neutralParameters(pRefPa),
				efficiency: curve.eta0,
				pressureSlope: curve.eta1 ?? 0,
				energyOffsetJ: (req.lossN ?? 0) * req.travelM,
				dragCoefficient: flight?.dragCoefficient ?? 0
			},
			fitted: [],
			identifiable: [],
			covariance: [],
			fillPressureRangePa: range ? { min: range.minPa, max: range.maxPa } : { min: 0, max: Infinity }
		},
		shot: {
			rig: {
				reservoirM3: req.reservoirM3,
				deadM3: req.deadM3,
				boreDiameterM: req.boreDiameterM,
				travelM: req.travelM,
				polytropicIndex: req.polytropicIndex,
				gasInertia: req.gasInertia
			},
			projectile: { massKg: req.massKg, diameterM: flight?.diameterM ?? req.boreDiameterM },
			session: {
				// At the muzzle the flight is never flown; any valid range will do.
				targetDistanceM: flight?.targetDistanceM ?? 1,
				elevationDeg: flight?.elevationDeg ?? 0,
				azimuthDeg: flight?.azimuthDeg,
				launchHeightM: flight?.launchHeightM ?? 1,
				aimHeightM: 0,
				airDensityKgM3: flight?.airDensityKgM3 ?? 0,
				ambientPa: req.ambientPa,
				wind: flight?.wind,
				gravityMps2: flight?.gravityMps2
			}
		},
		at: req.at,
		requiredSpeedMps: req.requiredSpeedMps,
		ratedPressurePa: req.ratedPressurePa
	};
}

/**
 * The lowest gauge fill pressure in [0, rated] at which the calibration gives the required speed
 * (see FillPressureRequest), with dv/dp there; or a refusal that says why and what the curve's
 * highest speed is. Invalid input throws PhysicsInputError.
 */
export function solveFillPressure(request: FillPressureRequest | LauncherFillPressureRequest): FillPressureResult {
	const req = 'calibration' in request ? request : calibrationRequest(request);
	const required = requirePositive(req.requiredSpeedMps, 'requiredSpeedMps');
	const ratedPa = requirePositive(req.ratedPressurePa, 'ratedPressurePa');
	requirePositive(req.shot.projectile.massKg, 'massKg');
	const evaluate = evaluator(req);
	// A bad geometry throws PhysicsInputError at the first point of the scan.
	const grid: Point[] = [];
	for (let i = 0; i <= PRESSURE_SCAN_INTERVALS; i++) grid.push(evaluate((ratedPa * i) / PRESSURE_SCAN_INTERVALS));
	const gap = (p: number) => {
		const s = evaluate(p).speedMps;
		return (s ?? 0) - required;
	};

	// A jump over the required speed where a prediction starts: remembered to explain a refusal.
	let jump: { lower: Point; upper: Point } | null = null;
	if (grid[0].speedMps !== null && grid[0].speedMps >= required) jump = { lower: grid[0], upper: grid[0] };
	for (let i = 1; i <= PRESSURE_SCAN_INTERVALS; i++) {
		const lower = grid[i - 1];
		const upper = grid[i];
		if (upper.speedMps === null || upper.speedMps < required) continue;
		if (lower.speedMps !== null && lower.speedMps >= required) continue;
		const root = brentRoot(gap, lower.pressurePa, upper.pressurePa, { tolerance: PRESSURE_TOLERANCE_PA });
		const at = evaluate(root.root);
		if (at.speedMps !== null && Math.abs(at.speedMps - required) <= ROOT_ACCEPT_RELATIVE * required)
			return solution(req, ratedPa, at);
		// Brent closed on a discontinuity, not a crossing: the prediction starts above the speed there.
		if (!jump) jump = { lower, upper: at.speedMps !== null ? at : upper };
	}
	return refusal(req, ratedPa, grid, evaluate, jump);
}

function solution(req: FillPressureRequest, ratedPa: number, at: Point): FillPressureSolution {
	const perPressure = speedPerPressure(req, at);
	const warnings: string[] = [];
	const range = req.calibration.fillPressureRangePa;
	if (at.pressurePa < range.min || at.pressurePa > range.max)
		warnings.push(
			`${bar(at.pressurePa)} lies outside the pressure range the calibration was fitted over ` +
				`(${bar(range.min)} to ${bar(range.max)}): the prediction is an extrapolation.`
		);
	return {
		ok: true,
		fillGaugePa: at.pressurePa,
		speedMps: at.speedMps as number,
		muzzleSpeedMps: at.muzzleSpeedMps as number,
		efficiency: at.efficiency,
		speedPerPressureMpsPerPa: perPressure.judged,
		muzzleSpeedPerPressureMpsPerPa: perPressure.muzzle,
		marginPa: ratedPa - at.pressurePa,
		...(at.flight ? { flight: at.flight } : {}),
		warnings
	};
}

/**
 * dv/dp at a point of the curve: the muzzle speed's from muzzleWithDerivatives (analytic for gas
 * work, forward differences of the ODE for valve flow; a central difference of the curve when it
 * has none), times ∂v_target/∂v_muzzle by a central difference of the flight at the target.
 */
function speedPerPressure(req: FillPressureRequest, at: Point): { muzzle: number; judged: number } {
	const { calibration, shot } = req;
	const model = modelOf(calibration);
	const setup: ShotSetup = { ...shot, fillGaugePa: at.pressurePa };
	const derivatives = muzzleWithDerivatives(model, calibration.parameters, setup);
	let muzzle = derivatives?.perPressure ?? NaN;
	if (!Number.isFinite(muzzle)) {
		const h = PRESSURE_STEP_RELATIVE * (at.pressurePa + shot.session.ambientPa);
		const speed = (p: number) => {
			if (p < 0) return null;
			const r = calibratedMuzzleSpeed(model, calibration.parameters, { ...setup, fillGaugePa: p }, p);
			return r.ok ? r.speedMps : null;
		};
		const up = speed(at.pressurePa + h);
		const down = speed(at.pressurePa - h);
		const centre = at.muzzleSpeedMps as number;
		muzzle = up !== null && down !== null ? (up - down) / (2 * h) : up !== null ? (up - centre) / h : down !== null ? (centre - down) / h : NaN;
	}
	if (req.at === 'muzzle') return { muzzle, judged: muzzle };
	const v = at.muzzleSpeedMps as number;
	const h = SPEED_STEP_RELATIVE * v;
	const up = predictShot(calibration, setup, { muzzleSpeedMps: v + h });
	const down = predictShot(calibration, setup, { muzzleSpeedMps: v - h });
	const gain =
		up.ok && down.ok && up.impact.reached && down.impact.reached ? (up.impact.speedMps - down.impact.speedMps) / (2 * h) : NaN;
	return { muzzle, judged: gain * muzzle };
}

function refusal(
	req: FillPressureRequest,
	ratedPa: number,
	grid: Point[],
	evaluate: (p: number) => Point,
	jump: { lower: Point; upper: Point } | null
): FillPressureResult {
	const required = req.requiredSpeedMps;
	const judged = req.at === 'target' ? 'at the target' : 'at the muzzle';
	const needed = `${mps(required)} ${judged}`;
	let best = -1;
	grid.forEach((g, i) => {
		if (g.speedMps !== null && (best < 0 || g.speedMps > (grid[best].speedMps as number))) best = i;
	});
	if (best < 0) {
		const top = grid[grid.length - 1];
		if (grid.some((g) => g.miss === 'short'))
			return {
				ok: false,
				code: 'target-not-reached',
				reason: `Even at the rated working pressure of ${bar(ratedPa)} the shot (${mps(top.muzzleSpeedMps ?? 0)} at the muzzle) comes down before the target plane.`,
				peak: null
			};
		if (grid.every((g) => g.miss === 'efficiency'))
			return {
				ok: false,
				code: 'efficiency-out-of-range',
				reason: `The calibration's efficiency lies outside (0, 1] at every pressure up to the rated ${bar(ratedPa)}.`,
				peak: null
			};
		return {
			ok: false,
			code: 'does-not-leave-barrel',
			reason: `Even at the rated working pressure of ${bar(ratedPa)} the projectile would not leave the barrel.`,
			peak: null
		};
	}
	if (jump) {
		const start = jump.upper;
		const startSpeed = start.speedMps ?? 0;
		const why =
			jump.lower.miss === 'efficiency'
				? { code: 'efficiency-out-of-range' as const, text: `below it the calibration's efficiency leaves (0, 1]; refit over a range that includes lower pressures` }
				: jump.lower.miss === 'short'
					? { code: 'target-not-reached' as const, text: `at lower pressures the shot comes down before the target plane` }
					: { code: 'below-curve' as const, text: `the calibration predicts no slower shot at any allowed pressure` };
		return {
			ok: false,
			code: why.code,
			reason: `${needed} is below what the calibration predicts: from ${bar(start.pressurePa)} it gives ${mps(startSpeed)} and more; ${why.text}.`,
			peak: null
		};
	}
	const score = (p: number) => evaluate(p).speedMps ?? 0;
	const lo = grid[Math.max(0, best - 1)].pressurePa;
	const hi = grid[Math.min(grid.length - 1, best + 1)].pressurePa;
	const golden = goldenSectionMaximum(score, lo, hi, PEAK_TOLERANCE_PA);
	const top = grid[grid.length - 1];
	let peak: CurvePeak =
		golden.value > (grid[best].speedMps as number)
			? { fillGaugePa: golden.x, speedMps: golden.value }
			: { fillGaugePa: grid[best].pressurePa, speedMps: grid[best].speedMps as number };
	if (top.speedMps !== null && top.speedMps >= peak.speedMps) peak = { fillGaugePa: ratedPa, speedMps: top.speedMps };
	if (peak.speedMps >= required) {
		// A hump narrower than a grid step pokes above the speed: its rising flank holds the root.
		const left = grid[Math.max(0, best - 1)];
		const gap = (p: number) => score(p) - required;
		if (gap(left.pressurePa) < 0) {
			const root = brentRoot(gap, left.pressurePa, peak.fillGaugePa, { tolerance: PRESSURE_TOLERANCE_PA });
			const at = evaluate(root.root);
			if (at.speedMps !== null && Math.abs(at.speedMps - required) <= ROOT_ACCEPT_RELATIVE * required) return solution(req, ratedPa, at);
		}
	}
	if (peak.fillGaugePa === ratedPa)
		return {
			ok: false,
			code: 'above-rated-pressure',
			reason:
				`${needed} needs more than the rated working pressure of ${bar(ratedPa)}, ` +
				`which gives ${mps(peak.speedMps)}. Refusing to go above it.`,
			peak
		};
	return {
		ok: false,
		code: 'beyond-curve-peak',
		reason:
			`${needed} is out of reach: under this calibration the speed rises to at most ${mps(peak.speedMps)}, ` +
			`at ${bar(peak.fillGaugePa)}, and falls at higher pressures up to the rated ${bar(ratedPa)}.`,
		peak
	};
}

// ---------------------------------------------------------------------------------------------
// The gauge's reading error at the answer.

export interface GaugeSpread {
	/** σ_v = |dv/dp|·σ_p, m/s. */
	speedSdMps: number;
	/** P(|δv| ≤ tolerance) from the gauge alone, 2Φ(tol/σ_v) − 1 (1 when σ_v = 0). */
	withinToleranceProbability: number;
	/** True when ±1.96 σ_v does not fit in ±tolerance: the gauge alone puts > 5 % of shots outside. */
	exceedsTolerance: boolean;
}

/** Standard normal CDF Φ(x) = ½(1 + erf(x/√2)) (simple-statistics' erf, fractional error < 1.2e-7). */
const normalCdf = (x: number) => 0.5 * (1 + errorFunction(x / Math.SQRT2));

/** What a gauge reading SD σ_p does to the speed through dv/dp, against a speed tolerance. */
export function gaugeSpread(speedPerPressureMpsPerPa: number, gaugeSdPa: number, toleranceMps: number): GaugeSpread {
	const sdPa = requireNonNegative(gaugeSdPa, 'gaugeSdPa');
	const tol = requireNonNegative(toleranceMps, 'toleranceMps');
	if (!Number.isFinite(speedPerPressureMpsPerPa))
		throw new PhysicsInputError('speedPerPressureMpsPerPa', 'not-finite', 'dv/dp must be a finite number');
	const speedSdMps = Math.abs(speedPerPressureMpsPerPa) * sdPa;
	const withinToleranceProbability = speedSdMps === 0 ? 1 : 2 * normalCdf(tol / speedSdMps) - 1;
	return { speedSdMps, withinToleranceProbability, exceedsTolerance: GAUGE_COVERAGE_Z * speedSdMps > tol };
}

// ---------------------------------------------------------------------------------------------
// Elevation.

/** Elevation for an aim height on the target plane; the shot is flyToPlane's less the elevation. */
export type ElevationRequest = Omit<FlightInput, 'elevationDeg'> & {
	/** Height above the ground to hit on the target plane, m. */
	aimHeightM: number;
	flightOptions?: FlightOptions;
};

export type ElevationResult =
	| { ok: true; elevationDeg: number; flight: FlightResult }
	| {
			ok: false;
			code: 'no-elevation';
			reason: string;
			/** The highest point on the target plane any elevation reaches (if any reaches it), m. */
			bestHeightM?: number;
			bestElevationDeg?: number;
	  };

/**
 * The low-arc elevation, in degrees, at which the shot meets the target plane at aimHeightM.
 * Scans upward from −90° in ELEVATION_SCAN_STEP_DEG steps for the first elevation that is high
 * enough, then polishes with Brent; if none is, maximises the height on the plane to say how
 * close the best elevation gets.
 */
export function solveElevation(req: ElevationRequest): ElevationResult {
	const aim = requireNonNegative(req.aimHeightM, 'aimHeightM');
	return lowArc((elevationDeg) => flyToPlane({ ...req, elevationDeg }, req.flightOptions), aim, req.targetDistanceM);
}

/**
 * The elevation to SET so that a shot at `muzzleSpeedMps` under the calibration (its drag law,
 * its C_D or sphere factor, its elevation bias δθ added as predictShot adds it) meets the target
 * plane at the session's aim height. `elevationDeg` in the result is the set elevation.
 */
export function solveCalibratedElevation(calibration: LauncherCalibration, shot: PlannedShot, muzzleSpeedMps: number): ElevationResult {
	const aim = requireNonNegative(shot.session.aimHeightM, 'aimHeightM');
	requirePositive(muzzleSpeedMps, 'muzzleSpeedMps');
	const { dragCoefficient, elevationBiasDeg } = calibration.parameters;
	const law = modelOf(calibration).drag;
	const setup: ShotSetup = { ...shot, fillGaugePa: 0 };
	const r = lowArc(
		(elevationDeg) => flyUnder(law, setup, muzzleSpeedMps, dragCoefficient, elevationDeg, shot.session.targetDistanceM),
		aim,
		shot.session.targetDistanceM
	);
	if (r.ok) return { ...r, elevationDeg: r.elevationDeg - elevationBiasDeg };
	return r.bestElevationDeg === undefined ? r : { ...r, bestElevationDeg: r.bestElevationDeg - elevationBiasDeg };
}

function lowArc(fly: (elevationDeg: number) => FlightResult, aim: number, distanceM: number): ElevationResult {
	// Height over the aim point on the plane; a shot that comes down short counts as below it
	// by its shortfall, which keeps the function continuous where "reached" begins.
	const gap = (elevationDeg: number) => {
		const r = fly(elevationDeg);
		return r.reached ? r.heightM - aim : -aim - (distanceM - r.downrangeM);
	};
	let previous = -90;
	let best = { x: -90, value: gap(-90) };
	if (best.value >= 0) return { ok: true, elevationDeg: -90, flight: fly(-90) };
	for (let e = -90 + ELEVATION_SCAN_STEP_DEG; e <= 90; e += ELEVATION_SCAN_STEP_DEG) {
		const value = gap(e);
		if (value >= 0) return polishedElevation(gap, fly, previous, e);
		if (value > best.value) best = { x: e, value };
		previous = e;
	}
	const lo = Math.max(-90, best.x - ELEVATION_SCAN_STEP_DEG);
	const hi = Math.min(90, best.x + ELEVATION_SCAN_STEP_DEG);
	const top = goldenSectionMaximum(gap, lo, hi, ELEVATION_TOLERANCE_DEG);
	if (top.value >= 0) return polishedElevation(gap, fly, lo, top.x);
	const bestFlight = fly(top.x);
	return {
		ok: false,
		code: 'no-elevation',
		reason: bestFlight.reached
			? `No elevation reaches ${aim.toFixed(3)} m on the target plane: the highest it can be hit is ` +
				`${bestFlight.heightM.toFixed(3)} m, at ${top.x.toFixed(2)}°.`
			: `No elevation reaches the target plane at ${distanceM} m with this speed.`,
		...(bestFlight.reached ? { bestHeightM: bestFlight.heightM, bestElevationDeg: top.x } : {})
	};
}

function polishedElevation(
	gap: (e: number) => number,
	fly: (e: number) => FlightResult,
	lo: number,
	hi: number
): ElevationResult {
	const root = brentRoot(gap, lo, hi, { tolerance: ELEVATION_TOLERANCE_DEG });
	return { ok: true, elevationDeg: root.root, flight: fly(root.root) };
}
