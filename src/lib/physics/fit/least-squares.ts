// General bounded nonlinear least squares: Levenberg–Marquardt in Moré's scaled trust-region
// form, with the covariance, rank and interval statistics the calibrations report.
//
// Sources:
// - K. Levenberg, Q. Appl. Math. 2 (1944) 164-168; D.W. Marquardt, J. SIAM 11 (1963) 431-441.
// - J.J. Moré, "The Levenberg-Marquardt algorithm: implementation and theory", Numerical
//   Analysis (Dundee 1977), Springer LNM vol. 630 (1978) 105-116, and its code MINPACK-1
//   `lmder`/`lmpar`/`qrsolv` (Moré, Garbow & Hillstrom, ANL-80-74, 1980): the trust-region
//   radius, the LM parameter by safeguarded Newton on ‖D·p(λ)‖ = Δ, and the termination tests
//   below follow that code (from memory).
// - Covariance s²(JᵀJ)⁻¹, s² = RSS/(n − p), 95 % interval b ± t(0.975; n − p)·SE: Bates & Watts,
//   Nonlinear Regression Analysis and Its Applications (1988) (from memory).
//
// Bounds are kept feasible by an active-set projection: a parameter that sits on a bound while
// the gradient pushes it outward is held (its Jacobian column is zeroed for that step), and a
// trial point is projected onto the box; the trust-region ratio then uses the predicted
// reduction of the projected step. Standard errors are computed for the original parameters.

import {
	MACHINE_EPSILON,
	applyQTranspose,
	euclideanNorm,
	qrFactorPivoted,
	rightSingularVectors
} from './linalg';
import { studentTQuantile } from '../stats/student-t';

export interface LeastSquaresOptions {
	/** Stop when actual and predicted relative reductions of the RSS are both ≤ this. */
	ftol?: number;
	/** Stop when the trust region is ≤ xtol × the scaled parameter norm. */
	xtol?: number;
	/** Stop when the cosine between the residuals and every Jacobian column is ≤ this. */
	gtol?: number;
	/**
	 * Residual-function evaluations allowed for trial points (those spent on finite-difference
	 * Jacobians are not counted against it). Default 500·(p + 1).
	 */
	maxEvaluations?: number;
	/**
	 * A singular value of the column-scaled Jacobian at or below this fraction of the largest
	 * counts as zero (rank deficiency). Default 1e-8 (about √ε: finite-difference Jacobians are
	 * accurate to ~1e-10 relative, so their noise stays well below it).
	 */
	rankTolerance?: number;
}

export interface LeastSquaresProblem {
	residuals: (p: number[]) => number[];
	/** Rows = residuals, columns = parameters; central finite differences when absent. */
	jacobian?: (p: number[]) => number[][];
	start: number[];
	lower?: number[];
	upper?: number[];
	options?: LeastSquaresOptions;
}

export type LeastSquaresStatus =
	| 'ftol'
	| 'xtol'
	| 'ftol+xtol'
	| 'gtol'
	| 'ftol-machine'
	| 'xtol-machine'
	| 'gtol-machine'
	| 'max-evaluations'
	| 'invalid-start'
	| 'invalid-jacobian';

export interface LeastSquaresResult {
	converged: boolean;
	message: string;
	params: number[];
	/**
	 * Standard errors √diag(s²(JᵀJ)⁻¹). `Infinity` for a parameter that is not identifiable
	 * (see `identifiable`) or when there are no degrees of freedom: not determined, never a
	 * meaningless finite number.
	 */
	standardErrors: number[];
	/**
	 * s²(JᵀJ)⁻¹ (pseudo-inverse over the identifiable directions). For a parameter that is not
	 * identifiable its diagonal entry is Infinity and its off-diagonal entries are NaN.
	 */
	covariance: number[][];
	rss: number;
	/** n − p. */
	dof: number;
	/** Outer iterations (Jacobian evaluations inside the loop). */
	iterations: number;

