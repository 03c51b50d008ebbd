import { describe, expect, it } from 'vitest';
import { brentRoot, goldenSectionMaximum } from './roots';

describe('brentRoot (Brent 1973, ch. 4)', () => {
	it('cos x = x: 0.7390851332151607 (the Dottie number; from memory)', () => {
		const r = brentRoot((x) => Math.cos(x) - x, 0, 1);
		expect(r.converged).toBe(true);
		expect(Math.abs(r.root - 0.7390851332151607)).toBeLessThan(2e-16);
	});

	it("Wallis's cubic x³ − 2x − 5 = 0: 2.0945514815423265 (from memory)", () => {
		const r = brentRoot((x) => x ** 3 - 2 * x - 5, 2, 3);
		expect(Math.abs(r.root - 2.0945514815423265)).toBeLessThan(1e-15);
		expect(r.iterations).toBeLessThan(12);
	});

	it('stops at the requested absolute tolerance and copes with a flat, steep function', () => {
		const r = brentRoot((x) => Math.sign(x - 1) * Math.abs(x - 1) ** 8, 0, 3, { tolerance: 1e-6 });
		expect(r.converged).toBe(true);
		expect(Math.abs(r.root - 1)).toBeLessThan(1e-5);
	});

	it('reports no convergence, never NaN, without a sign change', () => {
		const r = brentRoot((x) => x * x + 1, -1, 2);
		expect(r.converged).toBe(false);
		expect(Number.isFinite(r.root)).toBe(true);
	});

	it('returns an end point that is itself a root', () => {
		expect(brentRoot((x) => x - 2, 2, 5).root).toBe(2);
	});
});

describe('goldenSectionMaximum (Kiefer 1953)', () => {
	it('finds the top of a parabola (to ~√ε: near a maximum f is flat to rounding)', () => {
		const m = goldenSectionMaximum((x) => 3 - (x - 1.25) ** 2, -4, 9, 1e-9);
		expect(Math.abs(m.x - 1.25)).toBeLessThan(1e-7);
		expect(m.value).toBeCloseTo(3, 12);
	});
});
