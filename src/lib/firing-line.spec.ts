import { describe, expect, it } from 'vitest';
import { outsideRun, runningSpeed, validCount, verdictOf, type GuardPlan, type GuardShot } from './firing-line';

const plan: GuardPlan = { requiredSpeedMps: 100, speedTolerancePct: 2, impactToleranceM: 0.02, shotsRequired: 11, stopAfterOutOfTolerance: 3 };
const shot = (sequence: number, speed: number, over: Partial<GuardShot> = {}): GuardShot => ({
	sequence,
	muzzleSpeedMps: speed,
	miss: false,
	impactXM: 0.003,
	impactYM: 0.004,
	voidedAt: null,
	prediction: { passSpeed: Math.abs(speed - 100) <= 2, passImpact: true, judgedSpeedMps: speed, speedBasis: 'muzzle_chronograph' },
	...over
});

describe('firing-line guard', () => {
	it('gives the verdict with its reasons, failed ones first', () => {
		const v = verdictOf(shot(1, 97), plan);
		expect(v.status).toBe('outside');
		expect(v.reasons[0]).toMatchObject({ kind: 'speed', pass: false, deviationPct: -3, tolerancePct: 2 });
		expect(v.reasons[1]).toMatchObject({ kind: 'impact', pass: true, radiusM: 0.005 });
		expect(verdictOf(shot(2, 100.5), plan).status).toBe('within');
		expect(verdictOf(shot(3, 100), null).status).toBe('not judged');
	});

	it('counts valid shots, the running mean and SD, and the out-of-tolerance run without voided shots', () => {
		const shots = [shot(1, 99), shot(2, 101), shot(3, 95), shot(4, 90, { voidedAt: new Date() }), shot(5, 96)];
		expect(validCount(shots)).toBe(2);
		const r = runningSpeed(shots);
		expect(r.n).toBe(4);
		expect(r.meanMps).toBeCloseTo(97.75, 12);
		// Sample SD of 99, 101, 95, 96 (by hand: Σ(v−97.75)² = 22.75, / 3).
		expect(r.sdMps).toBeCloseTo(Math.sqrt(22.75 / 3), 12);
		expect(outsideRun(shots)).toBe(2);
		expect(outsideRun([...shots, shot(6, 100)])).toBe(0);
	});
});