	status: LeastSquaresStatus;
	/** Residual-function evaluations, finite-difference ones included. */
	evaluations: number;
	/** Residual standard deviation s = √(RSS/dof) (NaN when dof ≤ 0). */
	residualSd: number;
	/** Correlation matrix; NaN in the rows and columns of parameters that are not identifiable. */
	correlation: number[][];
	/** t(0.975; dof) used for the intervals (NaN when dof ≤ 0). */
	tQuantile975: number;
	/** b ± t(0.975; dof)·SE; ±Infinity where the SE is not determined. */
	confidence95: { lower: number; upper: number }[];
	/** Numerical rank of the column-scaled Jacobian at the solution. */
	rank: number;
	/** Condition number of the column-scaled Jacobian (Infinity if rank deficient). */
	conditionNumber: number;
	/** Per parameter: false when it lies (in part) in the numerical null space of J. */
	identifiable: boolean[];
	/** Per parameter: which bound it ended on, if any. */
	atBound: ('lower' | 'upper' | null)[];
	residualsAtSolution: number[];
	jacobianAtSolution: number[][];
}

const DEFAULT_TOLERANCE = 1e-15;
const DEFAULT_RANK_TOLERANCE = 1e-8;
/** Initial trust-region radius = FACTOR × ‖D·x0‖ (MINPACK's recommended 100). */
const INITIAL_STEP_FACTOR = 100;
/**
 * A null-space singular vector with a component larger than this on a parameter makes that
 * parameter non-identifiable (its variance would be dominated by the null direction).
 */
const NULL_COMPONENT_THRESHOLD = 1e-4;
const DWARF = Number.MIN_VALUE;

const MESSAGES: Record<LeastSquaresStatus, string> = {
	ftol: 'settled: further steps no longer shrink the sum of squared residuals',
	xtol: 'settled: further steps no longer move the parameters',
	'ftol+xtol': 'settled: further steps move neither the parameters nor the sum of squared residuals',
	gtol: 'settled: the residuals no longer point along any parameter direction',
	'ftol-machine': 'settled at the limit of arithmetic precision: the sum of squared residuals cannot shrink further',
	'xtol-machine': 'settled at the limit of arithmetic precision: the parameters cannot move further',
	'gtol-machine': 'settled at the limit of arithmetic precision: the residuals no longer point along any parameter direction',
	'max-evaluations': 'stopped unsettled: the allowed number of model evaluations ran out',
	'invalid-start': 'not started: the model cannot be evaluated at the starting values (a residual is not a finite number)',
	'invalid-jacobian': 'stopped: a derivative of the model is not a finite number'
};

/** The plain-words meaning of a termination status (the start of `message`). */
export function describeLeastSquaresStatus(status: LeastSquaresStatus): string {
	return MESSAGES[status];
}

/**
 * Solve min_p Σ r_i(p)² with lower ≤ p ≤ upper. See the module comment for the method.
 */
