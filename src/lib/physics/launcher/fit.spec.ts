import { describe, expect, it } from 'vitest';
import { PhysicsInputError } from '../errors';
import { flyToPlane } from '../flight/driver';
import { muzzleSpeed } from '../internal';
import { studentTQuantile } from '../stats/student-t';
import { leastSquares } from '../fit/least-squares';
import {
	fitLauncher,
	predictShot,
	OUTLIER_THRESHOLD,
	type CalibrationParameters,
	type CalibrationShot,
	type LauncherCalibration,
	type MeasurementSds,
	type RangeConditions
} from './index';
import { simulateCampaign, type SyntheticCampaign } from './synthetic';

// Launcher of reference sheet §1 (V0 = 1 L, d = 25 mm, L = 1 m, m = 20 g, γ = 1.4).
const RIG = { reservoirM3: 1e-3, deadM3: 0, boreDiameterM: 0.025, travelM: 1 };
const PROJECTILE = { massKg: 0.02, diameterM: 0.025 };
const P_ATM = 101325;

describe('reference sheet §7: synthetic (η, C_D) campaign of fit_example.py (flat fire, unweighted LM)', () => {
	// Model of the script: v_m = √(2(η·W_ad − p_atm·A·L)/m) (the energy balance of muzzleSpeed),
	// v_t = v_m·e^(−kD), k = ρ C_D A/(2m), ρ = 1.20, D = 30 m; gauge 2..6 bar.
	const gauges = [2e5, 3e5, 4e5, 5e5, 6e5];
	const rho = 1.2;
	const distance = 30;
	const area = (Math.PI * 0.025 ** 2) / 4;
	const model = ([eta, cd]: number[]) => {
		const vm = gauges.map((pg) => {
			const r = muzzleSpeed({ ...RIG, ...PROJECTILE, fillGaugePa: pg, ambientPa: P_ATM, efficiency: eta });
			return r.ok ? r.speedMps : NaN;
		});
		const k = (rho * cd * area) / (2 * PROJECTILE.massKg);
		return [...vm, ...vm.map((v) => v * Math.exp(-k * distance))];
	};
	const noise = [0.8, -0.5, 0.3, -0.9, 0.4, -0.6, 0.7, -0.2, 0.5, -0.4];
	const truth = [0.62, 0.5];

	it('noise-free model values: v_m = 43.837759 … 105.239529, v_t = 35.149215 … 84.381295 m/s', () => {
		const values = model(truth);
		const expected = [
			43.837759, 64.88568, 80.613608, 93.738765, 105.239529, 35.149215, 52.025486, 64.636175, 75.159956, 84.381295
		];
		values.forEach((v, i) => expect(v).toBeCloseTo(expected[i], 6));
	});

	it('fit with the fixed residuals: η 0.620070, C_D 0.499551, SE 0.002327 / 0.012478, RSS 3.24777, t(0.975, 8) 2.306004, corr 0.601', () => {
		const y = model(truth).map((v, i) => v + noise[i]);
		const r = leastSquares({ residuals: (p) => model(p).map((v, i) => v - y[i]), start: [0.5, 0.8] });
		expect(r.converged, r.message).toBe(true);
		expect(r.params[0]).toBeCloseTo(0.62007, 6);
		expect(r.params[1]).toBeCloseTo(0.499551, 6);
		expect(r.standardErrors[0]).toBeCloseTo(0.002327, 6);
		expect(r.standardErrors[1]).toBeCloseTo(0.012478, 6);
		expect(r.rss).toBeCloseTo(3.24777, 5);
		expect(r.dof).toBe(8);
		expect(r.tQuantile975).toBeCloseTo(2.306004, 6);
		expect(r.correlation[0][1]).toBeCloseTo(0.601, 3);
	});

	it('noise-free refit returns (0.62, 0.50) (reference: to 1e-15 with scipy)', () => {
		const y = model(truth);
		const r = leastSquares({ residuals: (p) => model(p).map((v, i) => v - y[i]), start: [0.5, 0.8] });
		expect(r.params[0]).toBeCloseTo(0.62, 9);
		expect(r.params[1]).toBeCloseTo(0.5, 9);
	});
});

