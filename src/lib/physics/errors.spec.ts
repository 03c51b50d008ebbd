import { describe, expect, it } from 'vitest';
import { PhysicsInputError, requireFinite, requireInRange, requireNonNegative, requirePositive } from './errors';

describe('input validation helpers', () => {
	it('pass good values through unchanged', () => {
		expect(requireFinite(-3.5, 'x')).toBe(-3.5);
		expect(requirePositive(1e-300, 'x')).toBe(1e-300);
		expect(requireNonNegative(0, 'x')).toBe(0);
		expect(requireInRange(1, 'x', { min: 0, max: 1, minExclusive: true })).toBe(1);
	});

	it('throw a PhysicsInputError carrying the field and the reason', () => {
		const cases: [() => unknown, string][] = [
			[() => requireFinite(Number.NaN, 'a'), 'not-finite'],
			[() => requireFinite(Number.NEGATIVE_INFINITY, 'a'), 'not-finite'],
			[() => requireFinite('3' as unknown as number, 'a'), 'not-finite'],
			[() => requirePositive(0, 'a'), 'not-positive'],
			[() => requireNonNegative(-1e-9, 'a'), 'negative'],
			[() => requireInRange(0, 'a', { min: 0, max: 1, minExclusive: true }), 'out-of-range'],
			[() => requireInRange(1, 'a', { min: 0, max: 1, maxExclusive: true }), 'out-of-range']
		];
		for (const [call, reason] of cases) {
			try {
				call();
				expect.unreachable();
			} catch (e) {
				expect(e).toBeInstanceOf(PhysicsInputError);
				expect(e).toBeInstanceOf(Error);
				expect(e).toMatchObject({ field: 'a', reason, name: 'PhysicsInputError' });
			}
		}
	});

	it('state the interval in the message', () => {
		expect(() => requireInRange(2, 'efficiency', { min: 0, max: 1, minExclusive: true })).toThrow(
			'efficiency must be in (0, 1] (got 2)'
		);
	});
});
