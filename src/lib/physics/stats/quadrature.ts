// Adaptive Gauss–Legendre quadrature for smooth, bounded 1-D integrands (used by the exact CEP in
// cep.ts). Kept inside stats/ and not re-exported from the physics barrel: it is a helper, not API.
//
// Method: an N-point Gauss–Legendre rule on a panel is compared with the same rule on the panel's
// two halves; the halves are accepted when the two estimates agree within the panel's share of the
// tolerance, otherwise each half is refined (the classic adaptive bisection scheme, e.g. Davis &
// Rabinowitz, *Methods of Numerical Integration*, 2nd ed. (1984), ch. 6 [memory]).

/** Points per panel. Ten points integrate polynomials up to degree 19 exactly. */
const GAUSS_LEGENDRE_POINTS = 10;
/** Bisection depth limit; at 2^-40 of the interval the panels are far below any feature we meet. */
const MAX_PANEL_DEPTH = 40;
/**
 * A panel is also accepted once its two estimates agree to rounding level: halving the tolerance
 * at every level would otherwise demand more than double precision can give when the first,
 * whole-interval estimate missed a narrow peak (it sets the tolerance) and refine without end.
 */
const ROUNDING_AGREEMENT = 64 * Number.EPSILON;
/** Backstop on the number of panel splits, far above the few hundred a smooth integrand needs. */
const MAX_PANEL_SPLITS = 100_000;

/**
 * Nodes and weights of the N-point Gauss–Legendre rule on [-1, 1], computed once by Newton's method
 * on P_N with the three-term recurrence (Press et al., *Numerical Recipes*, 3rd ed. (2007), §4.6,
 * `gauleg` [memory]); computing them avoids transcribing 20 constants by hand.
 */
function gaussLegendreRule(order: number): { nodes: number[]; weights: number[] } {
	const nodes = new Array<number>(order);
	const weights = new Array<number>(order);
	const half = Math.floor((order + 1) / 2);
	for (let i = 0; i < half; i++) {
		// Tricomi's asymptotic starting value for the i-th root.
		let z = Math.cos((Math.PI * (i + 0.75)) / (order + 0.5));
		let derivative = 0;
		for (let iteration = 0; iteration < 100; iteration++) {
			let p0 = 1;
			let p1 = 0;
			for (let j = 1; j <= order; j++) {
				const p2 = p1;
				p1 = p0;
				p0 = ((2 * j - 1) * z * p1 - (j - 1) * p2) / j;
			}
			derivative = (order * (z * p0 - p1)) / (z * z - 1);
			const step = p0 / derivative;
			z -= step;
			if (Math.abs(step) <= 1e-16) break;
		}
		nodes[i] = -z;
		nodes[order - 1 - i] = z;
		const w = 2 / ((1 - z * z) * derivative * derivative);
		weights[i] = w;
		weights[order - 1 - i] = w;
	}
	return { nodes, weights };
}

const RULE = gaussLegendreRule(GAUSS_LEGENDRE_POINTS);

function gaussLegendrePanel(f: (x: number) => number, a: number, b: number): number {
	const halfWidth = (b - a) / 2;
	const middle = (a + b) / 2;
	let sum = 0;
	for (let i = 0; i < RULE.nodes.length; i++) {
		sum += RULE.weights[i] * f(middle + halfWidth * RULE.nodes[i]);
	}
	return sum * halfWidth;
}

/**
 * ∫_a^b f(x) dx for a smooth integrand. `relativeTolerance` is relative to the magnitude of the
 * integral (first estimate), with `absoluteTolerance` as a floor for integrals near zero.
 */
export function integrateAdaptive(
	f: (x: number) => number,
	a: number,
	b: number,
	relativeTolerance = 1e-13,
	absoluteTolerance = 1e-300
): number {
	const whole = gaussLegendrePanel(f, a, b);
	const tolerance = Math.max(relativeTolerance * Math.abs(whole), absoluteTolerance);
	let splits = 0;
	const refine = (lo: number, hi: number, estimate: number, tol: number, depth: number): number => {
		const mid = (lo + hi) / 2;
		const left = gaussLegendrePanel(f, lo, mid);
		const right = gaussLegendrePanel(f, mid, hi);
		const refined = left + right;
		const difference = Math.abs(refined - estimate);
		splits++;
		if (
			difference <= tol ||
			difference <= ROUNDING_AGREEMENT * (Math.abs(left) + Math.abs(right)) ||
			depth >= MAX_PANEL_DEPTH ||
			splits >= MAX_PANEL_SPLITS
		) {
			return refined;
		}
		return (
			refine(lo, mid, left, tol / 2, depth + 1) + refine(mid, hi, right, tol / 2, depth + 1)
		);
	};
	return refine(a, b, whole, tolerance, 0);
}
