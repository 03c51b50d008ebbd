import { errorFunction } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { chanceOfMeetingPlan } from './chance';
import { muzzleWithDerivatives, predictShot, type LauncherCalibration, type ShotSetup } from './launcher';

const setupBase: ShotSetup = {
	rig: { reservoirM3: 1e-3, deadM3: 0, boreDiameterM: 0.025, travelM: 1 },
	projectile: { massKg: 0.02, diameterM: 0.025 },
	session: {
		targetDistanceM: 30,
		elevationDeg: 4,
		launchHeightM: 1.5,
		aimHeightM: 0,
		airDensityKgM3: 1.2,
		ambientPa: 101325
	},
	fillGaugePa: 5e5
};

function calibration(covariance: number[][]): LauncherCalibration {
	return {
		parameters: {
			efficiency: 0.62,
			pressureSlope: 0,
			pRefPa: 5e5,
			energyOffsetJ: 0,
			valveAreaM2: 1e-4,
			openingTimeS: 0.01,
			frictionN: 0,
			dragCoefficient: 0.5,
			elevationBiasDeg: 0.3
		},
		fitted: ['efficiency', 'dragCoefficient', 'elevationBias'],
		identifiable: [true, true, true],
		covariance,
		fillPressureRangePa: { min: 3e5, max: 7e5 }
	};
}
const exact = calibration([
	[0, 0, 0],
	[0, 0, 0],
	[0, 0, 0]
]);

/** The setup with its aim point on the predicted mean impact (no wind: lateral 0). */
function centred(c: LauncherCalibration): ShotSetup {
	const p = predictShot(c, setupBase);
	if (!p.ok) throw new Error(p.reason);
	return { ...setupBase, session: { ...setupBase.session, aimHeightM: p.impact.heightAboveGroundM } };
}

/**
 * Standard normal CDF Φ(x) = ½(1 + erf(x/√2)); simple-statistics' erf is the Chebyshev fit of
 * Numerical Recipes' erfcc (Press et al.), fractional error < 1.2e-7 — far below the MC errors here.
 */
const phi = (x: number) => 0.5 * (1 + errorFunction(x / Math.SQRT2));

