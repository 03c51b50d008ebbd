// Solving a setup (shared/design/physics.md §4): the fill pressure that gives a required speed at
// the muzzle or at the target plane, never above the rig's rated working pressure; and the
// elevation that puts the shot at an aim height on the target plane (the low arc).
//
// Both are bracketed root finds (Brent 1973, ./roots.ts) preceded by a coarse scan from the
// safe end (low pressure, low elevation), so the answer is always the LOWEST pressure and the
// LOWEST elevation that work, even where the response is not monotone.

import { requireNonNegative, requirePositive } from './errors';
import { flyToPlane, type FlightInput, type FlightOptions, type FlightResult } from './flight/driver';
import {
	efficiencyAt,
	fillPressureForMuzzleSpeed,
	muzzleSpeed,
	validateLauncher,
	type EfficiencyModel,
	type LauncherInput
} from './internal';
import { brentRoot, goldenSectionMaximum } from './roots';
import { fromSI } from './units';

/** Intervals of the coarse scan over [0, rated pressure] before the root is polished. */
const PRESSURE_SCAN_INTERVALS = 8;
/** Absolute tolerance of the fill pressure, Pa: a thousandth of a pascal, far below any gauge. */
const PRESSURE_TOLERANCE_PA = 1e-3;
/** Elevation scan step, degrees: fine enough not to step over the hump of a short lob. */
const ELEVATION_SCAN_STEP_DEG = 2.5;
/** Absolute tolerance of the elevation, degrees (1e-9° moves a 100 m shot by 2 µm). */
const ELEVATION_TOLERANCE_DEG = 1e-9;

/** A calibration's efficiency with the pressure range it was fitted over (gauge, Pa). */
export interface CalibratedEfficiency extends EfficiencyModel {
	fittedRangePa?: { minPa: number; maxPa: number };
}

/** The launcher as muzzleSpeed takes it, with a constant η or a calibration's η(p_g). */
export type LauncherSetup = Omit<LauncherInput, 'efficiency'> & { efficiency: number | CalibratedEfficiency };

/** The shot downrange as flyToPlane takes it, less what the launcher decides (speed, mass). */
export type ShotConditions = Omit<FlightInput, 'speedMps' | 'massKg'>;

/**
 * Fill pressure for a required speed. `at: 'muzzle'` needs only the launcher; `at: 'target'`
 * also the shot, and the speed is the ground speed where the flight meets the target plane.
 * All pressures are gauge pressures in Pa; `ratedPressurePa` is the rig's rated (maximum
 * allowable) working pressure, which no answer may exceed.
 */
export type FillPressureRequest = LauncherSetup & {
	requiredSpeedMps: number;
	ratedPressurePa: number;
	flightOptions?: FlightOptions;
} & ({ at: 'muzzle' } | { at: 'target'; shot: ShotConditions });

export type FillPressureFailure =
	| 'above-rated-pressure'
	| 'does-not-leave-barrel'
	| 'target-not-reached'
	| 'efficiency-out-of-range'
	| 'gas-inertia-limit';

export type FillPressureResult =
	| {
			ok: true;
			fillGaugePa: number;
			muzzleSpeedMps: number;
			/** η used at that pressure. */
			efficiency: number;
			/** The flight at that pressure (at: 'target' only). */
			flight?: FlightResult;
			/** Rated working pressure minus the answer, Pa. */
			marginPa: number;
			/** E.g. the answer lies outside the pressure range the efficiency was fitted over. */
			warnings: string[];
	  }
	| { ok: false; code: FillPressureFailure; reason: string };

const bar = (pa: number) => `${fromSI('pressure', 'bar', pa).toFixed(3)} bar`;
const mps = (v: number) => `${v.toFixed(3)} m/s`;

