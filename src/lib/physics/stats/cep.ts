// Circular probable error and hit probabilities for an elliptical (unequal-σ) normal dispersion.
// Source of the problem statement and check values: shared/reference/reference-sheet.md §6
// ("exact CEP solves P(x² + y² ≤ r²) = 0.5 (1-D quadrature + root find)", table for σ_x = 1).
//
// Why our own code: no npm package computes this probability. It is the CDF of a quadratic form
// in normals (the Hoyt / Nakagami-q distribution for the centred case; Grubbs, Oper. Res. 12 (1964)
// 51-62 treats the offset-circle variant [memory]). The npm index has no Hoyt, Nakagami-q or CEP
// package; @stdlib only ships the Rayleigh CDF, i.e. the equal-σ case, which is closed form anyway.
//
// All lengths are in one consistent unit (metres in the app; the worked examples use mm); results
// are in that same unit.

import { PhysicsInputError, requireInRange, requireNonNegative } from '../errors';
import { brentRoot } from '../roots';
import { integrateAdaptive } from './quadrature';

/** CEP/σ for a circular normal: √(2 ln 2) (Rayleigh distribution; reference §6: 1.177 410). */
export const RAYLEIGH_CEP_PER_SIGMA = Math.sqrt(2 * Math.LN2);
/** R95/σ for a circular normal: √(−2 ln 0.05) (reference §6: 2.447 747). */
export const RAYLEIGH_R95_PER_SIGMA = Math.sqrt(-2 * Math.log(0.05));
/** E[R]/σ for a circular normal: √(π/2) (reference §6: 1.253 314). */
export const RAYLEIGH_MEAN_RADIUS_PER_SIGMA = Math.sqrt(Math.PI / 2);

/**
 * Relative tolerance of the angle quadrature: near machine precision, far tighter than the
 * 5-decimal reference table needs, so the root finder sees a smooth function of r.
 */
const QUADRATURE_RELATIVE_TOLERANCE = 1e-13;

/**
 * The angle integral behind both probabilities. With x = σx ρ cos φ, y = σy ρ sin φ the density
 * becomes ρ e^(−ρ²/2)/(2π) and the radial integral is closed form, leaving one smooth, bounded,
 * periodic angle integral (four-fold symmetric):
 *   P(inside) = (2/π) ∫₀^{π/2} [1 − exp(−r² / (2 s²(φ)))] dφ,   s²(φ) = σx² cos²φ + σy² sin²φ,
 *   P(outside) = (2/π) ∫₀^{π/2} exp(−r² / (2 s²(φ))) dφ.
 * Each is integrated directly (not as 1 − the other) so both keep relative accuracy in their small
 * range: `−expm1` for r ≪ σ, `exp` in the far tail. For σy = 0 they reduce to erf/erfc(r/(σx√2))
 * (Craig's form of erfc), for σx = σy to the Rayleigh CDF and survival function.
 * When σy ≪ σx the integrand changes within ~σy/σx of φ = π/2, but it approaches that region as
 * 1/cos²φ, which no polynomial panel fits, so the adaptive rule is drawn into it rather than
 * stepping over it (checked against mpmath down to σy/σx = 1e-6 in cep.spec.ts).
 */
function circleProbability(sigmaX: number, sigmaY: number, r: number, outside: boolean): number {
	requireNonNegative(sigmaX, 'sigmaX');
	requireNonNegative(sigmaY, 'sigmaY');
	// r = +∞ is a legitimate question (P = 1), so only NaN is refused.
	if (typeof r !== 'number' || Number.isNaN(r)) {
		throw new PhysicsInputError('r', 'not-finite', `r must be a number (got ${String(r)})`);
	}
	let inside: number | null = null;
	if (r < 0) inside = 0;
	else if (r === Infinity) inside = 1;
	else if (r === 0) inside = sigmaX === 0 && sigmaY === 0 ? 1 : 0;
	if (inside !== null) return outside ? 1 - inside : inside;

	const vx = sigmaX * sigmaX;
	const vy = sigmaY * sigmaY;
	const r2 = r * r;
	// s² = 0 only when a σ is 0 (at that angle): r²/0 = ∞ gives exp(−∞) = 0, the right limit.
	const term = outside ? (u: number) => Math.exp(-u) : (u: number) => -Math.expm1(-u);
	if (vx === vy) return term(r2 / (2 * vx));
	const integrand = (phi: number): number => {
		const c = Math.cos(phi);
		const s = Math.sin(phi);
		return term(r2 / (2 * (vx * c * c + vy * s * s)));
	};
	const p = (2 / Math.PI) * integrateAdaptive(integrand, 0, Math.PI / 2, QUADRATURE_RELATIVE_TOLERANCE);
	return Math.min(1, Math.max(0, p));
}

/** P(X² + Y² ≤ r²) for independent, centred X ~ N(0, σx²), Y ~ N(0, σy²). */
export function probabilityInsideCircle(sigmaX: number, sigmaY: number, r: number): number {
	return circleProbability(sigmaX, sigmaY, r, false);
}

/**
 * P(X² + Y² > r²), computed directly so tail probabilities (a shot missing a generous tolerance
 * radius) keep their relative accuracy instead of vanishing in 1 − P.
 */
export function probabilityOutsideCircle(sigmaX: number, sigmaY: number, r: number): number {
	return circleProbability(sigmaX, sigmaY, r, true);
}

/**
 * Radius r with P(X² + Y² ≤ r²) = p for independent centred normals (σx, σy): the exact CEP at
 * p = 0.5, the exact R95 at p = 0.95.
 *
 * Bracket: P falls as either σ grows, so P(σmax, σmax, r) ≤ P(σx, σy, r) ≤ P(σmin, σmin, r); with
 * the Rayleigh radius k = √(−2 ln(1 − p)) the root lies in [k·σmin, k·σmax]. Brent's method on
 * that proven bracket of a monotone function (shared roots.ts) converges to machine precision.
 */
export function circleRadiusForProbability(sigmaX: number, sigmaY: number, p: number): number {
	requireNonNegative(sigmaX, 'sigmaX');
	requireNonNegative(sigmaY, 'sigmaY');
	requireInRange(p, 'p', { min: 0, max: 1, minExclusive: true, maxExclusive: true });
	const k = Math.sqrt(-2 * Math.log1p(-p));
	const lo = k * Math.min(sigmaX, sigmaY);
	const hi = k * Math.max(sigmaX, sigmaY);
	if (hi === lo) return hi;
	// Solve in the better-conditioned form: the inside probability below the median, the outside
	// (tail) probability above it, where 1 − P would leave only a few significant digits.
	const q = 1 - p;
	const gap =
		p <= 0.5
			? (r: number) => probabilityInsideCircle(sigmaX, sigmaY, r) - p
			: (r: number) => q - probabilityOutsideCircle(sigmaX, sigmaY, r);
	const { root } = brentRoot(gap, lo, hi);
	// Always inside [lo, hi]; a quadrature-noise stall near the root still leaves it within ~1e-13.
	return root;
}

/** Exact circular probable error for independent centred normals: P(R ≤ CEP) = 0.5. */
export function exactCep(sigmaX: number, sigmaY: number): number {
	return circleRadiusForProbability(sigmaX, sigmaY, 0.5);
}
