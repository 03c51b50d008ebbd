// Starting values for a launcher fit, found from the data alone (physics.md §5): nobody types them.
//
// - Gas work: ½ m v² + W_atm = η0·W + η1·W·(p − p_ref)/p_ref − E is LINEAR in (η0, η1, E) for
//   the measured speeds, so an ordinary (weighted) linear least-squares fit in energy gives the
//   start. Each row is weighted by 1/(m v): an energy error δ(½mv²) = m v δv, so the weights put
//   every row on the scale of a speed error.
// - Valve flow: the speed is far from linear in (C·A_v, τ, F); a coarse grid over the opening
//   time τ, with C·A_v (and F = 0) solved by a one-dimensional fit at each grid point, and the
//   best point kept.
// - Drag: from pairs of muzzle and downrange speeds, flat fire v_d = v_m e^(−kx) (reference
//   sheet §5: C_D ≈ (2m/(ρ A Δx)) ln(v1/v2)); divided by the correlation's C_D at the pair's
//   Reynolds number for the sphere law.
// Shots the start cannot use (no muzzle speed, or the model cannot make them leave the barrel
// at the start) are listed by index with the reason, never a reason to refuse the fit.

import { leastSquares } from '../fit/least-squares';
import { reynoldsNumber, sphereDragCoefficient, sutherlandViscosity } from '../drag';
import {
	calibratedMuzzleSpeed,
	idealGasWork,
	temperatureKOf,
	type CalibrationParameters,
	type DragLaw,
	type ShotSetup
} from './model';

export interface StartShot {
	index: number;
	setup: ShotSetup;
	muzzleSpeedMps?: number;
	downrange?: { distanceM: number; speedMps: number };
}

export interface StartNote {
	index: number;
	reason: string;
}

export interface GasWorkTerms {
	pressureSlope: boolean;
	energyOffset: boolean;
}

export const DEFAULT_EFFICIENCY_START = 0.6;
export const DEFAULT_DRAG_COEFFICIENT_START = 0.5;
/** η0 must start inside (0, 1]. */
const EFFICIENCY_START_RANGE = { min: 0.01, max: 1 };

/**
 * Energy-linear start for the gas-work family: (η0, η1, E) by weighted linear least squares.
 * Returns the values and the shots it could not use.
 */
export function gasWorkStart(
	shots: readonly StartShot[],
	pRefPa: number,
	terms: GasWorkTerms
): { efficiency: number; pressureSlope: number; energyOffsetJ: number; skipped: StartNote[] } {
	const rows: { w: number; columns: number[]; y: number }[] = [];
	const skipped: StartNote[] = [];
	for (const s of shots) {
		if (s.muzzleSpeedMps === undefined) continue;
		const r = idealGasWork(s.setup);
		if (!r.ok) {
			skipped.push({ index: s.index, reason: 'even all of the gas work would not move the projectile out of the barrel' });
			continue;
		}
		const v = s.muzzleSpeedMps;
		const relative = (s.setup.fillGaugePa - pRefPa) / pRefPa;
		const columns = [r.gasWorkJ];
		if (terms.pressureSlope) columns.push(r.gasWorkJ * relative);
		if (terms.energyOffset) columns.push(-1);
		rows.push({ w: 1 / (r.effectiveMassKg * v), columns, y: 0.5 * r.effectiveMassKg * v * v + r.atmosphereWorkJ });
	}
	const width = 1 + (terms.pressureSlope ? 1 : 0) + (terms.energyOffset ? 1 : 0);
	if (rows.length < width)
		return { efficiency: DEFAULT_EFFICIENCY_START, pressureSlope: 0, energyOffsetJ: 0, skipped };
	const scale = rows.reduce((m, r) => Math.max(m, r.columns[0]), 0);
	const fit = leastSquares({
		start: new Array<number>(width).fill(0),
		residuals: (x) => rows.map((r) => r.w * (r.y - r.columns.reduce((sum, c, j) => sum + c * x[j], 0))),
		jacobian: () => rows.map((r) => r.columns.map((c) => -r.w * c)),
		options: { ftol: 1e-12, xtol: 1e-12 }
	});
	let j = 0;
	const efficiency = fit.params[j++];
	const pressureSlope = terms.pressureSlope ? fit.params[j++] : 0;
	const energyOffsetJ = terms.energyOffset ? fit.params[j++] : 0;
	const usable = Number.isFinite(efficiency) && efficiency > 0 && scale > 0;
	// No usable η0 with every term (a throttled rig whose speeds lie far below the ideal gas work
	// can pull η0 below zero): the same without the slope, then without the energy term.
	if (!usable && terms.pressureSlope) return { ...gasWorkStart(shots, pRefPa, { ...terms, pressureSlope: false }), skipped };
	if (!usable && terms.energyOffset) return { ...gasWorkStart(shots, pRefPa, { pressureSlope: false, energyOffset: false }), skipped };
	return {
		efficiency: usable
			? Math.min(EFFICIENCY_START_RANGE.max, Math.max(EFFICIENCY_START_RANGE.min, efficiency))
			: DEFAULT_EFFICIENCY_START,
		pressureSlope: usable && Number.isFinite(pressureSlope) ? pressureSlope : 0,
		energyOffsetJ: usable && Number.isFinite(energyOffsetJ) ? energyOffsetJ : 0,
		skipped
	};
}

