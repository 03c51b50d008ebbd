import { describe, expect, it } from 'vitest';
import { PhysicsInputError } from '../errors';
import { createRandom } from '../random';
import {
	RAYLEIGH_CEP_PER_SIGMA,
	RAYLEIGH_MEAN_RADIUS_PER_SIGMA,
	RAYLEIGH_R95_PER_SIGMA,
	circleRadiusForProbability,
	exactCep,
	probabilityInsideCircle,
	probabilityOutsideCircle
} from './cep';

// reference-sheet.md §6 exact-CEP table, σ_x = 1 (checks_output.json key 6.CEP_elliptical_sx=1).
const CEP_TABLE: { ratio: number; exact: number; approx: number; pAtApprox: number }[] = [
	{ ratio: 1, exact: 1.17741, approx: 1.1774, pAtApprox: 0.49999 },
	{ ratio: 0.75, exact: 1.02709, approx: 1.03022, pAtApprox: 0.50208 },
	{ ratio: 0.5, exact: 0.87042, approx: 0.88305, pAtApprox: 0.50919 },
	{ ratio: 0.3, exact: 0.74994, approx: 0.76531, pAtApprox: 0.51092 },
	{ ratio: 0.25, exact: 0.72543, approx: 0.73588, pAtApprox: 0.5072 },
	{ ratio: 0.1, exact: 0.68199, approx: 0.64757, pAtApprox: 0.47761 }
];

/** |actual − expected| ≤ half a unit in the last quoted decimal. */
function expectRounded(actual: number, expected: number, decimals: number): void {
	expect(Math.abs(actual - expected)).toBeLessThanOrEqual(0.5 * 10 ** -decimals + 1e-12);
}

describe('Rayleigh constants (reference §6, circular normal)', () => {
	it('CEP = 1.177410σ, R95 = 2.447747σ, E[R] = 1.253314σ', () => {
		expectRounded(RAYLEIGH_CEP_PER_SIGMA, 1.17741, 6);
		expectRounded(RAYLEIGH_R95_PER_SIGMA, 2.447747, 6);
		expectRounded(RAYLEIGH_MEAN_RADIUS_PER_SIGMA, 1.253314, 6);
	});

	it('exactCep and the 95 % radius reduce to the Rayleigh constants for equal σ', () => {
		expect(exactCep(2, 2)).toBeCloseTo(2 * RAYLEIGH_CEP_PER_SIGMA, 13);
		expect(circleRadiusForProbability(3, 3, 0.95)).toBeCloseTo(3 * RAYLEIGH_R95_PER_SIGMA, 13);
	});

	it('E[R] = ∫₀^∞ P(R > r) dr = √(π/2)σ from probabilityInsideCircle (composite Simpson)', () => {
		const upper = 12;
		const steps = 2400;
		const h = upper / steps;
		let sum = 0;
		for (let i = 0; i <= steps; i++) {
			const weight = i === 0 || i === steps ? 1 : i % 2 === 1 ? 4 : 2;
			sum += weight * (1 - probabilityInsideCircle(1, 1, i * h));
		}
		expect((sum * h) / 3).toBeCloseTo(1.253314, 6);
	});
});

describe('exactCep (reference §6 table, σ_x = 1)', () => {
	for (const row of CEP_TABLE) {
		it(`σ_y/σ_x = ${row.ratio}: CEP ${row.exact}`, () => {
			expectRounded(exactCep(1, row.ratio), row.exact, 5);
			// The radius distribution does not care which axis is which.
			expect(exactCep(row.ratio, 1)).toBeCloseTo(exactCep(1, row.ratio), 13);
			expect(probabilityInsideCircle(1, row.ratio, exactCep(1, row.ratio))).toBeCloseTo(0.5, 13);
		});
	}

	it('scales with σ', () => {
		expect(exactCep(7, 3.5)).toBeCloseTo(7 * exactCep(1, 0.5), 12);
	});

	it('handles a degenerate (line) dispersion: CEP = 0.674490σ, the median of |X|', () => {
		// Φ⁻¹(0.75) = 0.6744897502 (scipy.stats.norm.ppf(0.75), computed for this test).
		expect(exactCep(1, 0)).toBeCloseTo(0.6744897502, 9);
		expect(exactCep(1, 1e-6)).toBeCloseTo(0.6744897502, 9);
		expect(exactCep(0, 0)).toBe(0);
	});

	it('resolves the narrow peak of a near-line dispersion at small r (mpmath erf quadrature, computed for this test)', () => {
		// The bracket end k·σmin puts r at the scale of σy ≪ σx: the integrand is ~r²/2 except within
		// ~1e-6 rad of π/2. This case once made the adaptive rule refine without end.
		expect(probabilityInsideCircle(1, 1e-6, 1.17741e-6) / 5.91172148253429e-7).toBeCloseTo(1, 9);
		expect(probabilityInsideCircle(1, 1e-4, 0.3)).toBeCloseTo(0.235822831664977, 12);
	});
});