// Campaigns generated with the physics module (muzzleSpeed + flyToPlane via predictShot) and
// seeded noise (createRandom): the fit must recover what went in.
const NOISE: MeasurementSds = { speedMps: 0.3, pressurePa: 2000, impactM: 0.01 };
const TRUTH: CalibrationParameters = {
	efficiency: 0.62,
	pressureSlope: 0,
	pRefPa: 5e5,
	energyOffsetJ: 0,
	valveAreaM2: 1e-4,
	openingTimeS: 0.01,
	frictionN: 0,
	dragCoefficient: 0.5,
	elevationBiasDeg: 0.3
};

function session(id: string, overrides: Partial<RangeConditions> = {}): RangeConditions {
	return {
		sessionId: id,
		targetDistanceM: 30,
		elevationDeg: 4,
		launchHeightM: 1.5,
		aimHeightM: 2,
		airDensityKgM3: 1.2,
		ambientPa: P_ATM,
		wind: { xMps: -1, zMps: 0.5 },
		...overrides
	};
}

function campaign(overrides: Partial<SyntheticCampaign> = {}): CalibrationShot[] {
	return simulateCampaign({
		truth: TRUTH,
		rig: RIG,
		projectile: PROJECTILE,
		sessions: [session('a'), session('b', { airDensityKgM3: 1.16, wind: { xMps: 1.5, zMps: -1 } })],
		fillPressuresPa: [3e5, 4e5, 5e5, 6e5, 7e5],
		shotsPerSession: 10,
		noise: NOISE,
		measure: { muzzleSpeed: true, downrangeDistanceM: 20, impactHeight: true },
		seed: 7,
		...overrides
	});
}

const truthOf = (name: string, t: CalibrationParameters = TRUTH) =>
	({
		efficiency: t.efficiency,
		pressureSlope: t.pressureSlope,
		energyOffset: t.energyOffsetJ,
		dragCoefficient: t.dragCoefficient,
		elevationBias: t.elevationBiasDeg
	})[name]!;

