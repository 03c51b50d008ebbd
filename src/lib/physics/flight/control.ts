// Error measurement and step-size control for DOP853 (Hairer, Nørsett & Wanner, "Solving Ordinary
// Differential Equations I", 2nd ed. 1993, §II.4 "Automatic step size control" and §II.10;
// the constants are those of Hairer's dop853.f and SciPy's solve_ivp).

import type { OdeSystem } from './model';
import type { StepWork } from './stepper';
import type { Dop853Tableau, PackedRows } from './tableau';

/** Safety factor on the optimal step, so the next step is accepted with high probability. */
export const SAFETY = 0.9;
/** Largest shrink of a step in one go (after a rejection). */
export const MIN_FACTOR = 0.2;
/** Largest growth of a step in one go. */
export const MAX_FACTOR = 10;
/** Weight of the order-3 estimate in DOP853's combined error (dop853.f: 0.01 = 0.1²). */
const ERROR3_WEIGHT = 0.01;

/** Tolerances of the error test: |error_i| ≤ atol + rtol · max(|y_i|, |y_new,i|). */
export interface Tolerances {
	relative: number;
	absolute: number;
}

function weightedSum(rows: PackedRows, K: Float64Array, n: number, c: number): number {
	let sum = 0;
	for (let p = rows.start[0]; p < rows.start[1]; p++) sum += rows.value[p] * K[rows.index[p] * n + c];
	return sum;
}

/**
 * DOP853's scaled error norm of the step y → yNew of size h (≤ 1 means accept):
 * err = |h| · ‖e5‖² / √(n (‖e5‖² + 0.01 ‖e3‖²)), with e5, e3 the order-5 and order-3 error
 * estimates divided component-wise by the tolerance scale (HNW 1993 §II.10; dop853.f).
 */
export function errorNorm(
	tableau: Dop853Tableau,
	y: Float64Array,
	yNew: Float64Array,
	h: number,
	w: StepWork,
	tol: Tolerances
): number {
	const { K, n } = w;
	let sum5 = 0;
	let sum3 = 0;
	for (let c = 0; c < n; c++) {
		const scale = tol.absolute + tol.relative * Math.max(Math.abs(y[c]), Math.abs(yNew[c]));
		const e5 = weightedSum(tableau.error5, K, n, c) / scale;
		const e3 = weightedSum(tableau.error3, K, n, c) / scale;
		sum5 += e5 * e5;
		sum3 += e3 * e3;
	}
	if (sum5 === 0 && sum3 === 0) return 0;
	return (Math.abs(h) * sum5) / Math.sqrt(n * (sum5 + ERROR3_WEIGHT * sum3));
}

/**
 * Factor for the next step size from this step's error norm: SAFETY · err^(−1/(q+1)), q the
 * error order, kept in [MIN_FACTOR, MAX_FACTOR]; no growth right after a rejection. A non-finite
 * error (overflow in a wild trial step) counts as a rejection at the smallest factor.
 */
export function stepFactor(tableau: Dop853Tableau, err: number, afterRejection: boolean): number {
	if (!Number.isFinite(err)) return MIN_FACTOR;
	const limit = afterRejection ? 1 : MAX_FACTOR;
	if (err === 0) return limit;
	const factor = SAFETY * Math.pow(err, -1 / (tableau.errorOrder + 1));
	return Math.min(limit, Math.max(MIN_FACTOR, factor));
}

/** Root-mean-square of v_c / (atol + rtol |y_c|). */
function scaledRms(v: Float64Array, offset: number, y: Float64Array, n: number, tol: Tolerances): number {
	let sum = 0;
	for (let c = 0; c < n; c++) {
		const q = v[offset + c] / (tol.absolute + tol.relative * Math.abs(y[c]));
		sum += q * q;
	}
	return Math.sqrt(sum / n);
}

/**
 * Starting step size (HNW 1993 §II.4, "Starting step size"; dop853.f HINIT): a small explicit
 * Euler probe estimates the second derivative, and h is chosen so the leading error term is
 * about 1 % of the tolerance. Uses one evaluation of f; k_0 = f(y) must be in w.K.
 */
export function initialStep(
	system: OdeSystem,
	tableau: Dop853Tableau,
	y: Float64Array,
	w: StepWork,
	tol: Tolerances
): number {
	const { K, stage, n } = w;
	const d0 = scaledRms(y, 0, y, n, tol);
	const d1 = scaledRms(K, 0, y, n, tol);
	const h0 = d0 < 1e-5 || d1 < 1e-5 ? 1e-6 : (0.01 * d0) / d1;
	for (let c = 0; c < n; c++) stage[c] = y[c] + h0 * K[c];
	const probe = n; // k_1's slot is free before the first step
	system.derivative(stage, K, probe);
	for (let c = 0; c < n; c++) K[probe + c] -= K[c];
	const d2 = scaledRms(K, probe, y, n, tol) / h0;
	const h1 =
		d1 <= 1e-15 && d2 <= 1e-15
			? Math.max(1e-6, h0 * 1e-3)
			: Math.pow(0.01 / Math.max(d1, d2), 1 / (tableau.errorOrder + 1));
	return Math.min(100 * h0, h1);
}
