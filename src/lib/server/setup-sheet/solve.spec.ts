import { describe, expect, it } from 'vitest';
import { fillPressureForMuzzleSpeed, neutralParameters, predictShot, type LauncherCalibration } from '$lib/physics';
import { solveSetup, type SetupProblem } from './solve';

// A 25 mm hail launcher and ice ball like the demo lab's H1 (invented figures).
const rig = { reservoirM3: 2e-3, deadM3: 0.05e-3, boreDiameterM: 0.0254, travelM: 1.2, ratedPressurePa: 8e5 };
const projectile = { massKg: 7.53e-3, diameterM: 0.025 };

function model(overrides: Partial<LauncherCalibration['parameters']> = {}): LauncherCalibration {
	return {
		parameters: { ...neutralParameters(2e5), efficiency: 0.6, dragCoefficient: 0.47, ...overrides },
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
		// dv/dp at the answer: the same at the muzzle for the judged and the muzzle speed, and positive.
		expect(r.speedPerPressureMpsPerPa).toBeGreaterThan(0);
		expect(r.speedPerPressureMpsPerPa).toBe(r.muzzleSpeedPerPressureMpsPerPa);
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

	it('takes the lowest pressure on a curve that rises, peaks and falls (η1 < 0), and names the peak of an out-of-reach speed', () => {
		const humped = model({ pressureSlope: -0.4, pRefPa: 3e5, efficiency: 0.5 });
		const speedAt = (p: number) => {
			const r = predictShot(humped, { rig, projectile, fillGaugePa: p, session: { targetDistanceM: 5, elevationDeg: 0, launchHeightM: 1.2, aimHeightM: 1.2, airDensityKgM3: 1.225, ambientPa: 101_325 } });
			return r.ok ? r.muzzleSpeedMps : 0;
		};
		let peak = { p: 0, v: 0 };
		for (let p = 0; p <= 8e5; p += 500) if (speedAt(p) > peak.v) peak = { p, v: speedAt(p) };
		expect(peak.p).toBeLessThan(7e5);
		expect(speedAt(8e5)).toBeLessThan(peak.v - 1);
		const reachable = (speedAt(8e5) + peak.v) / 2;
		const r = solveSetup(problem({ speedAt: 'muzzle', requiredSpeedMps: reachable, targetDistanceM: 5 }, humped));
		if (!r.ok) throw new Error(r.reason);
		expect(r.fillGaugePa).toBeLessThan(peak.p);
		expect(r.prediction.muzzleSpeedMps).toBeCloseTo(reachable, 6);
		const refused = solveSetup(problem({ speedAt: 'muzzle', requiredSpeedMps: peak.v + 1, targetDistanceM: 5 }, humped));
		expect(refused).toMatchObject({ ok: false, code: 'beyond-curve-peak' });
		if (refused.ok) return;
		expect(refused.peak!.speedMps).toBeCloseTo(peak.v, 2);
		expect(Math.abs(refused.peak!.fillGaugePa - peak.p)).toBeLessThan(1000);
	});

	it('solves under a valve-flow calibration with sphere drag: the plan speed at the target and the aim point', () => {
		const valve: LauncherCalibration = {
			model: { family: 'valve-flow', drag: 'sphere' },
			parameters: { ...neutralParameters(3e5), valveAreaM2: 1.5e-4, openingTimeS: 0.01, frictionN: 0.5, dragCoefficient: 1.1, elevationBiasDeg: 0.1 },
			fitted: [],
			identifiable: [],
			covariance: [],
			fillPressureRangePa: { min: 0, max: Infinity }
		};
		const r = solveSetup(problem({ speedAt: 'target', requiredSpeedMps: 23, targetDistanceM: 8 }, valve));
		if (!r.ok) throw new Error(r.reason);
		expect(r.prediction.efficiency).toBeNull();
		expect(Math.abs(r.prediction.impact.speedMps - 23)).toBeLessThan(1e-5);
		expect(Math.abs(r.prediction.impact.heightM)).toBeLessThan(1e-5);
		expect(r.trajectory.at(-1)!.downrangeM).toBeCloseTo(8, 9);
		expect(r.trajectory.at(-1)!.heightM).toBeCloseTo(r.prediction.impact.heightAboveGroundM, 6);
		expect(r.speedPerPressureMpsPerPa).toBeGreaterThan(0);
		expect(r.speedPerPressureMpsPerPa).toBeLessThan(r.muzzleSpeedPerPressureMpsPerPa);
	});
});
