// Scalar root finding and maximisation on a bracket, shared by the event location of the flight
// integrator and the setup solvers.

/** Unit round-off of IEEE double precision, 2⁻⁵². */
const EPSILON = Number.EPSILON;
/** Iteration cap for the bracketed searches; Brent needs far fewer on smooth functions. */
const MAX_ITERATIONS = 200;
/** 1/φ: the golden-section shrink factor (Kiefer 1953). */
const INVERSE_GOLDEN_RATIO = (Math.sqrt(5) - 1) / 2;

export interface RootResult {
	/** False only if the bracket had no sign change or the iteration cap was hit. */
	converged: boolean;
	root: number;
	/** f(root). */
	value: number;
	iterations: number;
}

export interface RootOptions {
	/** Absolute tolerance on the root, in the units of x; default 0 (to machine precision). */
	tolerance?: number;
	maxIterations?: number;
}

/**
 * A zero of f in [a, b] where f(a) and f(b) differ in sign, by Brent's method: inverse quadratic
 * interpolation or secant steps, falling back to bisection whenever they would not shrink the
 * bracket fast enough, so convergence is never slower than bisection (R.P. Brent, "Algorithms
 * for Minimization without Derivatives", Prentice-Hall 1973, ch. 4, procedure zero).
 */
export function brentRoot(f: (x: number) => number, a: number, b: number, options: RootOptions = {}): RootResult {
	const tolerance = options.tolerance ?? 0;
	const maxIterations = options.maxIterations ?? MAX_ITERATIONS;
	let fa = f(a);
	let fb = f(b);
	if (fa === 0) return { converged: true, root: a, value: fa, iterations: 0 };
	if (fb === 0) return { converged: true, root: b, value: fb, iterations: 0 };
	if (Math.sign(fa) === Math.sign(fb) || !Number.isFinite(fa) || !Number.isFinite(fb)) {
		return { converged: false, root: Math.abs(fa) < Math.abs(fb) ? a : b, value: Math.min(Math.abs(fa), Math.abs(fb)), iterations: 0 };
	}
	// b is the best estimate, a the previous one, c the far end of the bracket [b, c].
	let c = a;
	let fc = fa;
	let d = b - a;
	let e = d;
	for (let iteration = 1; iteration <= maxIterations; iteration++) {
		if (Math.sign(fb) === Math.sign(fc)) {
			c = a;
			fc = fa;
			d = b - a;
			e = d;
		}
		if (Math.abs(fc) < Math.abs(fb)) {
			a = b;
			b = c;
			c = a;
			fa = fb;
			fb = fc;
			fc = fa;
		}
		const tol = 2 * EPSILON * Math.abs(b) + 0.5 * tolerance;
		const half = 0.5 * (c - b);
		if (Math.abs(half) <= tol || fb === 0) return { converged: true, root: b, value: fb, iterations: iteration };
		if (Math.abs(e) >= tol && Math.abs(fa) > Math.abs(fb)) {
			const s = fb / fa;
			let p: number;
			let q: number;
			if (a === c) {
				p = 2 * half * s; // secant
				q = 1 - s;
			} else {
				const qa = fa / fc; // inverse quadratic interpolation
				const r = fb / fc;
				p = s * (2 * half * qa * (qa - r) - (b - a) * (r - 1));
				q = (qa - 1) * (r - 1) * (s - 1);
			}
			if (p > 0) q = -q;
			p = Math.abs(p);
			if (2 * p < Math.min(3 * half * q - Math.abs(tol * q), Math.abs(e * q))) {
				e = d;
				d = p / q;
			} else {
				d = half;
				e = d;
			}
		} else {
			d = half;
			e = d;
		}
		a = b;
		fa = fb;
		b += Math.abs(d) > tol ? d : half > 0 ? tol : -tol;
		fb = f(b);
	}
	return { converged: false, root: b, value: fb, iterations: maxIterations };
}

export interface MaximumResult {
	x: number;
	value: number;
	iterations: number;
}

/**
 * The maximum of a unimodal f on [a, b] by golden-section search, to an interval of width
 * `tolerance` (J. Kiefer, "Sequential minimax search for a maximum", Proc. AMS 4 (1953) 502).
 */
export function goldenSectionMaximum(
	f: (x: number) => number,
	a: number,
	b: number,
	tolerance: number
): MaximumResult {
	let x1 = b - INVERSE_GOLDEN_RATIO * (b - a);
	let x2 = a + INVERSE_GOLDEN_RATIO * (b - a);
	let f1 = f(x1);
	let f2 = f(x2);
	let iterations = 0;
	while (Math.abs(b - a) > tolerance && iterations < MAX_ITERATIONS) {
		iterations++;
		if (f1 < f2) {
			a = x1;
			x1 = x2;
			f1 = f2;
			x2 = a + INVERSE_GOLDEN_RATIO * (b - a);
			f2 = f(x2);
		} else {
			b = x2;
			x2 = x1;
			f2 = f1;
			x1 = b - INVERSE_GOLDEN_RATIO * (b - a);
			f1 = f(x1);
		}
	}
	return f1 >= f2 ? { x: x1, value: f1, iterations } : { x: x2, value: f2, iterations };
}