export function leastSquares(problem: LeastSquaresProblem): LeastSquaresResult {
	const n = problem.start.length;
	if (n === 0) throw new RangeError('leastSquares: no parameters');
	const lower = problem.lower ?? new Array<number>(n).fill(-Infinity);
	const upper = problem.upper ?? new Array<number>(n).fill(Infinity);
	if (lower.length !== n || upper.length !== n)
		throw new RangeError('leastSquares: lower/upper must have one entry per parameter');
	for (let j = 0; j < n; j++) {
		if (!Number.isFinite(problem.start[j])) throw new RangeError(`leastSquares: start[${j}] is not finite`);
		if (!(lower[j] <= upper[j])) throw new RangeError(`leastSquares: lower[${j}] > upper[${j}]`);
	}
	const options = problem.options ?? {};
	const ftol = options.ftol ?? DEFAULT_TOLERANCE;
	const xtol = options.xtol ?? DEFAULT_TOLERANCE;
	const gtol = options.gtol ?? 0;
	const maxEvaluations = options.maxEvaluations ?? 500 * (n + 1);
	const rankTolerance = options.rankTolerance ?? DEFAULT_RANK_TOLERANCE;

	let evaluations = 0;
	let differenceEvaluations = 0;
	let m = -1;
	const evaluate = (p: Float64Array): Float64Array => {
		evaluations++;
		const r = problem.residuals(Array.from(p));
		if (m < 0) m = r.length;
		else if (r.length !== m)
			throw new RangeError(`leastSquares: residual count changed from ${m} to ${r.length}`);
		return Float64Array.from(r);
	};

	const x = new Float64Array(n);
	for (let j = 0; j < n; j++) x[j] = Math.min(upper[j], Math.max(lower[j], problem.start[j]));
	let fvec = evaluate(x);
	if (m < n) throw new RangeError(`leastSquares: ${m} residuals cannot determine ${n} parameters`);

	const jacobianAt = (p: Float64Array, f: Float64Array): Float64Array | null => {
		const out = new Float64Array(m * n);
		if (problem.jacobian) {
			const rows = problem.jacobian(Array.from(p));
			if (rows.length !== m) throw new RangeError('leastSquares: Jacobian must have one row per residual');
			for (let i = 0; i < m; i++) {
				const row = rows[i];
				if (row.length !== n) throw new RangeError('leastSquares: Jacobian row length must equal the parameter count');
				for (let j = 0; j < n; j++) out[i + j * m] = row[j];
			}
		} else {
			const before = evaluations;
			finiteDifferenceJacobian(p, f, out);
			differenceEvaluations += evaluations - before;
		}
		for (let k = 0; k < out.length; k++) if (!Number.isFinite(out[k])) return null;
		return out;
	};

	// Central differences, step h = ε^(1/3)·scale (optimal for an O(h²) formula); one-sided
	// second-order formulas where a bound leaves room on one side only.
	const finiteDifferenceJacobian = (p: Float64Array, f: Float64Array, out: Float64Array): void => {
		const rel = Math.cbrt(MACHINE_EPSILON);
		const probe = Float64Array.from(p);
		for (let j = 0; j < n; j++) {
			const scale = p[j] !== 0 ? Math.abs(p[j]) : problem.start[j] !== 0 ? Math.abs(problem.start[j]) : 1;
			const h0 = rel * scale;
			const canUp = p[j] + h0 <= upper[j];
			const canDown = p[j] - h0 >= lower[j];
			if (canUp && canDown) {
				probe[j] = p[j] + h0;
				const hPlus = probe[j] - p[j];
				const fp = evaluate(probe);
				probe[j] = p[j] - h0;
				const hMinus = p[j] - probe[j];
				const fm = evaluate(probe);
				for (let i = 0; i < m; i++) out[i + j * m] = (fp[i] - fm[i]) / (hPlus + hMinus);
			} else {
				const sign = canUp ? 1 : -1;
				probe[j] = p[j] + sign * h0;
				const h1 = probe[j] - p[j];
				const f1 = evaluate(probe);
				probe[j] = p[j] + 2 * h1;
				const f2 = evaluate(probe);
				for (let i = 0; i < m; i++) out[i + j * m] = (-3 * f[i] + 4 * f1[i] - f2[i]) / (2 * h1);
			}
			probe[j] = p[j];
		}
	};

	let fnorm = euclideanNorm(fvec);
	if (!Number.isFinite(fnorm)) {
		return finish(x, fvec, null, 'invalid-start', 0, () => evaluations, lower, upper, rankTolerance);
	}

	const diag = new Float64Array(n);
	const qtf = new Float64Array(n);
	const wa1 = new Float64Array(n);
	const wa2 = new Float64Array(n);
	const wa3 = new Float64Array(n);
	const wa4 = new Float64Array(m);
	const held = new Uint8Array(n);
	let par = 0;
	let delta = 0;
	let xnorm = 0;
	let iterations = 0;
	let status: LeastSquaresStatus | null = null;

	outer: for (;;) {
		iterations++;
		const fjac = jacobianAt(x, fvec);
		if (!fjac) {
			status = 'invalid-jacobian';
			break;
		}
		// Active set: hold a parameter on a bound whose gradient component points outward.
		for (let j = 0; j < n; j++) {
			let g = 0;
			for (let i = 0; i < m; i++) g += fjac[i + j * m] * fvec[i];
			held[j] = (x[j] <= lower[j] && g > 0) || (x[j] >= upper[j] && g < 0) ? 1 : 0;
			if (held[j]) fjac.fill(0, j * m, j * m + m);
		}
		const qr = qrFactorPivoted(fjac, m, n);
		const ipvt = qr.pivot;
		const acnorm = qr.columnNorms;
		if (iterations === 1) {
			for (let j = 0; j < n; j++) diag[j] = acnorm[j] === 0 ? 1 : acnorm[j];
			for (let j = 0; j < n; j++) wa3[j] = diag[j] * x[j];
			xnorm = euclideanNorm(wa3);
			delta = INITIAL_STEP_FACTOR * xnorm;
			if (delta === 0) delta = INITIAL_STEP_FACTOR;
		}
		wa4.set(fvec);
		applyQTranspose(fjac, m, n, wa4);
		for (let j = 0; j < n; j++) {
			fjac[j + j * m] = qr.rDiagonal[j];
			qtf[j] = wa4[j];
		}
		// Scaled gradient norm: largest cosine between f and a column of J.
		let gnorm = 0;
		if (fnorm !== 0) {
			for (let j = 0; j < n; j++) {
				const l = ipvt[j];
				if (acnorm[l] === 0) continue;
				let sum = 0;
				for (let i = 0; i <= j; i++) sum += fjac[i + j * m] * (qtf[i] / fnorm);
				gnorm = Math.max(gnorm, Math.abs(sum / acnorm[l]));
			}
		}
		if (gnorm <= gtol) {
			status = 'gtol';
			break;
		}
		for (let j = 0; j < n; j++) diag[j] = Math.max(diag[j], acnorm[j]);

		for (;;) {
			par = levenbergMarquardtParameter(n, fjac, m, ipvt, diag, qtf, delta, par, wa1, wa2);
			let clamped = false;
			for (let j = 0; j < n; j++) {
				const step = held[j] ? 0 : -wa1[j];
				let trial = x[j] + step;
				if (trial < lower[j] || trial > upper[j]) {
					trial = Math.min(upper[j], Math.max(lower[j], trial));
					clamped = true;
				}
				wa2[j] = trial;
				wa1[j] = trial - x[j];
				wa3[j] = diag[j] * wa1[j];
			}
			const pnorm = euclideanNorm(wa3);
			if (iterations === 1) delta = Math.min(delta, pnorm);
			const ftrial = evaluate(wa2);
			let fnorm1 = euclideanNorm(ftrial);
			if (!Number.isFinite(fnorm1)) fnorm1 = Infinity;
			let actred = -1;
			if (0.1 * fnorm1 < fnorm) actred = 1 - (fnorm1 / fnorm) ** 2;
			// R·Pᵀ·step, so that ‖J·step‖ = ‖wa3‖.
			for (let j = 0; j < n; j++) {
				wa3[j] = 0;
				const t = wa1[ipvt[j]];
				for (let i = 0; i <= j; i++) wa3[i] += fjac[i + j * m] * t;
			}
			let prered: number;
			let dirder: number;
			if (!clamped) {
				const temp1 = euclideanNorm(wa3) / fnorm;
				const temp2 = (Math.sqrt(par) * pnorm) / fnorm;
				prered = temp1 * temp1 + (temp2 * temp2) / 0.5;
				dirder = -(temp1 * temp1 + temp2 * temp2);
			} else {
				let before = 0;
				let after = 0;
				let cross = 0;
				for (let i = 0; i < n; i++) {
					before += qtf[i] * qtf[i];
					after += (qtf[i] + wa3[i]) ** 2;
					cross += qtf[i] * wa3[i];
				}
				prered = (before - after) / (fnorm * fnorm);
				dirder = cross / (fnorm * fnorm);
			}
			// A step the model predicts will not reduce the sum (possible for a step clamped onto a
			// bound) or a trial where the residuals are not finite (an infeasible point) is never
			// accepted: with prered < 0 the plain ratio would flip the sign of actred = −1.
			const ratio = prered > 0 && Number.isFinite(fnorm1) ? actred / prered : 0;
			if (ratio <= 0.25) {
				let temp = actred >= 0 ? 0.5 : (0.5 * dirder) / (dirder + 0.5 * actred);
				if (0.1 * fnorm1 >= fnorm || temp < 0.1 || !Number.isFinite(temp)) temp = 0.1;
				delta = temp * Math.min(delta, pnorm / 0.1);
				par /= temp;
			} else if (par === 0 || ratio >= 0.75) {
				delta = pnorm / 0.5;
				par *= 0.5;
			}
			if (ratio >= 1e-4) {
				x.set(wa2);
				fvec = ftrial;
				for (let j = 0; j < n; j++) wa2[j] = diag[j] * x[j];
				xnorm = euclideanNorm(wa2);
				fnorm = fnorm1;
			}
			const ftolMet = Math.abs(actred) <= ftol && prered <= ftol && 0.5 * ratio <= 1;
			const xtolMet = delta <= xtol * xnorm;
			if (ftolMet && xtolMet) status = 'ftol+xtol';
			else if (ftolMet) status = 'ftol';
			else if (xtolMet) status = 'xtol';
			else if (evaluations - differenceEvaluations >= maxEvaluations) status = 'max-evaluations';
			else if (Math.abs(actred) <= MACHINE_EPSILON && prered <= MACHINE_EPSILON && 0.5 * ratio <= 1)
				status = 'ftol-machine';
			else if (delta <= MACHINE_EPSILON * xnorm) status = 'xtol-machine';
			else if (gnorm <= MACHINE_EPSILON) status = 'gtol-machine';
			if (status) break outer;
			if (ratio >= 1e-4) break;
		}
	}
	return finish(x, fvec, jacobianAt, status, iterations, () => evaluations, lower, upper, rankTolerance);
}