describe('fitLauncher: recovery of known parameters from simulated campaigns', () => {
	it('η0, C_D and δθ from muzzle speeds, downrange speeds and impacts (20 shots, 2 sessions)', () => {
		const fit = fitLauncher(campaign(), NOISE, { elevationBias: true });
		expect(fit.converged, fit.message).toBe(true);
		expect(fit.parameters.map((p) => p.name)).toEqual(['efficiency', 'dragCoefficient', 'elevationBias']);
		for (const p of fit.parameters) {
			expect(p.identifiable, p.reason ?? '').toBe(true);
			expect(Math.abs(p.value - truthOf(p.name)) / p.standardError).toBeLessThan(3);
			const halfWidth = studentTQuantile(0.975, 57) * p.standardError;
			expect(p.confidence95.upper - p.value).toBeCloseTo(halfWidth, 12);
		}
		// 60 observations, 3 parameters.
		expect(fit.dof).toBe(57);
		expect(fit.nUsed).toEqual({ shots: 20, observations: 60, muzzleSpeed: 20, downrangeSpeed: 20, impactHeight: 20 });
		// The SDs were right, so χ²/dof ≈ 1 (χ²₅₇ has SD √(2/57) ≈ 0.19 on that scale).
		expect(fit.residualScale).toBeGreaterThan(0.6);
		expect(fit.residualScale).toBeLessThan(1.4);
		expect(fit.correlation[0][0]).toBe(1);
		expect(fit.correlation[0][1]).toBeCloseTo(fit.correlation[1][0], 12);
		expect(fit.calibration.parameters.pRefPa).toBeCloseTo(5e5, 6);
		expect(fit.calibration.fillPressureRangePa).toEqual({ min: 3e5, max: 7e5 });
	});

	it('noise-free data give the truth back to the accuracy of the flight integration', () => {
		const shots = campaign({ noise: { speedMps: 0, pressurePa: 0, impactM: 0 } });
		const fit = fitLauncher(shots, NOISE, { elevationBias: true, crossValidation: false });
		expect(fit.parameters[0].value).toBeCloseTo(0.62, 7);
		expect(fit.parameters[1].value).toBeCloseTo(0.5, 6);
		expect(fit.parameters[2].value).toBeCloseTo(0.3, 6);
		expect(fit.chiSquare).toBeLessThan(1e-6);
	});

	it('a negative energy term is recovered as negative, never clamped at 0 (physics.md §1: E has either sign)', () => {
		const truth = { ...TRUTH, energyOffsetJ: -25 };
		const shots = campaign({ truth, shotsPerSession: 30, fillPressuresPa: [2e5, 3e5, 4e5, 5e5, 6e5, 7e5, 8e5] });
		const fit = fitLauncher(shots, NOISE, { energyOffset: true, elevationBias: true, crossValidation: false });
		expect(fit.converged, fit.message).toBe(true);
		const e = fit.parameters.find((p) => p.name === 'energyOffset')!;
		expect(e.atBound).toBeNull();
		expect(e.unit).toBe('J');
		expect(Math.abs(e.value - -25) / e.standardError).toBeLessThan(3);
		expect(e.confidence95.upper).toBeLessThan(0);
	});

	it('pressure slope η1 and energy term E: recovered, and p_ref is the mean fill pressure', () => {
		const truth = { ...TRUTH, pressureSlope: -0.06, energyOffsetJ: 3 };
		const shots = campaign({ truth, shotsPerSession: 30, fillPressuresPa: [2e5, 3e5, 4e5, 5e5, 6e5, 7e5, 8e5] });
		const fit = fitLauncher(shots, NOISE, { pressureSlope: true, energyOffset: true, elevationBias: true });
		expect(fit.converged, fit.message).toBe(true);
		const mean = shots.reduce((s, x) => s + x.fillGaugePa, 0) / shots.length;
		expect(fit.calibration.parameters.pRefPa).toBeCloseTo(mean, 6);
		// Truth η0 is defined at TRUTH.pRefPa = 5e5: η(p_ref) = η0 + η1 (p_ref − 5e5)/5e5.
		const truthAtRef = { ...truth, efficiency: truth.efficiency + (truth.pressureSlope * (mean - 5e5)) / 5e5, pressureSlope: (truth.pressureSlope * mean) / 5e5 };
		for (const p of fit.parameters) {
			expect(p.identifiable, p.reason ?? '').toBe(true);
			expect(Math.abs(p.value - truthOf(p.name, truthAtRef)) / p.standardError).toBeLessThan(3);
		}
	});

	it('a model without the needed pressure slope predicts held-out shots far above the noise floor; with it, near the floor (physics.md §5)', () => {
		const truth = { ...TRUTH, pressureSlope: -0.15 };
		const shots = campaign({ truth, shotsPerSession: 20, fillPressuresPa: [2e5, 3e5, 4e5, 5e5, 6e5, 7e5, 8e5] });
		const flat = fitLauncher(shots, NOISE, { elevationBias: true });
		const sloped = fitLauncher(shots, NOISE, { elevationBias: true, pressureSlope: true });
		const floor = flat.noiseFloorByKind.muzzleSpeed!;
		expect(flat.crossValidation!.method).toBe('leave-one-session-out');
		expect(flat.crossValidation!.rmsByKind.muzzleSpeed!).toBeGreaterThan(3 * floor);
		expect(sloped.crossValidation!.rmsByKind.muzzleSpeed!).toBeLessThan(1.5 * floor);
		expect(sloped.crossValidation!.rmsByKind.muzzleSpeed!).toBeGreaterThanOrEqual(0.8 * sloped.rmsByKind.muzzleSpeed!);
	});

	it('cross-validation is k-fold when all shots come from one session', () => {
		const fit = fitLauncher(campaign({ sessions: [session('only')] }), NOISE, { crossValidation: 'auto' });
		expect(fit.crossValidation).toMatchObject({ method: 'k-fold', folds: 5, failedFolds: 0 });
		for (const kind of ['muzzleSpeed', 'downrangeSpeed', 'impactHeight'] as const)
			expect(fit.crossValidation!.rmsByKind[kind]).toBeGreaterThan(0);
	});
});

/**
 * Exact binomial acceptance band [lo, hi] for X ~ Bin(n, p): the smallest lo and largest hi with
 * P(X < lo) ≤ α/2 and P(X > hi) ≤ α/2.
 */
