import { linearRegression, sampleCorrelation, tTest } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { PhysicsInputError } from '../errors';
import { DRIFT_P_THRESHOLD, linearTrend, meanWithInterval } from './trend';

describe('linearTrend', () => {
	// Hand computation: x̄ = 2, ȳ = 3, Sxx = 10, Sxy = 8 → b = 0.8, a = 1.4; residuals
	// (−0.4, 0.8, −1.0, 1.2, −0.6), RSS = 3.6, s² = 1.2, SE(b) = √0.12, t = 4/√3 on 3 dof;
	// two-sided p from the ν = 3 closed form 1 − (2/π)(θ + sinθcosθ), θ = atan(4/3), sinθcosθ = 0.48.
	const y = [1, 3, 2, 5, 4];

	it('reproduces a hand-computed regression (slope 0.8, SE √0.12, t 4/√3, p 0.104088)', () => {
		const trend = linearTrend(y);
		expect(trend.slope).toBeCloseTo(0.8, 14);
		expect(trend.intercept).toBeCloseTo(1.4, 14);
		expect(trend.slopeStandardError).toBeCloseTo(Math.sqrt(0.12), 14);
		expect(trend.tStatistic).toBeCloseTo(4 / Math.sqrt(3), 13);
		expect(trend.dof).toBe(3);
		expect(trend.pValue).toBeCloseTo(1 - (2 / Math.PI) * (Math.atan(4 / 3) + 0.48), 13);
		// scipy: 2·t.sf(4/√3, 3) = 0.104088038662 (computed for this test).
		expect(trend.pValue).toBeCloseTo(0.104088038662, 11);
		expect(trend.driftFlag).toBe(false);
		expect(trend.reason).toBeNull();
	});

	it('agrees with simple-statistics: slope from linearRegression, t = r√(n − 2)/√(1 − r²) from sampleCorrelation', () => {
		const x = [0.0, 12.5, 31.0, 44.2, 60.1, 75.3, 90.8, 104.0];
		const values = [0.31, -0.12, 0.45, 0.08, 0.52, 0.27, 0.71, 0.49];
		const trend = linearTrend(values, x);
		expect(trend.slope).toBeCloseTo(linearRegression(x.map((xi, i) => [xi, values[i]])).m, 14);
		const r = sampleCorrelation(x, values);
		expect(trend.tStatistic).toBeCloseTo((r * Math.sqrt(x.length - 2)) / Math.sqrt(1 - r * r), 12);
	});

	it('flags a clear drift at the common-practice 5 % level', () => {
		expect(DRIFT_P_THRESHOLD).toBe(0.05);
		const drifting = Array.from({ length: 12 }, (_, i) => 0.05 * i + (i % 2 === 0 ? 0.02 : -0.02));
		const trend = linearTrend(drifting);
		expect(trend.pValue).toBeLessThan(0.001);
		expect(trend.driftFlag).toBe(true);
	});

	it('uses the given positions (e.g. time in s) instead of shot order', () => {
		const byOrder = linearTrend(y);
		const byTime = linearTrend(
			y,
			[0, 1, 2, 3, 4].map((i) => 60 * i)
		);
		expect(byTime.slope).toBeCloseTo(byOrder.slope! / 60, 15);
		expect(byTime.pValue).toBeCloseTo(byOrder.pValue!, 13);
	});

	it('returns nulls with a reason when the test cannot be formed', () => {
		expect(linearTrend([])).toMatchObject({ slope: null, pValue: null, driftFlag: false });
		expect(linearTrend([1])).toMatchObject({ slope: null, reason: expect.stringMatching(/2 points/) });
		expect(linearTrend([1, 2], [5, 5])).toMatchObject({
			slope: null,
			reason: expect.stringMatching(/positions/)
		});
		const two = linearTrend([1, 3]);
		expect(two.slope).toBeCloseTo(2, 15);
		expect(two.slopeStandardError).toBeNull();
		expect(two.pValue).toBeNull();
	});

	it('handles exact fits without NaN or Infinity', () => {
		expect(linearTrend([2, 2, 2, 2])).toMatchObject({
			slope: 0,
			tStatistic: null,
			pValue: null,
			driftFlag: false
		});
		expect(linearTrend([0, 1, 2, 3])).toMatchObject({ tStatistic: null, pValue: 0, driftFlag: true });
	});

	it('rejects mismatched lengths and non-finite values', () => {
		expect(() => linearTrend([1, 2, 3], [0, 1])).toThrow(PhysicsInputError);
		expect(() => linearTrend([1, Number.NaN, 3])).toThrow(PhysicsInputError);
	});
});

describe('meanWithInterval', () => {
	// reference §6 speed string (m/s); SE = 0.9752492559/√10, t(0.975, 9) = 2.2621571628 (scipy,
	// computed for this test) → [99.8023487098, 101.1976512902].
	const speeds = [101.2, 99.8, 100.5, 102.0, 98.9, 100.1, 101.7, 99.5, 100.9, 100.4];

	it('gives mean, SE and the 95 % Student-t interval', () => {
		const m = meanWithInterval(speeds);
		expect(m.mean).toBeCloseTo(100.5, 12);
		expect(m.standardError).toBeCloseTo(0.3084008935, 10);
		expect(m.dof).toBe(9);
		expect(m.tQuantile).toBeCloseTo(2.2621571628, 9);
		expect(m.lower).toBeCloseTo(99.8023487098, 9);
		expect(m.upper).toBeCloseTo(101.1976512902, 9);
		expect(m.level).toBe(0.95);
	});

	it('agrees with simple-statistics tTest once its population SD (divisor n) is rescaled to n − 1', () => {
		// simple-statistics 7.12 tTest divides by standardDeviation (population, n), so its t is
		// √(n/(n − 1)) times the usual one-sample t; do not use it for p-values as is.
		const m = meanWithInterval(speeds);
		const n = speeds.length;
		const usualT = (m.mean! - 100) / m.standardError!;
		expect(tTest(speeds, 100) * Math.sqrt((n - 1) / n)).toBeCloseTo(usualT, 12);
	});

	it('takes another level: 90 % uses t(0.95, 9) = 1.83311293266 (scipy, computed for this test)', () => {
		expect(meanWithInterval(speeds, 0.9).tQuantile).toBeCloseTo(1.83311293266, 9);
	});

	it('returns typed nulls for n < 2', () => {
		expect(meanWithInterval([])).toMatchObject({ n: 0, mean: null, lower: null });
		expect(meanWithInterval([3.2])).toMatchObject({ n: 1, mean: 3.2, standardError: null, upper: null });
		expect(() => meanWithInterval(speeds, 1)).toThrow(PhysicsInputError);
	});
});
