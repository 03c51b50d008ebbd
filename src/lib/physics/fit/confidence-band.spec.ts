import { describe, expect, it } from 'vitest';
import { muzzleSpeed } from '../internal';
import { createRandom } from '../random';
import { deltaMethod, evenlySpaced, modelMuzzleSpeed, muzzleSpeedBand, type CurveLauncher } from './confidence-band';
import type { LauncherCalibration } from '../launcher';

const launcher: CurveLauncher = {
	rig: { reservoirM3: 2e-3, deadM3: 0.05e-3, boreDiameterM: 0.0254, travelM: 1.2 },
	projectile: { massKg: 7.53e-3, diameterM: 0.025 },
	ambientPa: 101_325
};

function calibration(fitted: LauncherCalibration['fitted'], covariance: (number | null)[][]): LauncherCalibration {
	return {
		parameters: { efficiency: 0.62, pressureSlope: -0.03, pRefPa: 2e5, energyOffsetJ: 1.5, valveAreaM2: 1e-4, openingTimeS: 0.01, frictionN: 0, dragCoefficient: 0.5, elevationBiasDeg: 0 },
		fitted,
		identifiable: fitted.map(() => true),
		covariance: covariance as number[][],
		fillPressureRangePa: { min: 1e5, max: 3e5 }
	};
}

describe('deltaMethod', () => {
	it('is exact for a linear function: SE² = aᵀ Σ a', () => {
		const a = [2, -3, 0.5];
		const sigma = [
			[0.04, 0.01, 0],
			[0.01, 0.09, -0.02],
			[0, -0.02, 0.25]
		];
		const r = deltaMethod((x) => a.reduce((s, ai, i) => s + ai * x[i], 1), [1, 2, 3], sigma)!;
		let expected = 0;
		for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) expected += a[i] * sigma[i][j] * a[j];
		expect(r.value).toBeCloseTo(1 + 2 - 6 + 1.5, 12);
		expect(r.standardError).toBeCloseTo(Math.sqrt(expected), 10);
		expect(r.gradient.map((g) => Number(g.toFixed(9)))).toEqual(a);
		expect(r.omitted).toEqual([]);
	});

	it('leaves out a parameter whose variance is missing and says which', () => {
		const r = deltaMethod((x) => x[0] + 10 * x[1], [1, 1], [
			[0.01, null],
			[null, null]
		])!;
		expect(r.standardError).toBeCloseTo(0.1, 12);
		expect(r.omitted).toEqual([1]);
	});

	it('returns null when the function cannot be evaluated at the estimate', () => {
		expect(deltaMethod(() => null, [1], [[1]])).toBeNull();
	});
});

describe('muzzleSpeedBand', () => {
	it('with η0 alone matches the analytic gradient ∂v/∂η = W_gas/(m v) (energy balance, physics.md §1)', () => {
		const se = 0.004;
		const cal = { ...calibration(['efficiency'], [[se * se]]), parameters: { ...calibration([], []).parameters, pressureSlope: 0, energyOffsetJ: 0 } };
		const [point] = muzzleSpeedBand(cal, launcher, [2.5e5], 2).points;
		const r = muzzleSpeed({ fillGaugePa: 2.5e5, ...launcher.rig, ambientPa: launcher.ambientPa, massKg: launcher.projectile.massKg, efficiency: 0.62 });
		if (!r.ok) throw new Error('no shot');
		const gradient = r.gasWorkJ / (launcher.projectile.massKg * r.speedMps);
		expect(point.speedMps).toBeCloseTo(r.speedMps, 12);
		expect(point.standardError).toBeCloseTo(gradient * se, 8);
		expect(point.upper - point.lower).toBeCloseTo(4 * gradient * se, 8);
	});

	it('agrees with the spread of speeds sampled from the parameter covariance (seeded Monte Carlo)', () => {
		const cov = [
			[1.6e-5, -2e-6, 2e-4],
			[-2e-6, 4e-5, 0],
			[2e-4, 0, 0.04]
		];
		const cal = calibration(['efficiency', 'pressureSlope', 'energyOffset'], cov);
		const p = 3e5;
		const [point] = muzzleSpeedBand(cal, launcher, [p], 1.96).points;
		// Cholesky of the 3×3 covariance, then N(θ̂, Σ) draws.
		const L = [[0, 0, 0], [0, 0, 0], [0, 0, 0]];
		for (let i = 0; i < 3; i++)
			for (let j = 0; j <= i; j++) {
				let s = cov[i][j];
				for (let k = 0; k < j; k++) s -= L[i][k] * L[j][k];
				L[i][j] = i === j ? Math.sqrt(s) : s / L[j][j];
			}
		const random = createRandom(8);
		const speeds: number[] = [];
		for (let n = 0; n < 20_000; n++) {
			const z = [random.normal(), random.normal(), random.normal()];
			const d = L.map((row) => row.reduce((s, v, k) => s + v * z[k], 0));
			const v = modelMuzzleSpeed(
				{ ...cal.parameters, efficiency: 0.62 + d[0], pressureSlope: -0.03 + d[1], energyOffsetJ: 1.5 + d[2] },
				launcher,
				p
			);
			if (v !== null) speeds.push(v);
		}
		const mean = speeds.reduce((s, v) => s + v, 0) / speeds.length;
		const sd = Math.sqrt(speeds.reduce((s, v) => s + (v - mean) ** 2, 0) / (speeds.length - 1));
		// 20 000 draws: the sample SD is within ~1 % of the truth; the linearisation adds far less here.
		expect(point.standardError / sd).toBeGreaterThan(0.97);
		expect(point.standardError / sd).toBeLessThan(1.03);
	});

	it('gets no width from C_D or δθ, which do not act on the muzzle speed', () => {
		const cal = calibration(['dragCoefficient', 'elevationBias'], [
			[0.01, 0],
			[0, 0.04]
		]);
		const { points } = muzzleSpeedBand(cal, launcher, [1e5, 2e5], 2);
		for (const pt of points) expect(pt.standardError).toBe(0);
	});

	it('skips pressures at which the projectile stays in the barrel and reports parameters without a variance', () => {
		const cal = calibration(['efficiency', 'energyOffset'], [
			[1e-6, null],
			[null, null]
		]);
		const { points, omitted } = muzzleSpeedBand(cal, launcher, [0, 2e5], 2);
		expect(points.map((p) => p.fillGaugePa)).toEqual([2e5]);
		expect(omitted).toEqual(['energyOffset']);
	});
});

describe('evenlySpaced', () => {
	it('includes both ends', () => {
		expect(evenlySpaced(1, 3, 5)).toEqual([1, 1.5, 2, 2.5, 3]);
		expect(evenlySpaced(2, 2, 5)).toEqual([2]);
	});
});