/**
 * MINPACK `lmpar`: given R (upper triangle of `r`, column-major with leading dimension ldr) from
 * J·P = Q·R, the scaling D and Qᵀf, find λ ≥ 0 such that the solution x of
 * min ‖J·x − f‖² + λ‖D·x‖² has ‖D·x‖ within 10 % of Δ (or λ = 0 if the Gauss–Newton step fits).
 * Returns λ; x in `x`. The strict lower triangle of `r` is overwritten (by qrsolv), R is kept.
 */
function levenbergMarquardtParameter(
	n: number,
	r: Float64Array,
	ldr: number,
	ipvt: Int32Array,
	diag: Float64Array,
	qtb: Float64Array,
	delta: number,
	parIn: number,
	x: Float64Array,
	sdiag: Float64Array
): number {
	const wa1 = new Float64Array(n);
	const wa2 = new Float64Array(n);
	let nsing = n;
	for (let j = 0; j < n; j++) {
		wa1[j] = qtb[j];
		if (r[j + j * ldr] === 0 && nsing === n) nsing = j;
		if (nsing < n) wa1[j] = 0;
	}
	for (let j = nsing - 1; j >= 0; j--) {
		wa1[j] /= r[j + j * ldr];
		const t = wa1[j];
		for (let i = 0; i < j; i++) wa1[i] -= r[i + j * ldr] * t;
	}
	for (let j = 0; j < n; j++) x[ipvt[j]] = wa1[j];

	for (let j = 0; j < n; j++) wa2[j] = diag[j] * x[j];
	let dxnorm = euclideanNorm(wa2);
	let fp = dxnorm - delta;
	if (fp <= 0.1 * delta) return 0;

	let parl = 0;
	if (nsing >= n) {
		for (let j = 0; j < n; j++) {
			const l = ipvt[j];
			wa1[j] = diag[l] * (wa2[l] / dxnorm);
		}
		for (let j = 0; j < n; j++) {
			let sum = 0;
			for (let i = 0; i < j; i++) sum += r[i + j * ldr] * wa1[i];
			wa1[j] = (wa1[j] - sum) / r[j + j * ldr];
		}
		const t = euclideanNorm(wa1);
		parl = fp / delta / t / t;
	}
	for (let j = 0; j < n; j++) {
		let sum = 0;
		for (let i = 0; i <= j; i++) sum += r[i + j * ldr] * qtb[i];
		wa1[j] = sum / diag[ipvt[j]];
	}
	const gnorm = euclideanNorm(wa1);
	let paru = gnorm / delta;
	if (paru === 0) paru = DWARF / Math.min(delta, 0.1);

	let par = Math.max(parIn, parl);
	par = Math.min(par, paru);
	if (par === 0) par = gnorm / dxnorm;

	for (let iter = 1; ; iter++) {
		if (par === 0) par = Math.max(DWARF, 0.001 * paru);
		const sq = Math.sqrt(par);
		for (let j = 0; j < n; j++) wa1[j] = sq * diag[j];
		solveRegularised(n, r, ldr, ipvt, wa1, qtb, x, sdiag);
		for (let j = 0; j < n; j++) wa2[j] = diag[j] * x[j];
		dxnorm = euclideanNorm(wa2);
		const previous = fp;
		fp = dxnorm - delta;
		if (Math.abs(fp) <= 0.1 * delta || (parl === 0 && fp <= previous && previous < 0) || iter === 10) break;
		for (let j = 0; j < n; j++) {
			const l = ipvt[j];
			wa1[j] = diag[l] * (wa2[l] / dxnorm);
		}
		for (let j = 0; j < n; j++) {
			wa1[j] /= sdiag[j];
			const t = wa1[j];
			for (let i = j + 1; i < n; i++) wa1[i] -= r[i + j * ldr] * t;
		}
		const t = euclideanNorm(wa1);
		const parc = fp / delta / t / t;
		if (fp > 0) parl = Math.max(parl, par);
		if (fp < 0) paru = Math.min(paru, par);
		par = Math.max(parl, par + parc);
	}
	return par;
}