describe('chanceOfMeetingPlan', () => {
	const setup = centred(exact);
	const sigma = 0.02;

	it('circular normal impacts about the aim point: P(r ≤ R) = 1 − exp(−R²/2σ²) (Rayleigh, reference sheet §6) within 4 MC standard errors', () => {
		for (const k of [0.5, 1.1774, 2.4477]) {
			const radius = k * sigma;
			const r = chanceOfMeetingPlan({
				calibration: exact,
				setup,
				plan: { impactRadiusM: radius },
				speedSdMps: 0.5,
				gaugeSdPa: 0,
				impactSdM: { x: sigma, y: sigma },
				samples: 20_000,
				seed: 11
			});
			const expected = 1 - Math.exp(-(radius * radius) / (2 * sigma * sigma));
			expect(Math.abs(r.impact!.probability - expected)).toBeLessThan(4 * r.impact!.standardError);
			expect(r.impact!.standardError).toBeCloseTo(
				Math.sqrt((r.impact!.probability * (1 - r.impact!.probability)) / 20_000),
				15
			);
		}
	});

	it('muzzle speed within ±tol with normal shot-to-shot spread: Φ((t + tol − v)/σ) − Φ((t − tol − v)/σ) within 4 MC standard errors', () => {
		const nominal = predictShot(exact, setup);
		if (!nominal.ok) throw new Error(nominal.reason);
		const v = nominal.muzzleSpeedMps;
		const sd = 0.6;
		const target = v + 0.3;
		const tol = 0.8;
		const r = chanceOfMeetingPlan({
			calibration: exact,
			setup,
			plan: { speed: { targetMps: target, toleranceMps: tol, at: 'muzzle' } },
			speedSdMps: sd,
			gaugeSdPa: 0,
			impactSdM: { x: sigma, y: sigma },
			samples: 20_000,
			seed: 5
		});
		const expected = phi((target + tol - v) / sd) - phi((target - tol - v) / sd);
		expect(Math.abs(r.speed!.probability - expected)).toBeLessThan(4 * r.speed!.standardError);
		expect(r.impact).toBeNull();
		expect(r.both).toBeNull();
	});

	it('speed at the target plane scales the shot-to-shot spread by ∂v_target/∂v_muzzle', () => {
		const nominal = predictShot(exact, setup);
		if (!nominal.ok) throw new Error(nominal.reason);
		const h = 0.01;
		const up = predictShot(exact, setup, { muzzleSpeedMps: nominal.muzzleSpeedMps + h });
		const down = predictShot(exact, setup, { muzzleSpeedMps: nominal.muzzleSpeedMps - h });
		if (!up.ok || !down.ok) throw new Error('prediction failed');
		const gain = (up.impact.speedMps - down.impact.speedMps) / (2 * h);
		const sd = 0.6;
		const tol = 0.5;
		const r = chanceOfMeetingPlan({
			calibration: exact,
			setup,
			plan: { speed: { targetMps: nominal.impact.speedMps, toleranceMps: tol, at: 'target' } },
			speedSdMps: sd,
			gaugeSdPa: 0,
			impactSdM: { x: sigma, y: sigma },
			samples: 20_000,
			seed: 6
		});
		const expected = 2 * phi(tol / (gain * sd)) - 1;
		expect(gain).toBeLessThan(1);
		expect(Math.abs(r.speed!.probability - expected)).toBeLessThan(4 * r.speed!.standardError);
	});

	it('speed and impact are independent given exact parameters: P(both) ≈ P(speed)·P(impact)', () => {
		const nominal = predictShot(exact, setup);
		if (!nominal.ok) throw new Error(nominal.reason);
		const r = chanceOfMeetingPlan({
			calibration: exact,
			setup,
			plan: { speed: { targetMps: nominal.muzzleSpeedMps, toleranceMps: 0.5, at: 'muzzle' }, impactRadiusM: sigma * 1.5 },
			speedSdMps: 0.5,
			gaugeSdPa: 0,
			impactSdM: { x: sigma, y: sigma },
			samples: 20_000,
			seed: 8
		});
		const product = r.speed!.probability * r.impact!.probability;
		expect(Math.abs(r.both!.probability - product)).toBeLessThan(4 * r.both!.standardError);
	});

	it('parameter uncertainty lowers the chance: a 1 % SE on η spreads the muzzle speed by ∂v/∂η·SE', () => {
		const nominal = predictShot(exact, setup);
		if (!nominal.ok) throw new Error(nominal.reason);
		const uncertain = calibration([
			[0.0062 ** 2, 0, 0],
			[0, 0.01 ** 2, 0],
			[0, 0, 0.005 ** 2]
		]);
		const plan = { speed: { targetMps: nominal.muzzleSpeedMps, toleranceMps: 0.5, at: 'muzzle' as const } };
		const args = { setup, plan, speedSdMps: 0.3, gaugeSdPa: 0, impactSdM: { x: sigma, y: sigma }, samples: 20_000, seed: 3 };
		const sure = chanceOfMeetingPlan({ ...args, calibration: exact });
		const unsure = chanceOfMeetingPlan({ ...args, calibration: uncertain });
		// v ∝ √(η W − W_atm): ∂v/∂η = W/(m v); W from the energy balance ½ m v² = η W − W_atm.
		const eta = 0.62;
		const area = (Math.PI * 0.025 ** 2) / 4;
		const wAtm = 101325 * area * 1;
		const w = (0.5 * 0.02 * nominal.muzzleSpeedMps ** 2 + wAtm) / eta;
		const spread = Math.hypot(0.3, ((w / (0.02 * nominal.muzzleSpeedMps)) * 0.0062));
		expect(unsure.speed!.probability).toBeLessThan(sure.speed!.probability);
		expect(Math.abs(unsure.speed!.probability - (2 * phi(0.5 / spread) - 1))).toBeLessThan(4 * unsure.speed!.standardError);
	});

	it('is reproducible for a seed and varies between seeds', () => {
		const args = {
			calibration: calibration([
				[1e-5, 0, 0],
				[0, 1e-4, 0],
				[0, 0, 1e-4]
			]),
			setup,
			plan: { speed: { targetMps: 90, toleranceMps: 2, at: 'target' as const }, impactRadiusM: 0.03 },
			speedSdMps: 0.5,
			gaugeSdPa: 0,
			impactSdM: { x: 0.015, y: 0.02 },
			samples: 2000
		};
		const a = chanceOfMeetingPlan({ ...args, seed: 42 });
		const b = chanceOfMeetingPlan({ ...args, seed: 42 });
		const c = chanceOfMeetingPlan({ ...args, seed: 43 });
		expect(b).toEqual(a);
		expect(c.impact!.probability).not.toBe(a.impact!.probability);
	});

	it('leaves out parameters the calibration did not determine, and says so', () => {
		const c = { ...exact, identifiable: [true, false, true] };
		const r = chanceOfMeetingPlan({
			calibration: { ...c, covariance: [[1e-6, NaN, 0], [NaN, Infinity, NaN], [0, NaN, 1e-4]] },
			setup,
			plan: { impactRadiusM: 0.05 },
			speedSdMps: 0.5,
			gaugeSdPa: 0,
			impactSdM: { x: sigma, y: sigma },
			samples: 500,
			seed: 1
		});
		expect(r.notes.join(' ')).toMatch(/dragCoefficient was not determined/);
		expect(r.impact!.probability).toBeGreaterThan(0);
	});

	describe('the gauge error (physics.md §7)', () => {
		const nominal = predictShot(exact, setup);
		if (!nominal.ok) throw new Error(nominal.reason);
		const slope = muzzleWithDerivatives({ family: 'gas-work', drag: 'constant' }, exact.parameters, setup)!.perPressure;

		it('only gauge noise on a (locally) linear speed–pressure curve: P(|v − v_req| ≤ tol) = 2Φ(tol/σ_v) − 1 with σ_v = |dv/dp|·σ_p (normal rule) within 4 MC standard errors', () => {
			const gaugeSdPa = 10_000;
			const sv = Math.abs(slope) * gaugeSdPa;
			// Curvature of v(p) over ±4σ_p moves v by ~1e-3 of σ_v here: the relation is linear to well within the MC error.
			const tol = 0.8;
			const r = chanceOfMeetingPlan({
				calibration: exact,
				setup,
				plan: { speed: { targetMps: nominal.muzzleSpeedMps, toleranceMps: tol, at: 'muzzle' } },
				speedSdMps: 0,
				gaugeSdPa,
				impactSdM: { x: sigma, y: sigma },
				samples: 20_000,
				seed: 12
			});
			expect(r.gaugeSdPa).toBe(gaugeSdPa);
			const expected = 2 * phi(tol / sv) - 1;
			expect(expected).toBeGreaterThan(0.3);
			expect(expected).toBeLessThan(0.9);
			expect(Math.abs(r.speed!.probability - expected)).toBeLessThan(4 * r.speed!.standardError);
		});

		it('a steep curve: 1.7 m/s of speed per gauge SD, ±5 % of 70 m/s, no longer claims 99 % (lower than without the gauge)', () => {
			// σ_p chosen so that |dv/dp|·σ_p = 1.7 m/s (the 1.7 m/s per kPa with a 1 kPa gauge); tolerance 3.5 m/s.
			const gaugeSdPa = 1.7 / Math.abs(slope);
			const args = {
				calibration: exact,
				setup,
				plan: { speed: { targetMps: nominal.muzzleSpeedMps, toleranceMps: 3.5, at: 'muzzle' as const } },
				speedSdMps: 0.3,
				impactSdM: { x: sigma, y: sigma },
				samples: 20_000,
				seed: 21
			};
			const without = chanceOfMeetingPlan({ ...args, gaugeSdPa: 0 });
			const withGauge = chanceOfMeetingPlan({ ...args, gaugeSdPa });
			expect(without.speed!.probability).toBeGreaterThan(0.99);
			expect(withGauge.speed!.probability).toBeLessThan(0.97);
			expect(withGauge.speed!.probability).toBeLessThan(without.speed!.probability);
			// Independent normal errors add in quadrature: σ = √(0.3² + 1.7²).
			const expected = 2 * phi(3.5 / Math.hypot(0.3, 1.7)) - 1;
			expect(Math.abs(withGauge.speed!.probability - expected)).toBeLessThan(4 * withGauge.speed!.standardError);
		});

		it('moves the impact with the speed: a wide gauge error lowers the impact chance too', () => {
			const args = {
				calibration: exact,
				setup,
				plan: { impactRadiusM: 1.5 * sigma },
				speedSdMps: 0.3,
				impactSdM: { x: sigma, y: sigma },
				samples: 5000,
				seed: 4
			};
			const without = chanceOfMeetingPlan({ ...args, gaugeSdPa: 0 });
			const withGauge = chanceOfMeetingPlan({ ...args, gaugeSdPa: 50_000 });
			expect(withGauge.impact!.probability).toBeLessThan(without.impact!.probability);
		});
	});
});