/** The gauge pressures at which a calibration's η(p) lies in (0, 1], cut to [0, rated]. */
function efficiencyWindow(model: CalibratedEfficiency, ratedPa: number): { minPa: number; maxPa: number } {
	const atZero = efficiencyAt(0, model);
	const slope = model.eta1 ? model.eta1 / (model.pRefPa as number) : 0;
	if (slope === 0) return { minPa: 0, maxPa: ratedPa };
	// η(p) = η(0) + slope·p is 0 at −η(0)/slope and 1 at (1 − η(0))/slope.
	const zeroAt = -atZero / slope;
	const oneAt = (1 - atZero) / slope;
	const [lo, hi] = slope > 0 ? [zeroAt, oneAt] : [oneAt, zeroAt];
	return { minPa: Math.max(0, lo), maxPa: Math.min(ratedPa, hi) };
}

interface Evaluation {
	muzzleSpeedMps: number;
	efficiency: number;
	/** The speed that must equal the required one (muzzle or at the plane), 0 if none. */
	speedMps: number;
	flight?: FlightResult;
}

function evaluator(req: FillPressureRequest): (fillGaugePa: number) => Evaluation {
	const model: CalibratedEfficiency = typeof req.efficiency === 'number' ? { eta0: req.efficiency } : req.efficiency;
	return (fillGaugePa) => {
		// Pressures come from efficiencyWindow, so η ≤ 1 up to rounding at the window's edge.
		const efficiency = Math.min(1, efficiencyAt(fillGaugePa, model));
		if (!(efficiency > 0)) return { muzzleSpeedMps: 0, efficiency, speedMps: 0 };
		const m = muzzleSpeed({ ...req, fillGaugePa, efficiency });
		const muzzleSpeedMps = m.ok ? m.speedMps : 0;
		if (req.at === 'muzzle' || muzzleSpeedMps === 0) return { muzzleSpeedMps, efficiency, speedMps: muzzleSpeedMps };
		const flight = flyToPlane({ ...req.shot, speedMps: muzzleSpeedMps, massKg: req.massKg }, req.flightOptions);
		return { muzzleSpeedMps, efficiency, speedMps: flight.reached ? flight.speedMps : 0, flight };
	};
}

function fittedRangeWarnings(model: number | CalibratedEfficiency, fillGaugePa: number): string[] {
	if (typeof model === 'number' || !model.fittedRangePa) return [];
	const { minPa, maxPa } = model.fittedRangePa;
	if (fillGaugePa >= minPa && fillGaugePa <= maxPa) return [];
	return [
		`${bar(fillGaugePa)} lies outside the pressure range the efficiency was fitted over ` +
			`(${bar(minPa)} to ${bar(maxPa)}): the prediction is an extrapolation.`
	];
}

function failureAtTop(req: FillPressureRequest, top: Evaluation, topPa: number, limitedByEfficiency: boolean): FillPressureResult {
	const where = limitedByEfficiency
		? `${bar(topPa)}, the highest pressure at which the calibration's efficiency stays within (0, 1]`
		: `the rated working pressure of ${bar(topPa)}`;
	if (top.muzzleSpeedMps === 0) {
		return {
			ok: false,
			code: limitedByEfficiency ? 'efficiency-out-of-range' : 'does-not-leave-barrel',
			reason: `Even at ${where} the projectile would not leave the barrel.`
		};
	}
	if (req.at === 'target' && !top.flight?.reached) {
		return {
			ok: false,
			code: limitedByEfficiency ? 'efficiency-out-of-range' : 'target-not-reached',
			reason: `Even at ${where} the shot (${mps(top.muzzleSpeedMps)} at the muzzle) comes down before the target plane.`
		};
	}
	return {
		ok: false,
		code: limitedByEfficiency ? 'efficiency-out-of-range' : 'above-rated-pressure',
		reason:
			`${mps(req.requiredSpeedMps)} ${req.at === 'target' ? 'at the target' : 'at the muzzle'} needs more than ${where}, ` +
			`which gives ${mps(top.speedMps)}. Refusing to go above it.`
	};
}

