import { describe, expect, it } from 'vitest';
import { muzzleSpeed } from '../internal';
import { gasWorkStart, type StartShot } from './start';
import { neutralParameters, type ShotSetup } from './model';

// A 3 L reservoir, 36 mm bore launcher with a 20.6 g ball (the pub-ice35 campaign's rig), shots
// from a known gas-work truth with seeded-looking fixed speed errors.
const rig = { reservoirM3: 0.003, deadM3: 5e-5, boreDiameterM: 0.0362, travelM: 1.5 };
const projectile = { massKg: 0.02059, diameterM: 0.035 };
const session = { targetDistanceM: 6, elevationDeg: 1.5, launchHeightM: 1.1, aimHeightM: 1.2, airDensityKgM3: 1.26, ambientPa: 100400 };
const setup = (fillGaugePa: number): ShotSetup => ({ rig, projectile, session, fillGaugePa });
const FILLS = [70e3, 85e3, 100e3, 120e3, 140e3, 160e3, 180e3, 200e3];
const ERRORS = [0.3, -0.2, 0.1, -0.4, 0.25, -0.1, 0.05, -0.3];

function ideal(fill: number) {
	const r = muzzleSpeed({ ...rig, ...projectile, fillGaugePa: fill, ambientPa: session.ambientPa, efficiency: 1 });
	if (!r.ok) throw new Error(r.reason);
	return r;
}

function shotsFrom(truth: { eta0: number; eta1: number; e: number; pRef: number }): StartShot[] {
	return FILLS.map((fill, i) => {
		const w = ideal(fill);
		const eta = truth.eta0 + (truth.eta1 * (fill - truth.pRef)) / truth.pRef;
		const v = Math.sqrt((2 * (eta * w.gasWorkJ - w.atmosphereWorkJ - truth.e)) / projectile.massKg) + ERRORS[i];
		return { index: i, setup: setup(fill), muzzleSpeedMps: v };
	});
}

describe('gas-work start: linear least squares in energy (physics.md §5)', () => {
	it('η0 alone equals the closed form Σw²Wy / Σw²W² of weighted least squares through the origin', () => {
		const shots = shotsFrom({ eta0: 0.8, eta1: 0, e: 0, pRef: 1.3e5 });
		const start = gasWorkStart(shots, 1.3e5, { pressureSlope: false, energyOffset: false });
		let num = 0;
		let den = 0;
		for (const s of shots) {
			const w = ideal(s.setup.fillGaugePa);
			const v = s.muzzleSpeedMps!;
			const weight = 1 / (projectile.massKg * v);
			const y = 0.5 * projectile.massKg * v * v + w.atmosphereWorkJ;
			num += weight * weight * w.gasWorkJ * y;
			den += weight * weight * w.gasWorkJ * w.gasWorkJ;
		}
		expect(Number.isFinite(num / den)).toBe(true);
		expect(start.efficiency).toBeCloseTo(num / den, 10);
	});

	it('(η0, η1, E) equal the solution of the 3×3 normal equations, solved by Cramer’s rule in the test', () => {
		const pRef = 1.3e5;
		const shots = shotsFrom({ eta0: 0.55, eta1: -0.1, e: -40, pRef });
		const start = gasWorkStart(shots, pRef, { pressureSlope: true, energyOffset: true });
		const a = [
			[0, 0, 0],
			[0, 0, 0],
			[0, 0, 0]
		];
		const b = [0, 0, 0];
		for (const s of shots) {
			const w = ideal(s.setup.fillGaugePa);
			const v = s.muzzleSpeedMps!;
			const weight = 1 / (projectile.massKg * v);
			const x = [w.gasWorkJ, (w.gasWorkJ * (s.setup.fillGaugePa - pRef)) / pRef, -1];
			const y = 0.5 * projectile.massKg * v * v + w.atmosphereWorkJ;
			for (let i = 0; i < 3; i++) {
				b[i] += weight * weight * x[i] * y;
				for (let j = 0; j < 3; j++) a[i][j] += weight * weight * x[i] * x[j];
			}
		}
		const det = (m: number[][]) =>
			m[0][0] * (m[1][1] * m[2][2] - m[1][2] * m[2][1]) - m[0][1] * (m[1][0] * m[2][2] - m[1][2] * m[2][0]) + m[0][2] * (m[1][0] * m[2][1] - m[1][1] * m[2][0]);
		const d = det(a);
		const solve = (k: number) => det(a.map((row, i) => row.map((v, j) => (j === k ? b[i] : v)))) / d;
		expect(start.efficiency).toBeCloseTo(solve(0), 6);
		expect(start.pressureSlope).toBeCloseTo(solve(1), 6);
		expect(start.energyOffsetJ / solve(2)).toBeCloseTo(1, 6);
		// And near the truth the speeds came from (errors of a few tenths of a m/s).
		expect(start.efficiency).toBeCloseTo(0.55, 1);
		expect(start.energyOffsetJ).toBeLessThan(0);
	});

	it('shots without a muzzle speed are not used; too few shots fall back to a neutral start', () => {
		const start = gasWorkStart([{ index: 0, setup: setup(1e5) }], 1e5, { pressureSlope: true, energyOffset: true });
		expect(start.efficiency).toBe(0.6);
		expect(neutralParameters(1e5).efficiency).toBe(0.6);
	});
});
