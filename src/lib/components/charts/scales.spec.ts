import { describe, expect, it } from 'vitest';
import { curveRange, daysBefore, elapsedAxis, formatTick, paddedDomain, pastDomain, symmetricDomain } from './scales';

describe('paddedDomain', () => {
	it('pads the data span on both sides', () => {
		expect(paddedDomain([10, 20], { padFraction: 0.1 })).toEqual([9, 21]);
	});

	it('takes in the values to include (a zero line, a tolerance band)', () => {
		expect(paddedDomain([10, 20], { include: [0], padFraction: 0 })).toEqual([0, 20]);
	});

	it('gives one value a span of its own instead of a zero-width axis', () => {
		const [lo, hi] = paddedDomain([30], { padFraction: 0 });
		expect(lo).toBeLessThan(30);
		expect(hi).toBeGreaterThan(30);
		expect((lo + hi) / 2).toBeCloseTo(30, 12);
		expect(paddedDomain([0, 0], { padFraction: 0 })).toEqual([-0.5, 0.5]);
	});

	it('honours a minimum span around the data', () => {
		expect(paddedDomain([5, 5.2], { minSpan: 2, padFraction: 0 })).toEqual([4.1, 6.1]);
	});

	it('ignores non-finite values and falls back to [0, 1] with nothing to show', () => {
		expect(paddedDomain([NaN, Infinity, 3, 5], { padFraction: 0 })).toEqual([3, 5]);
		expect(paddedDomain([])).toEqual([0, 1]);
	});
});

describe('symmetricDomain', () => {
	it('keeps zero in the middle and holds the largest deviation', () => {
		expect(symmetricDomain([-2, 1], { padFraction: 0.5 })).toEqual([-3, 3]);
		expect(symmetricDomain([0.1], { include: [0.4], padFraction: 0 })).toEqual([-0.4, 0.4]);
	});

	it('has a span even when every residual is zero', () => {
		expect(symmetricDomain([0, 0], { padFraction: 0 })).toEqual([-1, 1]);
	});
});

describe('daysBefore', () => {
	it('counts days back from now as negative numbers', () => {
		const now = new Date('2026-03-10T12:00:00Z');
		expect(daysBefore('2026-03-08T12:00:00Z', now)).toBe(-2);
		expect(daysBefore(now, now)).toBe(0);
	});
});

describe('curveRange', () => {
	it('widens the data range by a quarter of its span but never leaves [0, rated]', () => {
		expect(curveRange([2e5, 4e5], 10e5)).toEqual([1.5e5, 4.5e5]);
		expect(curveRange([0.2e5, 9.9e5], 10e5)).toEqual([0, 10e5]);
	});

	it('gives one fill pressure a tenth of itself on each side', () => {
		expect(curveRange([4e5], 10e5)).toEqual([3.6e5, 4.4e5]);
		expect(curveRange([], 8e5)).toEqual([0, 8e5]);
	});
});

describe('formatTick', () => {
	it('drops binary noise from tick values', () => {
		expect(formatTick(0.1 + 0.2)).toBe('0.3');
		expect(formatTick(-2.5)).toBe('-2.5');
		expect(formatTick(1e6)).toBe('1000000');
	});
});

describe('elapsedAxis', () => {
	it('counts hours from the first shot within two days, else days', () => {
		expect(elapsedAxis(['2026-03-01T10:00:00Z', '2026-03-01T08:00:00Z', '2026-03-01T11:30:00Z'])).toEqual({ values: [2, 0, 3.5], unit: 'h' });
		expect(elapsedAxis(['2026-03-01T00:00:00Z', '2026-03-04T12:00:00Z'])).toEqual({ values: [0, 3.5], unit: 'd' });
		expect(elapsedAxis([])).toEqual({ values: [], unit: 'h' });
	});
});

describe('pastDomain', () => {
	it('ends today and spans at least the minimum, padded', () => {
		expect(pastDomain([-3, -1], 7, 0)).toEqual([-7, 0]);
		expect(pastDomain([-40, -2], 7, 0.1)).toEqual([-44, 4]);
		expect(pastDomain([], 14, 0)).toEqual([-14, 0]);
	});
});
