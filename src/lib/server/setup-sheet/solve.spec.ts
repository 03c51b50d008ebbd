import { describe, expect, it } from 'vitest';
import { fillPressureForMuzzleSpeed, type LauncherCalibration } from '$lib/physics';
import { solveSetup, type SetupProblem } from './solve';

// A 25 mm hail launcher and ice ball like the demo lab's H1 (invented figures).
const rig = { reservoirM3: 2e-3, deadM3: 0.05e-3, boreDiameterM: 0.0254, travelM: 1.2, ratedPressurePa: 8e5 };
const projectile = { massKg: 7.53e-3, diameterM: 0.025 };

function model(overrides: Partial<LauncherCalibration['parameters']> = {}): LauncherCalibration {
	return {
		parameters: { efficiency: 0.6, pressureSlope: 0, pRefPa: 2e5, lossN: 0, dragCoefficient: 0.47, elevationBiasDeg: 0, ...overrides },
		fitted: [],
		identifiable: [],
		covariance: [],
		fillPressureRangePa: { min: 0, max: Infinity }
	};
}

function problem(plan: SetupProblem['plan'], calibration = model()): SetupProblem {
	return {
		calibration,
		rig,
		projectile,
		plan,
		range: { launchHeightM: 1.2, aimHeightM: 1.2, azimuthDeg: 0, airDensityKgM3: 1.225, ambientPa: 101_325, wind: { xMps: 0, zMps: 0 } }
	};
}

describe('solveSetup', () => {
	it('at the muzzle: the closed-form fill pressure of internal.ts, and an elevation that hits the aim point', () => {
		const r = solveSetup(problem({ speedAt: 'muzzle', requiredSpeedMps: 23, targetDistanceM: 5 }));
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		const closed = fillPressureForMuzzleSpeed({ ...rig, ...projectile, ambientPa: 101_325, efficiency: 0.6 }, 23);
		if (!closed.ok) throw new Error(closed.reason);
		expect(r.fillGaugePa).toBeCloseTo(closed.fillGaugePa, 3);
		expect(r.prediction.muzzleSpeedMps).toBeCloseTo(23, 6);
		expect(Math.abs(r.prediction.impact.heightM)).toBeLessThan(1e-6);
		expect(r.marginPa).toBeCloseTo(8e5 - r.fillGaugePa, 6);
		expect(r.elevationDeg).toBeGreaterThan(0);
		expect(r.trajectory.at(-1)!.downrangeM).toBeCloseTo(5, 9);
	});

	it('at the target: the speed at the plane is the required one and the shot is on the aim point', () => {
		const r = solveSetup(problem({ speedAt: 'target', requiredSpeedMps: 23, targetDistanceM: 5 }));
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(r.prediction.impact.reached).toBe(true);
		expect(r.prediction.impact.speedMps).toBeCloseTo(23, 5);
		expect(r.prediction.muzzleSpeedMps).toBeGreaterThan(23);
		expect(Math.abs(r.prediction.impact.heightM)).toBeLessThan(1e-5);
	});

	it('sets the elevation less the calibrated bias, so the biased rig still hits the aim point', () => {
		const plain = solveSetup(problem({ speedAt: 'target', requiredSpeedMps: 23, targetDistanceM: 5 }));
		const biased = solveSetup(problem({ speedAt: 'target', requiredSpeedMps: 23, targetDistanceM: 5 }, model({ elevationBiasDeg: 0.2 })));
		if (!plain.ok || !biased.ok) throw new Error('not solved');
		expect(biased.elevationDeg).toBeCloseTo(plain.elevationDeg - 0.2, 5);
		expect(Math.abs(biased.prediction.impact.heightM)).toBeLessThan(1e-5);
	});

	it('follows a calibrated pressure slope η(p) = η0 + η1 (p − p_ref)/p_ref', () => {
		const sloped = solveSetup(problem({ speedAt: 'muzzle', requiredSpeedMps: 30, targetDistanceM: 5 }, model({ pressureSlope: -0.1, pRefPa: 2e5 })));
		if (!sloped.ok) throw new Error(sloped.reason);
		expect(sloped.prediction.muzzleSpeedMps).toBeCloseTo(30, 6);
		expect(sloped.prediction.efficiency).toBeCloseTo(0.6 - (0.1 * (sloped.fillGaugePa - 2e5)) / 2e5, 12);
	});

	it('refuses a speed that needs more than the rated working pressure, and says what the rating gives', () => {
		const r = solveSetup(problem({ speedAt: 'target', requiredSpeedMps: 400, targetDistanceM: 5 }));
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.code).toBe('above-rated-pressure');
		expect(r.reason).toMatch(/rated working pressure/);
		expect(r.speedAtRatedMps).toBeGreaterThan(20);
		expect(r.speedAtRatedMps).toBeLessThan(400);
	});

	it('refuses a target the shot cannot reach at any elevation', () => {
		const r = solveSetup(problem({ speedAt: 'muzzle', requiredSpeedMps: 5, targetDistanceM: 50 }));
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.code).toBe('no-elevation');
	});
});