function binomialBand(n: number, p: number, alpha: number): [number, number] {
	const logChoose = (k: number) => {
		let s = 0;
		for (let i = 1; i <= k; i++) s += Math.log((n - k + i) / i);
		return s;
	};
	const pmf = Array.from({ length: n + 1 }, (_, k) => Math.exp(logChoose(k) + k * Math.log(p) + (n - k) * Math.log1p(-p)));
	let lo = 0;
	for (let below = 0; below + pmf[lo] <= alpha / 2; lo++) below += pmf[lo];
	let hi = n;
	for (let above = 0; above + pmf[hi] <= alpha / 2; hi--) above += pmf[hi];
	return [lo, hi];
}

describe('fitLauncher: coverage of the 95 % intervals', () => {
	it('over 200 simulated campaigns, each interval contains the truth about 95 % of the time (exact binomial band, α = 0.002)', () => {
		const campaigns = 200;
		const covered = { efficiency: 0, dragCoefficient: 0, elevationBias: 0 };
		for (let seed = 1; seed <= campaigns; seed++) {
			const shots = campaign({ sessions: [session('s')], shotsPerSession: 10, seed: 10_000 + seed });
			const fit = fitLauncher(shots, NOISE, { elevationBias: true, crossValidation: false });
			expect(fit.converged, fit.message).toBe(true);
			for (const p of fit.parameters) {
				const t = truthOf(p.name);
				if (p.confidence95.lower <= t && t <= p.confidence95.upper) covered[p.name as keyof typeof covered]++;
			}
		}
		const [lo, hi] = binomialBand(campaigns, 0.95, 0.002);
		// Same band from scipy.stats.binom (cdf(lo − 1) ≤ 0.001, sf(hi) ≤ 0.001), computed for this test.
		expect([lo, hi]).toEqual([179, 198]);
		for (const count of Object.values(covered)) {
			expect(count).toBeGreaterThanOrEqual(lo);
			expect(count).toBeLessThanOrEqual(hi);
		}
	});
});

describe('fitLauncher: what the data cannot determine', () => {
	it('C_D from muzzle speeds only is reported as not determined, with the reason', () => {
		const shots = campaign({ measure: { muzzleSpeed: true, downrangeDistanceM: null, impactHeight: false } });
		const fit = fitLauncher(shots, NOISE, { dragCoefficient: true });
		const cd = fit.parameters.find((p) => p.name === 'dragCoefficient')!;
		expect(cd.identifiable).toBe(false);
		expect(cd.reason).toBe('drag coefficient C_D cannot be determined: no downrange speeds or impact heights at distance');
		expect(cd.standardError).toBe(Infinity);
		expect(cd.confidence95).toEqual({ lower: -Infinity, upper: Infinity });
		expect(fit.parameters[0].identifiable).toBe(true);
		expect(fit.calibration.identifiable).toEqual([true, false]);
		expect(fit.message).toContain('no downrange speeds or impact heights');
	});

	it('C_D from impacts 2 m from the muzzle is reported as not determined (interval wider than its plausible range)', () => {
		const shots = campaign({
			sessions: [session('near', { targetDistanceM: 2, elevationDeg: 0.5 })],
			measure: { muzzleSpeed: true, downrangeDistanceM: null, impactHeight: true }
		});
		const fit = fitLauncher(shots, NOISE, { dragCoefficient: true });
		const cd = fit.parameters.find((p) => p.name === 'dragCoefficient')!;
		expect(cd.identifiable).toBe(false);
		expect(cd.reason).toMatch(/drag coefficient C_D cannot be determined from these shots/);
		expect(cd.standardError).toBe(Infinity);
		expect(fit.parameters[0].identifiable).toBe(true);
	});

	it('the pressure slope from shots all filled to one pressure is not determined', () => {
		const shots = campaign({ fillPressuresPa: [5e5] });
		const fit = fitLauncher(shots, NOISE, { pressureSlope: true });
		const slope = fit.parameters.find((p) => p.name === 'pressureSlope')!;
		expect(slope.identifiable).toBe(false);
		expect(slope.reason).toMatch(/same pressure/);
	});
});

