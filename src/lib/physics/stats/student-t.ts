// Student's t distribution: CDF, two-sided p-value and quantile, through the regularized
// incomplete beta function. Used by trend.ts (slope test, mean interval) and meant to be shared by
// the calibration report (95 % intervals with t(0.975; n − p), reference §7).
//
// Why our own code: simple-statistics (a dependency) has no t distribution; jStat and @stdlib's
// t modules do, but are not dependencies and adding one is outside this module's remit. The
// implementation is short and is checked against the reference sheet's t quantiles (§7) and
// closed forms for ν = 1, 2, 3.

import { gammaln } from 'simple-statistics';
import { PhysicsInputError, requireInRange, requirePositive } from '../errors';

/** Continued-fraction convergence: relative change of the last factor (≈ machine precision). */
const CONTINUED_FRACTION_EPSILON = 1e-15;
/**
 * Iteration cap; the fraction needs O(√max(a, b)) terms, so 10 000 covers ν up to ~10⁸ (the
 * regime where t is indistinguishable from the normal anyway).
 */
const CONTINUED_FRACTION_MAX_TERMS = 10_000;
/** Guard against division by zero in the modified Lentz algorithm. */
const LENTZ_TINY = 1e-300;
const QUANTILE_MAX_ITERATIONS = 200;

function logBeta(a: number, b: number): number {
	return gammaln(a) + gammaln(b) - gammaln(a + b);
}

/**
 * Continued fraction for I_x(a, b) (DLMF §8.17(v), eq. 8.17.22 [memory]), evaluated with the modified
 * Lentz algorithm (Thompson & Barnett, J. Comput. Phys. 64 (1986) 490 [memory]); converges fast
 * for x < (a + 1)/(a + b + 2).
 */
function betaContinuedFraction(x: number, a: number, b: number): number {
	const qab = a + b;
	const qap = a + 1;
	const qam = a - 1;
	let c = 1;
	let d = 1 - (qab * x) / qap;
	if (Math.abs(d) < LENTZ_TINY) d = LENTZ_TINY;
	d = 1 / d;
	let h = d;
	for (let m = 1; m <= CONTINUED_FRACTION_MAX_TERMS; m++) {
		const m2 = 2 * m;
		// Even term d_{2m} = m(b − m)x / ((a + 2m − 1)(a + 2m)).
		let aa = (m * (b - m) * x) / ((qam + m2) * (a + m2));
		d = 1 + aa * d;
		if (Math.abs(d) < LENTZ_TINY) d = LENTZ_TINY;
		c = 1 + aa / c;
		if (Math.abs(c) < LENTZ_TINY) c = LENTZ_TINY;
		d = 1 / d;
		h *= d * c;
		// Odd term d_{2m+1} = −(a + m)(a + b + m)x / ((a + 2m)(a + 2m + 1)).
		aa = (-(a + m) * (qab + m) * x) / ((a + m2) * (qap + m2));
		d = 1 + aa * d;
		if (Math.abs(d) < LENTZ_TINY) d = LENTZ_TINY;
		c = 1 + aa / c;
		if (Math.abs(c) < LENTZ_TINY) c = LENTZ_TINY;
		d = 1 / d;
		const factor = d * c;
		h *= factor;
		if (Math.abs(factor - 1) <= CONTINUED_FRACTION_EPSILON) return h;
	}
	throw new Error(`incomplete beta continued fraction did not converge (a=${a}, b=${b}, x=${x})`);
}

/**
 * Regularized incomplete beta I_x(a, b) given both x and y = 1 − x, so callers that know 1 − x
 * more accurately than by subtraction (the t distribution does) keep that accuracy. Uses the
 * symmetry I_x(a, b) = 1 − I_{1−x}(b, a) (DLMF 8.17.4 [memory]) to stay in the fast-converging region.
 */
function incompleteBeta(x: number, y: number, a: number, b: number): number {
	if (x <= 0) return 0;
	if (y <= 0) return 1;
	const logFront = a * Math.log(x) + b * Math.log(y) - logBeta(a, b);
	if (x < (a + 1) / (a + b + 2)) {
		return (Math.exp(logFront) * betaContinuedFraction(x, a, b)) / a;
	}
	return 1 - (Math.exp(logFront) * betaContinuedFraction(y, b, a)) / b;
}

