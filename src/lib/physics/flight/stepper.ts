// One explicit Runge–Kutta step over a packed tableau, and its dense output (the interpolant
// between the two ends of a step). Pure arithmetic on caller-owned Float64Arrays: nothing is
// allocated here, so the driver's loop runs without garbage.
//
// The stage vectors k_s live side by side in one array `K` (stage s at K[s·n .. s·n + n−1]).

import type { OdeSystem } from './model';
import type { Dop853Tableau, PackedRows } from './tableau';

/** Terms F0..F6 of DOP853's dense-output polynomial (degree 7 in θ). */
const DENSE_TERMS = 7;

/** Scratch arrays for one integration of an n-dimensional system with a given tableau. */
export class StepWork {
	/** Stage derivatives k_0..k_15, n each. */
	readonly K: Float64Array;
	/** The state at which the current stage is evaluated. */
	readonly stage: Float64Array;
	/** Dense-output coefficients of the last step: 7 rows of n (order-7 interpolant). */
	readonly dense: Float64Array;
	/** Two state vectors for the driver to alternate between (current and next). */
	readonly states: [Float64Array, Float64Array];

	constructor(
		readonly n: number,
		tableau: Dop853Tableau
	) {
		this.K = new Float64Array(tableau.allStages * n);
		this.stage = new Float64Array(n);
		this.dense = new Float64Array(DENSE_TERMS * n);
		this.states = [new Float64Array(n), new Float64Array(n)];
	}
}

/** stage = y + h Σ_j a_sj k_j over row s of `rows`, then k_s = f(stage). */
function evaluateStage(
	system: OdeSystem,
	rows: PackedRows,
	s: number,
	y: Float64Array,
	h: number,
	w: StepWork
): void {
	const { K, stage, n } = w;
	const from = rows.start[s];
	const to = rows.start[s + 1];
	for (let c = 0; c < n; c++) {
		let sum = 0;
		for (let p = from; p < to; p++) sum += rows.value[p] * K[rows.index[p] * n + c];
		stage[c] = y[c] + h * sum;
	}
	system.derivative(stage, K, s * n);
}

/**
 * One step of size h from y, with k_0 = f(y) already in w.K. Writes the new state into yNew and
 * leaves k_1..k_12 in w.K, k_12 = f(yNew) (first-same-as-last: it is the next step's k_0).
 */
export function rungeKuttaStep(
	system: OdeSystem,
	tableau: Dop853Tableau,
	y: Float64Array,
	h: number,
	w: StepWork,
	yNew: Float64Array
): void {
	for (let s = 1; s < tableau.stepStages; s++) evaluateStage(system, tableau.rows, s, y, h, w);
	yNew.set(w.stage);
}

/**
 * Dense output of the step just taken from y to yNew (3 further evaluations of f), into w.dense:
 * F0 = Δy, F1 = h k_0 − Δy, F2 = 2Δy − h (k_0 + k_12), F3..F6 = h Σ_j d_ij k_j
 * (Hairer, Nørsett & Wanner 1993, §II.6 and dop853.f, CONTD8).
 */
export function denseOutput(
	system: OdeSystem,
	tableau: Dop853Tableau,
	y: Float64Array,
	yNew: Float64Array,
	h: number,
	w: StepWork
): void {
	for (let s = tableau.stepStages; s < tableau.allStages; s++) evaluateStage(system, tableau.rows, s, y, h, w);
	const { K, dense: F, n } = w;
	const d = tableau.dense;
	const kNew = (tableau.stepStages - 1) * n;
	for (let c = 0; c < n; c++) {
		const dy = yNew[c] - y[c];
		F[c] = dy;
		F[n + c] = h * K[c] - dy;
		F[2 * n + c] = 2 * dy - h * (K[c] + K[kNew + c]);
		for (let r = 0; r < DENSE_TERMS - 3; r++) {
			let sum = 0;
			for (let p = d.start[r]; p < d.start[r + 1]; p++) sum += d.value[p] * K[d.index[p] * n + c];
			F[(r + 3) * n + c] = h * sum;
		}
	}
}

/**
 * Component c of the interpolant at θ ∈ [0, 1] of the step:
 * y_c(θ) = y_c + θ(F0 + (1−θ)(F1 + θ(F2 + (1−θ)(F3 + θ(F4 + (1−θ)(F5 + θ F6)))))).
 */
export function interpolate(F: Float64Array, n: number, y: Float64Array, theta: number, c: number): number {
	const u = 1 - theta;
	let acc = F[6 * n + c] * theta;
	acc = (acc + F[5 * n + c]) * u;
	acc = (acc + F[4 * n + c]) * theta;
	acc = (acc + F[3 * n + c]) * u;
	acc = (acc + F[2 * n + c]) * theta;
	acc = (acc + F[n + c]) * u;
	acc = (acc + F[c]) * theta;
	return y[c] + acc;
}

/** The whole interpolated state at θ, into out. */
export function interpolateState(F: Float64Array, n: number, y: Float64Array, theta: number, out: Float64Array): void {
	for (let c = 0; c < n; c++) out[c] = interpolate(F, n, y, theta, c);
}