describe('fitLauncher: residuals and outliers', () => {
	it('flags (and keeps) a shot whose muzzle speed is 10 SD off; standardised residual = residual / SD', () => {
		const shots = campaign();
		const bad = 7;
		shots[bad] = { ...shots[bad], muzzleSpeedMps: shots[bad].muzzleSpeedMps! + 10 * 0.36 };
		const fit = fitLauncher(shots, NOISE, { elevationBias: true });
		const worst = fit.outliers.reduce((a, b) => (Math.abs(b.standardized) > Math.abs(a.standardized) ? b : a));
		expect([worst.shotIndex, worst.kind]).toEqual([bad, 'muzzleSpeed']);
		expect(worst.standardized).toBeGreaterThan(8);
		expect(fit.shots[bad].outlier).toBe(true);
		expect(fit.nUsed.shots).toBe(shots.length);
		for (const s of fit.shots)
			for (const o of s.observations) {
				expect(o.residual).toBeCloseTo(o.measured - o.predicted, 12);
				expect(o.standardized).toBeCloseTo(o.residual / o.sd, 12);
				expect(o.outlier).toBe(Math.abs(o.standardized) > OUTLIER_THRESHOLD);
			}
	});

	it('a muzzle-speed SD carries the gauge error: √(σ_c² + (σ_p·dv/dp)²), dv/dp by central difference (with the gas-inertia option too)', () => {
		for (const rig of [RIG, { ...RIG, gasInertia: { gasTemperatureK: 293.15 } }]) {
			const shots = campaign({ rig });
			const fit = fitLauncher(shots, NOISE, { elevationBias: true, crossValidation: false });
			const shot = shots[3];
			const h = 10;
			const speed = (p: number) => {
				const r = predictShot(fit.calibration, { ...shot, fillGaugePa: p });
				if (!r.ok) throw new Error(r.reason);
				return r.muzzleSpeedMps;
			};
			const slope = (speed(shot.fillGaugePa + h) - speed(shot.fillGaugePa - h)) / (2 * h);
			const sd = fit.shots[3].observations.find((o) => o.kind === 'muzzleSpeed')!.sd;
			expect(sd).toBeCloseTo(Math.hypot(NOISE.speedMps, NOISE.pressurePa * slope), 9);
		}
	});

	it('in-sample RMS per kind is in physical units and close to the noise floor for a correct model', () => {
		const fit = fitLauncher(campaign({ shotsPerSession: 30 }), NOISE, { elevationBias: true, crossValidation: false });
		for (const kind of ['muzzleSpeed', 'downrangeSpeed', 'impactHeight'] as const) {
			const ratio = fit.rmsByKind[kind]! / fit.noiseFloorByKind[kind]!;
			expect(ratio).toBeGreaterThan(0.7);
			expect(ratio).toBeLessThan(1.3);
		}
		expect(fit.noiseFloorByKind.impactHeight).toBeCloseTo(Math.sqrt(mean(fit.shots.map((s) => s.observations[2].sd ** 2))), 12);
	});
});

function mean(xs: number[]): number {
	return xs.reduce((s, v) => s + v, 0) / xs.length;
}

