import { coefficientOfVariation } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { PhysicsInputError } from '../errors';
import { speedStats } from './speed';

// reference-sheet.md §6, "Speed string [computed], m/s" (values from checks.py → checks_output.json
// key 6.speed_example).
const REFERENCE_SPEEDS = [101.2, 99.8, 100.5, 102.0, 98.9, 100.1, 101.7, 99.5, 100.9, 100.4];

describe('speedStats', () => {
	it('reproduces the reference §6 speed string: mean 100.50, SD 0.9752, ES 3.10', () => {
		const s = speedStats(REFERENCE_SPEEDS);
		expect(s.n).toBe(10);
		expect(s.mean).toBeCloseTo(100.5, 10);
		expect(s.sd).toBeCloseTo(0.9752, 4);
		expect(s.extremeSpread).toBeCloseTo(3.1, 10);
		expect(s.min).toBe(98.9);
		expect(s.max).toBe(102.0);
	});

	it('gives the coefficient of variation as a fraction, matching simple-statistics coefficientOfVariation', () => {
		const s = speedStats(REFERENCE_SPEEDS);
		expect(s.cv).toBeCloseTo(coefficientOfVariation(REFERENCE_SPEEDS), 15);
		// 0.9752492559 / 100.5 (numpy, ddof = 1).
		expect(s.cv).toBeCloseTo(0.009703972695, 11);
	});

	it('returns typed nulls, not NaN, for an empty string', () => {
		expect(speedStats([])).toEqual({
			n: 0,
			mean: null,
			sd: null,
			extremeSpread: null,
			cv: null,
			min: null,
			max: null
		});
	});

	it('gives mean and a zero spread but no SD or CV for one shot', () => {
		expect(speedStats([87.3])).toEqual({
			n: 1,
			mean: 87.3,
			sd: null,
			extremeSpread: 0,
			cv: null,
			min: 87.3,
			max: 87.3
		});
	});

	it('gives a null CV when the mean is zero (signed values)', () => {
		const s = speedStats([-1, 1]);
		expect(s.sd).toBeCloseTo(Math.SQRT2, 15);
		expect(s.cv).toBeNull();
	});

	it('rejects non-finite readings instead of returning NaN', () => {
		expect(() => speedStats([100, Number.NaN])).toThrow(PhysicsInputError);
		expect(() => speedStats([100, Infinity])).toThrow(/speeds\[1\]/);
	});
});