/**
 * MINPACK `qrsolv`: with J·P = Q·R known, solve min ‖[R; D̃]·z − [Qᵀb; 0]‖ for the diagonal
 * D̃ = `d` (permuted to pivot order by ipvt) by Givens rotations, and return x = P·z.
 * S (the triangular factor of RᵀR + PᵀD²P) goes to the strict lower triangle of r and sdiag.
 */
function solveRegularised(
	n: number,
	r: Float64Array,
	ldr: number,
	ipvt: Int32Array,
	d: Float64Array,
	qtb: Float64Array,
	x: Float64Array,
	sdiag: Float64Array
): void {
	const wa = new Float64Array(n);
	for (let j = 0; j < n; j++) {
		for (let i = j; i < n; i++) r[i + j * ldr] = r[j + i * ldr];
		x[j] = r[j + j * ldr];
		wa[j] = qtb[j];
	}
	for (let j = 0; j < n; j++) {
		const l = ipvt[j];
		if (d[l] !== 0) {
			for (let k = j; k < n; k++) sdiag[k] = 0;
			sdiag[j] = d[l];
			let qtbpj = 0;
			for (let k = j; k < n; k++) {
				if (sdiag[k] === 0) continue;
				const rkk = r[k + k * ldr];
				let sin: number;
				let cos: number;
				if (Math.abs(rkk) < Math.abs(sdiag[k])) {
					const cotan = rkk / sdiag[k];
					sin = 0.5 / Math.sqrt(0.25 + 0.25 * cotan * cotan);
					cos = sin * cotan;
				} else {
					const tan = sdiag[k] / rkk;
					cos = 0.5 / Math.sqrt(0.25 + 0.25 * tan * tan);
					sin = cos * tan;
				}
				r[k + k * ldr] = cos * rkk + sin * sdiag[k];
				const t = cos * wa[k] + sin * qtbpj;
				qtbpj = -sin * wa[k] + cos * qtbpj;
				wa[k] = t;
				for (let i = k + 1; i < n; i++) {
					const rik = r[i + k * ldr];
					const u = cos * rik + sin * sdiag[i];
					sdiag[i] = -sin * rik + cos * sdiag[i];
					r[i + k * ldr] = u;
				}
			}
		}
		sdiag[j] = r[j + j * ldr];
		r[j + j * ldr] = x[j];
	}
	let nsing = n;
	for (let j = 0; j < n; j++) {
		if (sdiag[j] === 0 && nsing === n) nsing = j;
		if (nsing < n) wa[j] = 0;
	}
	for (let j = nsing - 1; j >= 0; j--) {
		let sum = 0;
		for (let i = j + 1; i < nsing; i++) sum += r[i + j * ldr] * wa[i];
		wa[j] = (wa[j] - sum) / sdiag[j];
	}
	for (let j = 0; j < n; j++) x[ipvt[j]] = wa[j];
}