describe('predictShot', () => {
	const calibration: LauncherCalibration = {
		parameters: { ...TRUTH, pressureSlope: -0.05, energyOffsetJ: 2 },
		fitted: ['efficiency', 'pressureSlope', 'energyOffset', 'dragCoefficient', 'elevationBias'],
		identifiable: [true, true, true, true, true],
		covariance: Array.from({ length: 5 }, () => new Array<number>(5).fill(0)),
		fillPressureRangePa: { min: 3e5, max: 7e5 }
	};
	const setup = { rig: RIG, projectile: PROJECTILE, session: session('p'), fillGaugePa: 4.5e5 };

	it('is muzzleSpeed with η(p_g) = η0 + η1(p_g − p_ref)/p_ref and E (as E/L), then flyToPlane with C_D and θ + δθ', () => {
		const r = predictShot(calibration, setup, { downrangeDistanceM: 20 });
		if (!r.ok) throw new Error(r.reason);
		const eta = 0.62 - (0.05 * (4.5e5 - 5e5)) / 5e5;
		expect(r.efficiency).toBeCloseTo(eta, 14);
		const ms = muzzleSpeed({ ...RIG, ...PROJECTILE, fillGaugePa: 4.5e5, ambientPa: P_ATM, efficiency: eta, lossN: 2 / RIG.travelM });
		if (!ms.ok) throw new Error(ms.reason);
		expect(r.muzzleSpeedMps).toBe(ms.speedMps);
		const flight = {
			speedMps: ms.speedMps,
			elevationDeg: 4.3,
			launchHeightM: 1.5,
			massKg: 0.02,
			diameterM: 0.025,
			dragCoefficient: 0.5,
			airDensityKgM3: 1.2,
			wind: { xMps: -1, zMps: 0.5 }
		};
		const atTarget = flyToPlane({ ...flight, targetDistanceM: 30 });
		expect(r.impact.heightAboveGroundM).toBe(atTarget.heightM);
		expect(r.impact.heightM).toBeCloseTo(atTarget.heightM - 2, 14);
		expect(r.impact.lateralM).toBe(atTarget.lateralM);
		expect(r.downrange!.speedMps).toBe(flyToPlane({ ...flight, targetDistanceM: 20 }).speedMps);
		expect(r.outsideCalibratedPressures).toBe(false);
	});

	it('says when the fill pressure lies outside the calibrated range, and refuses when η leaves (0, 1]', () => {
		const outside = predictShot(calibration, { ...setup, fillGaugePa: 8e5 });
		expect(outside.ok && outside.outsideCalibratedPressures).toBe(true);
		expect(outside.ok && outside.warnings.join(' ')).toMatch(/outside the calibrated range/);
		const steep = { ...calibration, parameters: { ...calibration.parameters, pressureSlope: 2 } };
		const refused = predictShot(steep, { ...setup, fillGaugePa: 9e5 });
		expect(refused.ok).toBe(false);
	});

	it('rejects invalid shots with a PhysicsInputError naming the field', () => {
		const shots = campaign();
		shots[2] = { ...shots[2], muzzleSpeedMps: -3 };
		expect(() => fitLauncher(shots, NOISE)).toThrow(PhysicsInputError);
		try {
			fitLauncher(shots, NOISE);
		} catch (e) {
			expect((e as PhysicsInputError).field).toBe('shots[2].muzzleSpeedMps');
		}
	});
});

describe('fitLauncher: a family far from the data stays on feasible ground', () => {
	// A throttled rig (a small valve: speeds far below the ideal gas work, like the demo's H1),
	// simulated with the valve-flow family, fitted with gas work η0 + η1 + E: the best fit pushes
	// η0 onto its lower bound. The solver must never accept a step, clamped onto that bound, at
	// which a shot cannot be predicted (there the residuals are not finite) — it once did, and the
	// fit then stopped on a Jacobian it could not compute.
	it('converges, and every shot is predictable at the solution', () => {
		const session = { sessionId: 'sweep', targetDistanceM: 5, elevationDeg: 2.5, launchHeightM: 1.2, aimHeightM: 1.2, airDensityKgM3: 1.26, ambientPa: 101900, temperatureC: 6, wind: { xMps: 0, zMps: 0 } };
		const shots = simulateCampaign({
			truth: { ...TRUTH, valveAreaM2: 3e-5, openingTimeS: 0.02, frictionN: 1.5, dragCoefficient: 0.45, elevationBiasDeg: 0 },
			model: { family: 'valve-flow', drag: 'constant' },
			rig: { reservoirM3: 2e-3, deadM3: 0.05e-3, boreDiameterM: 0.0254, travelM: 1.2 },
			projectile: { massKg: 7.53e-3, diameterM: 0.025 },
			sessions: [session],
			fillPressuresPa: [1e5, 1.2e5, 1.4e5, 1.6e5, 1.8e5, 2e5, 2.2e5, 2.4e5],
			shotsPerSession: 40,
			noise: { speedMps: 0.1, pressurePa: 800, impactM: 0.005 },
			measure: { muzzleSpeed: true, downrangeDistanceM: 4.5, impactHeight: true },
			seed: 11
		});
		const fit = fitLauncher(shots, { speedMps: 0.1, pressurePa: 1000, impactM: 0.01 }, { pressureSlope: true, energyOffset: true, elevationBias: true, crossValidation: false });
		expect(fit.converged, fit.message).toBe(true);
		expect(fit.failure).toBeNull();
		expect(fit.nUsed.shots).toBe(shots.length);
		for (const s of shots) expect(predictShot(fit.calibration, s).ok).toBe(true);
	});
});
