import { describe, expect, it } from 'vitest';
import { PhysicsInputError } from '../errors';
import {
	regularizedIncompleteBeta,
	studentTCdf,
	studentTQuantile,
	studentTTwoSidedPValue
} from './student-t';

describe('studentTQuantile', () => {
	it('reference §7: t(0.975, 8) = 2.306004, t(0.975, 12) = 2.178813, t(0.975, 30) = 2.042272', () => {
		expect(studentTQuantile(0.975, 8)).toBeCloseTo(2.306004, 6);
		expect(studentTQuantile(0.975, 12)).toBeCloseTo(2.178813, 6);
		expect(studentTQuantile(0.975, 30)).toBeCloseTo(2.042272, 6);
	});

	it('closed forms: ν = 1 (Cauchy) t = tan(π(p − ½)); ν = 2 t = (2p − 1)/√(2p(1 − p))', () => {
		for (const p of [0.6, 0.9, 0.975, 0.999]) {
			expect(studentTQuantile(p, 1)).toBeCloseTo(Math.tan(Math.PI * (p - 0.5)), 9);
			expect(studentTQuantile(p, 2)).toBeCloseTo((2 * p - 1) / Math.sqrt(2 * p * (1 - p)), 11);
		}
	});

	it('matches scipy.stats.t.ppf (computed for this test), including tails and non-integer ν', () => {
		const cases: [number, number, number][] = [
			[0.975, 1000, 1.96233908083],
			[0.995, 3, 5.84090930973],
			[0.9, 5, 1.47588404882],
			[0.975, 2.5, 3.574654842],
			[0.975, 1e5, 1.95998770753],
			[0.999999, 4, 41.5778541502],
			[1e-10, 7, -53.8355794847],
			[0.975, 9, 2.2621571628],
			[0.975, 0.05, 1.1958337585475138e25],
			[1e-100, 1, -3.183098861837907e99],
			// mpmath (30 digits, betainc + findroot, computed for this test): scipy 1.17.1's t.ppf gives
			// −2.3976e66 here, half the true value; the tail 1.1027/t³ confirms mpmath's −4.7953e66.
			[1e-200, 3, -4.79527572046922e66]
		];
		for (const [p, dof, t] of cases) {
			expect(studentTQuantile(p, dof) / t).toBeCloseTo(1, 9);
		}
	});

	it('is antisymmetric and inverts the CDF', () => {
		for (const dof of [1, 3, 7.5, 40]) {
			for (const p of [0.001, 0.2, 0.5, 0.8, 0.99]) {
				const t = studentTQuantile(p, dof);
				expect(studentTQuantile(1 - p, dof)).toBeCloseTo(-t, 9);
				expect(studentTCdf(t, dof)).toBeCloseTo(p, 13);
			}
		}
	});

	it('rejects p outside (0, 1) and non-positive dof', () => {
		expect(() => studentTQuantile(0, 5)).toThrow(PhysicsInputError);
		expect(() => studentTQuantile(1, 5)).toThrow(PhysicsInputError);
		expect(() => studentTQuantile(0.5, 0)).toThrow(PhysicsInputError);
	});
});

describe('studentTCdf and studentTTwoSidedPValue', () => {
	it('t = 2.228 on 10 dof gives a two-sided p of 0.05 (t(0.975, 10) = 2.228 in printed tables; scipy: 0.0500118)', () => {
		expect(studentTTwoSidedPValue(2.228, 10)).toBeCloseTo(0.05001177182, 9);
	});

	it('closed forms: ν = 1 F = ½ + atan(t)/π; ν = 2 F = ½ + t/(2√(t² + 2)); ν = 3 F = ½ + (θ + sinθcosθ)/π, θ = atan(t/√3)', () => {
		for (const t of [-5, -0.7, 0, 0.3, 2, 30]) {
			expect(studentTCdf(t, 1)).toBeCloseTo(0.5 + Math.atan(t) / Math.PI, 14);
			expect(studentTCdf(t, 2)).toBeCloseTo(0.5 + t / (2 * Math.sqrt(t * t + 2)), 14);
			const theta = Math.atan(t / Math.sqrt(3));
			const nu3 = 0.5 + (theta + Math.sin(theta) * Math.cos(theta)) / Math.PI;
			expect(studentTCdf(t, 3)).toBeCloseTo(nu3, 14);
		}
	});

	it('matches scipy.stats.t.cdf / sf (computed for this test)', () => {
		expect(studentTCdf(1.5, 7)).toBeCloseTo(0.911350756505015, 13);
		expect(studentTCdf(-0.3, 4.5)).toBeCloseTo(0.388766773519716, 13);
		expect(studentTCdf(3, 200)).toBeCloseTo(0.998478476443047, 13);
		// Small tails keep relative accuracy through the p-value path.
		expect(studentTTwoSidedPValue(40, 3) / (2 * 1.71903403945793e-5)).toBeCloseTo(1, 10);
	});

	it('handles infinite t and rejects NaN', () => {
		expect(studentTCdf(Infinity, 4)).toBe(1);
		expect(studentTCdf(-Infinity, 4)).toBe(0);
		expect(studentTTwoSidedPValue(0, 4)).toBe(1);
		expect(() => studentTCdf(Number.NaN, 4)).toThrow(PhysicsInputError);
	});
});

describe('regularizedIncompleteBeta (closed forms, DLMF §8.17)', () => {
	it('I_x(a, 1) = xᵃ, I_x(1, b) = 1 − (1 − x)ᵇ, I_x(½, ½) = (2/π)·asin(√x)', () => {
		for (const x of [0.01, 0.3, 0.5, 0.77, 0.999]) {
			expect(regularizedIncompleteBeta(x, 3.5, 1)).toBeCloseTo(x ** 3.5, 14);
			expect(regularizedIncompleteBeta(x, 1, 6)).toBeCloseTo(1 - (1 - x) ** 6, 14);
			const arcsine = (2 / Math.PI) * Math.asin(Math.sqrt(x));
			expect(regularizedIncompleteBeta(x, 0.5, 0.5)).toBeCloseTo(arcsine, 14);
		}
		expect(regularizedIncompleteBeta(0, 2, 3)).toBe(0);
		expect(regularizedIncompleteBeta(1, 2, 3)).toBe(1);
	});
});