/** Grid of valve opening times, s: 0.5 ms to 100 ms, logarithmic (what air valves span). */
export const OPENING_TIME_GRID_S = [0.0005, 0.001, 0.002, 0.004, 0.008, 0.016, 0.032, 0.064, 0.1];
/** Starting valve area for the one-dimensional fits, as a fraction of the bore area. */
const VALVE_AREA_START_FRACTION = 0.2;
/** Shots used by the grid (spread over the pressure range): the start need not see them all. */
const GRID_SHOTS = 24;

/**
 * Valve-flow start: for each opening time of the grid, the valve area that fits the muzzle
 * speeds best (friction 0); the grid point with the least sum of squares wins.
 */
export function valveFlowStart(
	shots: readonly StartShot[],
	base: CalibrationParameters
): { valveAreaM2: number; openingTimeS: number; frictionN: number; skipped: StartNote[] } {
	const withSpeed = shots
		.filter((s) => s.muzzleSpeedMps !== undefined)
		.sort((a, b) => a.setup.fillGaugePa - b.setup.fillGaugePa);
	const step = Math.max(1, withSpeed.length / GRID_SHOTS);
	const sample: StartShot[] = [];
	for (let k = 0; k < withSpeed.length && sample.length < GRID_SHOTS; k++) {
		const s = withSpeed[Math.min(withSpeed.length - 1, Math.round(k * step))];
		if (!sample.includes(s)) sample.push(s);
	}
	const model = { family: 'valve-flow' as const, drag: 'constant' as const };
	const boreArea = sample.length ? (Math.PI * sample[0].setup.rig.boreDiameterM ** 2) / 4 : 1e-3;
	let best: { rss: number; valveAreaM2: number; openingTimeS: number } | null = null;
	for (const openingTimeS of OPENING_TIME_GRID_S) {
		// A penalty instead of NaN for a shot that does not leave at a trial area: the grid must
		// compare all points, and the LM treats NaN as an infeasible trial.
		const residuals = (x: number[]) =>
			sample.map((s) => {
				const r = calibratedMuzzleSpeed(model, { ...base, valveAreaM2: x[0], openingTimeS, frictionN: 0 }, s.setup, s.setup.fillGaugePa);
				return r.ok ? s.muzzleSpeedMps! - r.speedMps : s.muzzleSpeedMps!;
			});
		const fit = leastSquares({
			start: [VALVE_AREA_START_FRACTION * boreArea],
			lower: [1e-4 * boreArea],
			upper: [10 * boreArea],
			residuals,
			options: { ftol: 1e-6, xtol: 1e-6, maxEvaluations: 60 }
		});
		if (!Number.isFinite(fit.rss)) continue;
		if (!best || fit.rss < best.rss) best = { rss: fit.rss, valveAreaM2: fit.params[0], openingTimeS };
	}
	const skipped: StartNote[] = [];
	const chosen = best ?? { valveAreaM2: VALVE_AREA_START_FRACTION * boreArea, openingTimeS: 0.01 };
	for (const s of withSpeed) {
		const r = calibratedMuzzleSpeed(model, { ...base, ...chosen, frictionN: 0 }, s.setup, s.setup.fillGaugePa);
		if (!r.ok) skipped.push({ index: s.index, reason: `the start cannot predict it: ${r.reason}` });
	}
	return { valveAreaM2: chosen.valveAreaM2, openingTimeS: chosen.openingTimeS, frictionN: 0, skipped };
}

/** Drag start from muzzle/downrange pairs (constant C_D, or the factor on the sphere correlation). */
export function dragStart(shots: readonly StartShot[], law: DragLaw): number {
	const estimates: number[] = [];
	for (const s of shots) {
		const v1 = s.muzzleSpeedMps;
		const d = s.downrange;
		if (v1 === undefined || !d || !(v1 > d.speedMps)) continue;
		const { projectile, session } = s.setup;
		const area = (Math.PI * projectile.diameterM ** 2) / 4;
		let cd = ((2 * projectile.massKg) / (session.airDensityKgM3 * area * d.distanceM)) * Math.log(v1 / d.speedMps);
		if (law === 'sphere') {
			const mu = sutherlandViscosity(temperatureKOf(session));
			const re = reynoldsNumber(session.airDensityKgM3, Math.sqrt(v1 * d.speedMps), projectile.diameterM, mu);
			cd /= sphereDragCoefficient(re);
		}
		if (Number.isFinite(cd) && cd > 0) estimates.push(cd);
	}
	const fallback = law === 'sphere' ? 1 : DEFAULT_DRAG_COEFFICIENT_START;
	if (estimates.length === 0) return fallback;
	estimates.sort((a, b) => a - b);
	return Math.max(0.01, estimates[Math.floor(estimates.length / 2)]);
}