/** Regularized incomplete beta function I_x(a, b) for a, b > 0 and 0 ≤ x ≤ 1. */
export function regularizedIncompleteBeta(x: number, a: number, b: number): number {
	requirePositive(a, 'a');
	requirePositive(b, 'b');
	requireInRange(x, 'x', { min: 0, max: 1 });
	return incompleteBeta(x, 1 - x, a, b);
}

/** t = ±∞ is allowed (CDF 0 or 1); only NaN is refused. */
function requireNotNaN(t: number): void {
	if (typeof t !== 'number' || Number.isNaN(t)) {
		throw new PhysicsInputError('t', 'not-finite', `t must be a number (got ${String(t)})`);
	}
}

/**
 * Upper tail P(T > |t|) = ½ I_{ν/(ν+t²)}(ν/2, ½): substituting x = ν/(ν + t²) in the integral of
 * the t density over (|t|, ∞) turns it into ½ of the incomplete beta integral.
 */
function upperTail(t: number, dof: number): number {
	const magnitude = Math.abs(t);
	if (magnitude === Infinity) return 0;
	if (magnitude <= Math.sqrt(dof)) {
		const t2 = magnitude * magnitude;
		return 0.5 * incompleteBeta(dof / (dof + t2), t2 / (dof + t2), dof / 2, 0.5);
	}
	// Far tail: with u = √ν/|t| ≤ 1, x = u²/(1 + u²) never forms t², which overflows past ~1e154.
	const u2 = (Math.sqrt(dof) / magnitude) ** 2;
	return 0.5 * incompleteBeta(u2 / (1 + u2), 1 / (1 + u2), dof / 2, 0.5);
}

/** Density of Student's t with ν degrees of freedom. */
function studentTDensity(t: number, dof: number): number {
	const logNorm = gammaln((dof + 1) / 2) - gammaln(dof / 2) - 0.5 * Math.log(dof * Math.PI);
	return Math.exp(logNorm - ((dof + 1) / 2) * Math.log1p((t * t) / dof));
}

/** P(T ≤ t) for Student's t with `dof` (> 0, need not be an integer) degrees of freedom. */
export function studentTCdf(t: number, dof: number): number {
	requirePositive(dof, 'dof');
	requireNotNaN(t);
	const tail = upperTail(t, dof);
	return t >= 0 ? 1 - tail : tail;
}

/**
 * Two-sided p-value P(|T| ≥ |t|) = I_{ν/(ν+t²)}(ν/2, ½), computed directly (not as 2(1 − CDF)) so
 * small p-values keep their relative accuracy.
 */
export function studentTTwoSidedPValue(t: number, dof: number): number {
	requirePositive(dof, 'dof');
	requireNotNaN(t);
	return Math.min(1, 2 * upperTail(t, dof));
}

/**
 * Quantile t(p; ν): the t with P(T ≤ t) = p, for 0 < p < 1. Solves upperTail(t) = min(p, 1 − p)
 * for t ≥ 0 by Newton's method on the log of the tail (nearly linear in log t for heavy tails),
 * safeguarded by a bracket and bisection, then applies the sign by symmetry. Accurate while the
 * beta argument ν/(ν + t²) stays a normal double: for ν = 1 that is tails down to about 1e-150,
 * for ν ≥ 2 far beyond any probability a test plan uses.
 */
export function studentTQuantile(p: number, dof: number): number {
	requirePositive(dof, 'dof');
	requireInRange(p, 'p', { min: 0, max: 1, minExclusive: true, maxExclusive: true });
	if (p === 0.5) return 0;
	const q = p < 0.5 ? p : 1 - p;
	const logQ = Math.log(q);

	// Bracket [lo, hi] with tail(lo) ≥ q > tail(hi); tail(0) = ½ > q.
	let lo = 0;
	let hi = 1;
	while (upperTail(hi, dof) >= q) {
		lo = hi;
		hi *= 2;
	}
	let t = (lo + hi) / 2;
	for (let i = 0; i < QUANTILE_MAX_ITERATIONS; i++) {
		const tail = upperTail(t, dof);
		if (tail > q) lo = t;
		else hi = t;
		// d ln(tail)/dt = −density/tail.
		let next = t + ((Math.log(tail) - logQ) * tail) / studentTDensity(t, dof);
		if (!(next > lo && next < hi)) next = (lo + hi) / 2;
		if (Math.abs(next - t) <= 2 * Number.EPSILON * next || hi - lo <= 2 * Number.EPSILON * hi) {
			t = next;
			break;
		}
		t = next;
	}
	return p < 0.5 ? -t : t;
}