/** Lowest gauge fill pressure ≤ rated that gives the required speed (see FillPressureRequest). */
export function solveFillPressure(req: FillPressureRequest): FillPressureResult {
	const required = requirePositive(req.requiredSpeedMps, 'requiredSpeedMps');
	const ratedPa = requirePositive(req.ratedPressurePa, 'ratedPressurePa');
	const constantEta = typeof req.efficiency === 'number';
	validateLauncher({ ...req, efficiency: constantEta ? (req.efficiency as number) : 1 });
	const window = constantEta ? { minPa: 0, maxPa: ratedPa } : efficiencyWindow(req.efficiency as CalibratedEfficiency, ratedPa);
	const limitedByEfficiency = window.maxPa < ratedPa;
	if (!(window.maxPa > window.minPa)) {
		return {
			ok: false,
			code: 'efficiency-out-of-range',
			reason: `The calibration's efficiency lies outside (0, 1] at every pressure up to the rated ${bar(ratedPa)}.`
		};
	}
	const evaluate = evaluator(req);
	if (req.at === 'muzzle' && constantEta) return solveMuzzleClosedForm(req, required, ratedPa, evaluate);

	const top = evaluate(window.maxPa);
	if (top.speedMps < required) return failureAtTop(req, top, window.maxPa, limitedByEfficiency);
	const bottom = evaluate(window.minPa);
	if (bottom.speedMps >= required) {
		return {
			ok: false,
			code: 'efficiency-out-of-range',
			reason:
				`The required speed would need a pressure below ${bar(window.minPa)}, where the calibration's ` +
				`efficiency leaves (0, 1]; refit over a range that includes lower pressures.`
		};
	}
	const gap = (p: number) => evaluate(p).speedMps - required;
	const [lo, hi] = firstBracket(gap, window.minPa, window.maxPa);
	const root = brentRoot(gap, lo, hi, { tolerance: PRESSURE_TOLERANCE_PA });
	return success(req, ratedPa, root.root, evaluate(root.root));
}

/** The first of PRESSURE_SCAN_INTERVALS sub-intervals of [lo, hi] over which `gap` turns ≥ 0. */
function firstBracket(gap: (p: number) => number, lo: number, hi: number): [number, number] {
	let previous = lo;
	for (let i = 1; i < PRESSURE_SCAN_INTERVALS; i++) {
		const p = lo + ((hi - lo) * i) / PRESSURE_SCAN_INTERVALS;
		if (gap(p) >= 0) return [previous, p];
		previous = p;
	}
	return [previous, hi];
}

function success(req: FillPressureRequest, ratedPa: number, fillGaugePa: number, at: Evaluation): FillPressureResult {
	return {
		ok: true,
		fillGaugePa,
		muzzleSpeedMps: at.muzzleSpeedMps,
		efficiency: at.efficiency,
		...(at.flight ? { flight: at.flight } : {}),
		marginPa: ratedPa - fillGaugePa,
		warnings: fittedRangeWarnings(req.efficiency, fillGaugePa)
	};
}

/** Constant η at the muzzle: W_gas ∝ P0, so the pressure follows in closed form (internal.ts). */
function solveMuzzleClosedForm(
	req: FillPressureRequest,
	required: number,
	ratedPa: number,
	evaluate: (p: number) => Evaluation
): FillPressureResult {
	const answer = fillPressureForMuzzleSpeed({ ...req, efficiency: req.efficiency as number }, required);
	if (!answer.ok) return { ok: false, code: 'gas-inertia-limit', reason: answer.reason };
	if (answer.fillGaugePa > ratedPa) return failureAtTop(req, evaluate(ratedPa), ratedPa, false);
	return success(req, ratedPa, answer.fillGaugePa, evaluate(answer.fillGaugePa));
}

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
	const fly = (elevationDeg: number) => flyToPlane({ ...req, elevationDeg }, req.flightOptions);
	// Height over the aim point on the plane; a shot that comes down short counts as below it
	// by its shortfall, which keeps the function continuous where "reached" begins.
	const gap = (elevationDeg: number) => {
		const r = fly(elevationDeg);
		return r.reached ? r.heightM - aim : -aim - (req.targetDistanceM - r.downrangeM);
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
			: `No elevation reaches the target plane at ${req.targetDistanceM} m with this speed.`,
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