describe('probabilityInsideCircle', () => {
	it('reference §6 "true P inside approx. radius" row: P(R ≤ 0.5887(σx + σy))', () => {
		for (const row of CEP_TABLE) {
			// checks.py evaluates P at the unrounded 0.5887·(1 + ratio); the table's radius row is rounded.
			const approx = 0.5887 * (1 + row.ratio);
			expectRounded(approx, row.approx, 5);
			expectRounded(probabilityInsideCircle(1, row.ratio, approx), row.pAtApprox, 5);
		}
	});

	it('equals the Rayleigh CDF for equal σ', () => {
		for (const r of [0.1, 1, 2.5]) {
			expect(probabilityInsideCircle(1.5, 1.5, r)).toBeCloseTo(1 - Math.exp(-(r * r) / (2 * 1.5 ** 2)), 15);
		}
	});

	it('equals erf(r/(σ√2)) when one σ is zero: erf(1) = 0.8427007929497149 (Python math.erf)', () => {
		expect(probabilityInsideCircle(1, 0, Math.SQRT2)).toBeCloseTo(0.8427007929497149, 13);
		expect(probabilityInsideCircle(0, 1, Math.SQRT2)).toBeCloseTo(0.8427007929497149, 13);
	});

	it('keeps relative accuracy for tiny radii: P ≈ r²/(2σxσy)', () => {
		const r = 1e-4;
		expect(probabilityInsideCircle(1, 0.5, r) / ((r * r) / (2 * 0.5))).toBeCloseTo(1, 6);
	});

	it('is monotone in r and bounded by [0, 1]', () => {
		let previous = 0;
		for (let r = 0; r <= 8; r += 0.25) {
			const p = probabilityInsideCircle(1, 0.2, r);
			expect(p).toBeGreaterThanOrEqual(previous);
			expect(p).toBeLessThanOrEqual(1);
			previous = p;
		}
		expect(probabilityInsideCircle(1, 0.2, -1)).toBe(0);
		expect(probabilityInsideCircle(1, 0.2, Infinity)).toBe(1);
		expect(probabilityInsideCircle(0, 0, 0)).toBe(1);
	});

	it('agrees with a seeded Monte Carlo within 4 standard errors (physics/random.ts createRandom, 2·10⁵ draws)', () => {
		const draws = 200_000;
		const cases = [
			{ sx: 1, sy: 0.3, r: 0.75 },
			{ sx: 2, sy: 0.5, r: 1.0 },
			{ sx: 0.4, sy: 1.3, r: 2.0 },
			{ sx: 1, sy: 0.05, r: 0.5 }
		];
		cases.forEach(({ sx, sy, r }, index) => {
			const random = createRandom(20_240_601 + index);
			let inside = 0;
			for (let i = 0; i < draws; i++) {
				const x = random.normal(0, sx);
				const y = random.normal(0, sy);
				if (x * x + y * y <= r * r) inside++;
			}
			const exact = probabilityInsideCircle(sx, sy, r);
			const standardError = Math.sqrt((exact * (1 - exact)) / draws);
			expect(Math.abs(inside / draws - exact)).toBeLessThan(4 * standardError);
		});
	});

	it('rejects negative or non-finite σ and NaN radius', () => {
		expect(() => probabilityInsideCircle(-1, 1, 1)).toThrow(PhysicsInputError);
		expect(() => probabilityInsideCircle(1, Number.NaN, 1)).toThrow(PhysicsInputError);
		expect(() => probabilityInsideCircle(1, 1, Number.NaN)).toThrow(PhysicsInputError);
		expect(() => circleRadiusForProbability(1, 1, 1)).toThrow(PhysicsInputError);
	});
});

describe('probabilityOutsideCircle', () => {
	it('complements probabilityInsideCircle', () => {
		for (const r of [0.05, 0.6, 1.7, 3]) {
			const sum = probabilityInsideCircle(1, 0.45, r) + probabilityOutsideCircle(1, 0.45, r);
			expect(sum).toBeCloseTo(1, 14);
		}
		expect(probabilityOutsideCircle(1, 0.45, -1)).toBe(1);
		expect(probabilityOutsideCircle(1, 0.45, Infinity)).toBe(0);
	});

	it('keeps relative accuracy in the far tail: erfc(6) = 2.1519736712498916e-17 (Python math.erfc)', () => {
		expect(probabilityOutsideCircle(1, 0, 6 * Math.SQRT2) / 2.1519736712498916e-17).toBeCloseTo(1, 10);
		// mpmath quad of the same angle integral at 40 digits (computed for this test).
		expect(probabilityOutsideCircle(1, 0.3, 5) / 6.021029219614504e-7).toBeCloseTo(1, 10);
	});
});

describe('circleRadiusForProbability', () => {
	it('solves far-tail levels through the outside probability: Q = 2⁻⁴⁰ at r = 7.1501564077 (mpmath, computed for this test)', () => {
		expect(circleRadiusForProbability(1, 0.3, 1 - 2 ** -40)).toBeCloseTo(7.1501564077074, 10);
	});

	it('inverts probabilityInsideCircle for several levels', () => {
		for (const p of [0.01, 0.5, 0.9, 0.95, 0.999]) {
			const r = circleRadiusForProbability(1.2, 0.35, p);
			expect(probabilityInsideCircle(1.2, 0.35, r)).toBeCloseTo(p, 12);
		}
	});
});