/** Statistics at the solution: J recomputed there, rank by SVD of the column-scaled J. */
function finish(
	x: Float64Array,
	fvec: Float64Array,
	jacobianAt: ((p: Float64Array, f: Float64Array) => Float64Array | null) | null,
	statusIn: LeastSquaresStatus | null,
	iterations: number,
	evaluationCount: () => number,
	lower: number[],
	upper: number[],
	rankTolerance: number
): LeastSquaresResult {
	const n = x.length;
	const m = fvec.length;
	let status: LeastSquaresStatus = statusIn ?? 'max-evaluations';
	const params = Array.from(x);
	const residualsAtSolution = Array.from(fvec);
	let rss = 0;
	for (let i = 0; i < m; i++) rss += fvec[i] * fvec[i];
	const dof = m - n;
	const atBound = params.map((v, j) => (v <= lower[j] ? 'lower' : v >= upper[j] ? 'upper' : null));

	let jac: Float64Array | null = null;
	if (jacobianAt && status !== 'invalid-start') {
		jac = jacobianAt(x, fvec);
		if (!jac) status = 'invalid-jacobian';
	}
	const jacobianAtSolution: number[][] = Array.from({ length: m }, (_, i) =>
		Array.from({ length: n }, (_, j) => (jac ? jac[i + j * m] : NaN))
	);

	const identifiable = new Array<boolean>(n).fill(false);
	const covariance = Array.from({ length: n }, () => new Array<number>(n).fill(NaN));
	let rank = 0;
	let conditionNumber = Infinity;
	if (jac) {
		const colNorm = Array.from({ length: n }, (_, j) => euclideanNorm(jac!, j * m, j * m + m));
		const scaled = Array.from({ length: m }, (_, i) =>
			Array.from({ length: n }, (_, j) => (colNorm[j] > 0 ? jac![i + j * m] / colNorm[j] : 0))
		);
		const svd = rightSingularVectors(scaled);
		const smax = svd.values[0];
		const kept = svd.values.map((s) => smax > 0 && s > rankTolerance * smax);
		rank = kept.filter(Boolean).length;
		conditionNumber = rank === n ? smax / svd.values[n - 1] : Infinity;
		for (let j = 0; j < n; j++) {
			identifiable[j] = colNorm[j] > 0;
			for (let k = 0; k < n; k++)
				if (!kept[k] && Math.abs(svd.vectors[j][k]) > NULL_COMPONENT_THRESHOLD) identifiable[j] = false;
		}
		const s2 = dof > 0 ? rss / dof : NaN;
		for (let a = 0; a < n; a++) {
			for (let b = 0; b < n; b++) {
				if (!identifiable[a] || !identifiable[b]) {
					covariance[a][b] = a === b ? Infinity : NaN;
					continue;
				}
				let sum = 0;
				for (let k = 0; k < n; k++)
					if (kept[k]) sum += (svd.vectors[a][k] * svd.vectors[b][k]) / (svd.values[k] * svd.values[k]);
				covariance[a][b] = dof > 0 ? (s2 * sum) / (colNorm[a] * colNorm[b]) : a === b ? Infinity : NaN;
			}
		}
	}
	const standardErrors = covariance.map((row, j) => {
		const v = row[j];
		return Number.isFinite(v) && v >= 0 ? Math.sqrt(v) : Infinity;
	});
	const correlation = covariance.map((row, a) =>
		row.map((c, b) => {
			if (a === b) return Number.isFinite(standardErrors[a]) ? 1 : NaN;
			const den = standardErrors[a] * standardErrors[b];
			return Number.isFinite(den) && den > 0 ? c / den : NaN;
		})
	);
	const tQuantile975 = dof > 0 ? studentTQuantile(0.975, dof) : NaN;
	const confidence95 = params.map((v, j) =>
		Number.isFinite(standardErrors[j])
			? { lower: v - tQuantile975 * standardErrors[j], upper: v + tQuantile975 * standardErrors[j] }
			: { lower: -Infinity, upper: Infinity }
	);

	const converged = !['max-evaluations', 'invalid-start', 'invalid-jacobian'].includes(status);
	let message = MESSAGES[status];
	const notIdentifiable = identifiable.map((ok, j) => (ok ? -1 : j)).filter((j) => j >= 0);
	if (jac && notIdentifiable.length > 0)
		message += `; parameter(s) ${notIdentifiable.join(', ')} not identifiable (rank ${rank} of ${n}): standard errors not determined`;
	if (dof <= 0) message += '; no degrees of freedom: standard errors not determined';
	const bounded = atBound.map((b, j) => (b ? j : -1)).filter((j) => j >= 0);
	if (bounded.length > 0)
		message += `; parameter(s) ${bounded.join(', ')} on a bound: their standard errors assume the bound inactive`;

	return {
		converged,
		message,
		params,
		standardErrors,
		covariance,
		rss,
		dof,
		iterations,
		status,
		evaluations: evaluationCount(),
		residualSd: dof > 0 ? Math.sqrt(rss / dof) : NaN,
		correlation,
		tQuantile975,
		confidence95,
		rank,
		conditionNumber,
		identifiable,
		atBound,
		residualsAtSolution,
		jacobianAtSolution
	};
}
