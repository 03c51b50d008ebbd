import { readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { errorFunction } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { PhysicsInputError } from './errors';
import { flyToPlane, type FlightInput } from './flight/driver';
import { efficiencyAt, muzzleSpeed, type LauncherInput } from './internal';
import {
	CAMPAIGN_FILES,
	calibratedMuzzleSpeed,
	campaignSds,
	campaignShots,
	fitLauncher,
	muzzleWithDerivatives,
	neutralParameters,
	predictShot,
	type CampaignFile,
	type LauncherCalibration,
	type ShotSetup
} from './launcher';
import {
	gaugeSpread,
	solveCalibratedElevation,
	solveElevation,
	solveFillPressure,
	type ElevationRequest,
	type PlannedShot,
	type ShotConditions
} from './solve';

// The launcher of reference sheet §1 (6 bar, 1 L, 25 mm, 1 m, 20 g) with η = 0.6: 102.750 m/s.
const LAUNCHER: LauncherInput = {
	ambientPa: 101325,
	reservoirM3: 1e-3,
	deadM3: 0,
	boreDiameterM: 0.025,
	travelM: 1,
	massKg: 0.02,
	efficiency: 0.6
};
const RATED_PA = 8e5;

const SHOT: ShotConditions = {
	elevationDeg: 1,
	launchHeightM: 1.5,
	targetDistanceM: 30,
	diameterM: 0.025,
	dragCoefficient: 0.5,
	airDensityKgM3: 1.2
};

function muzzle(fillGaugePa: number, launcher: LauncherInput = LAUNCHER): number {
	const r = muzzleSpeed({ ...launcher, fillGaugePa });
	if (!r.ok) throw new Error(r.reason);
	return r.speedMps;
}

describe('solveFillPressure at the muzzle (physics.md §4)', () => {
	it('finds 6 bar for the speed 6 bar gives (reference §1 launcher, η = 0.6 → 102.750 m/s)', () => {
		const r = solveFillPressure({ ...LAUNCHER, at: 'muzzle', requiredSpeedMps: muzzle(6e5), ratedPressurePa: RATED_PA });
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(Math.abs(r.fillGaugePa - 6e5)).toBeLessThan(1e-6);
		expect(r.marginPa).toBeCloseTo(2e5, 6);
		expect(r.muzzleSpeedMps).toBeCloseTo(102.75, 3);
		expect(r.warnings).toEqual([]);
	});

	it('round trip: muzzleSpeed at the answer gives the required speed (constant η, energy term, gas inertia)', () => {
		const rig: LauncherInput = { ...LAUNCHER, lossN: 4, gasInertia: { gasTemperatureK: 290 } };
		for (const v of [15, 50, 90, 110]) {
			const r = solveFillPressure({ ...rig, at: 'muzzle', requiredSpeedMps: v, ratedPressurePa: RATED_PA });
			expect(r.ok, `${v} m/s`).toBe(true);
			if (!r.ok) return;
			expect(Math.abs(muzzle(r.fillGaugePa, rig) - v)).toBeLessThan(1e-9);
		}
	});

	it('round trip with a pressure-dependent efficiency η(p) = η0 + η1 (p − p_ref)/p_ref', () => {
		const efficiency = { eta0: 0.62, eta1: -0.05, pRefPa: 4e5 };
		for (const v of [40, 80, 105]) {
			const r = solveFillPressure({ ...LAUNCHER, efficiency, at: 'muzzle', requiredSpeedMps: v, ratedPressurePa: RATED_PA });
			expect(r.ok).toBe(true);
			if (!r.ok) return;
			const eta = efficiencyAt(r.fillGaugePa, efficiency);
			expect(r.efficiency).toBeCloseTo(eta, 12);
			expect(Math.abs(muzzle(r.fillGaugePa, { ...LAUNCHER, efficiency: eta }) - v)).toBeLessThan(1e-6);
		}
	});

	it('warns when the answer lies outside the pressure range the efficiency was fitted over', () => {
		const efficiency = { eta0: 0.6, eta1: -0.02, pRefPa: 3e5, fittedRangePa: { minPa: 2e5, maxPa: 4e5 } };
		const r = solveFillPressure({ ...LAUNCHER, efficiency, at: 'muzzle', requiredSpeedMps: 110, ratedPressurePa: RATED_PA });
		expect(r.ok && r.warnings.join(' ')).toMatch(/outside the pressure range .* fitted/);
	});

	it('refuses an answer above the rated working pressure, saying what the rated pressure gives', () => {
		const r = solveFillPressure({ ...LAUNCHER, at: 'muzzle', requiredSpeedMps: 150, ratedPressurePa: RATED_PA });
		expect(r).toMatchObject({ ok: false, code: 'above-rated-pressure' });
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.reason).toMatch(/rated working pressure of 8\.000 bar/);
		expect(r.reason).toContain(`${muzzle(RATED_PA).toFixed(3)} m/s`);
		expect('fillGaugePa' in r).toBe(false);
	});

	it('says when even the rated pressure would not get the projectile out of the barrel', () => {
		const r = solveFillPressure({ ...LAUNCHER, at: 'muzzle', requiredSpeedMps: 10, ratedPressurePa: 5000 });
		expect(r).toMatchObject({ ok: false, code: 'does-not-leave-barrel' });
		expect(!r.ok && r.reason).toMatch(/would not leave the barrel/);
	});

	it('refuses a speed beyond what the rating gives with the gas-inertia correction, naming the speed at the rating', () => {
		const r = solveFillPressure({
			...LAUNCHER,
			gasInertia: { gasTemperatureK: 293.15 },
			at: 'muzzle',
			requiredSpeedMps: 2000,
			ratedPressurePa: RATED_PA
		});
		expect(r).toMatchObject({ ok: false, code: 'above-rated-pressure', peak: { fillGaugePa: RATED_PA } });
	});

	it('refuses to use a calibration where its η(p) leaves (0, 1]', () => {
		// η(0) = 1.45: above 1 below 3.6 bar, so 30 m/s (which needs well under 1 bar) is out of reach.
		const efficiency = { eta0: 0.95, eta1: -0.5, pRefPa: 4e5 };
		const r = solveFillPressure({ ...LAUNCHER, efficiency, at: 'muzzle', requiredSpeedMps: 30, ratedPressurePa: RATED_PA });
		expect(r).toMatchObject({ ok: false, code: 'efficiency-out-of-range' });
	});

	it('validates its inputs with PhysicsInputError', () => {
		const base = { ...LAUNCHER, at: 'muzzle' as const, requiredSpeedMps: 50, ratedPressurePa: RATED_PA };
		expect(() => solveFillPressure({ ...base, requiredSpeedMps: 0 })).toThrow(PhysicsInputError);
		expect(() => solveFillPressure({ ...base, ratedPressurePa: Number.NaN })).toThrow(PhysicsInputError);
		expect(() => solveFillPressure({ ...base, massKg: -1 })).toThrow(PhysicsInputError);
		expect(() => solveFillPressure({ ...base, efficiency: 1.5 })).toThrow(PhysicsInputError);
	});
});

describe('solveFillPressure at the target plane', () => {
	it('round trip: the flight at the answer arrives with the required speed', () => {
		const r = solveFillPressure({ ...LAUNCHER, at: 'target', shot: SHOT, requiredSpeedMps: 80, ratedPressurePa: RATED_PA });
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(r.flight?.reached).toBe(true);
		const flight = flyToPlane({ ...SHOT, speedMps: muzzle(r.fillGaugePa), massKg: LAUNCHER.massKg });
		expect(Math.abs(flight.speedMps - 80)).toBeLessThan(1e-6);
		// dv_target/dp = (dv_target/dv0)·(dv0/dp): below the muzzle's own slope (drag takes a share).
		expect(r.speedPerPressureMpsPerPa).toBeGreaterThan(0);
		expect(r.speedPerPressureMpsPerPa).toBeLessThan(r.muzzleSpeedPerPressureMpsPerPa);
		expect(r.muzzleSpeedMps).toBeGreaterThan(80);
	});

	it('refuses above the rated pressure when drag eats the speed', () => {
		const r = solveFillPressure({ ...LAUNCHER, at: 'target', shot: SHOT, requiredSpeedMps: 100, ratedPressurePa: RATED_PA });
		expect(r).toMatchObject({ ok: false, code: 'above-rated-pressure' });
		expect(!r.ok && r.reason).toMatch(/at the target/);
	});

	it('says when even at rated pressure the shot comes down before the target plane', () => {
		const r = solveFillPressure({
			...LAUNCHER,
			at: 'target',
			shot: { ...SHOT, targetDistanceM: 400, elevationDeg: 0 },
			requiredSpeedMps: 5,
			ratedPressurePa: RATED_PA
		});
		expect(r).toMatchObject({ ok: false, code: 'target-not-reached' });
	});
});

const FLIGHTS_JSON = fileURLToPath(new URL('../../../../shared/reference/flights.json', import.meta.url));
const REFERENCE: { name: string; input: FlightInput; expected: { heightM: number } }[] = JSON.parse(
	readFileSync(FLIGHTS_JSON, 'utf8')
).cases;

describe('solveElevation (physics.md §4, low arc)', () => {
	for (const c of REFERENCE) {
		it(`recovers the elevation of reference flight ${c.name.slice(0, 2)} from its height on the plane (flights.json, reference §5)`, () => {
			const { elevationDeg, ...rest } = c.input;
			const r = solveElevation({ ...rest, aimHeightM: c.expected.heightM });
			expect(r.ok).toBe(true);
			if (!r.ok) return;
			expect(Math.abs(r.elevationDeg - elevationDeg)).toBeLessThan(1e-6);
		});
	}

	const lob: ElevationRequest = {
		speedMps: 25,
		launchHeightM: 1.5,
		targetDistanceM: 30,
		massKg: 0.05,
		diameterM: 0.04,
		dragCoefficient: 0.47,
		airDensityKgM3: 1.2,
		aimHeightM: 1.5
	};

	it('round trip: flying at the answer hits the aim height', () => {
		const r = solveElevation(lob);
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(Math.abs(flyToPlane({ ...lob, elevationDeg: r.elevationDeg }).heightM - 1.5)).toBeLessThan(1e-9);
		expect(r.flight.reached).toBe(true);
	});

	it('takes the low arc when a high arc also hits', () => {
		const r = solveElevation(lob);
		if (!r.ok) throw new Error(r.reason);
		const high = flyToPlane({ ...lob, elevationDeg: 70 });
		expect(high.reached && high.heightM).toBeGreaterThan(1.5);
		expect(r.elevationDeg).toBeGreaterThan(0);
		expect(r.elevationDeg).toBeLessThan(35);
	});

	it('says so, with the best height reachable, when no elevation reaches the aim point', () => {
		const r = solveElevation({ ...lob, aimHeightM: 40 });
		expect(r).toMatchObject({ ok: false, code: 'no-elevation' });
		if (r.ok) return;
		expect(r.reason).toMatch(/No elevation reaches 40\.000 m/);
		expect(r.bestHeightM).toBeLessThan(40);
		expect(r.bestHeightM).toBeGreaterThan(10);
		const atBest = flyToPlane({ ...lob, elevationDeg: r.bestElevationDeg as number });
		expect(Math.abs(atBest.heightM - (r.bestHeightM as number))).toBeLessThan(1e-9);
	});

	it('says so when the target plane is out of range at any elevation', () => {
		const r = solveElevation({ ...lob, targetDistanceM: 200 });
		expect(r).toMatchObject({ ok: false, code: 'no-elevation' });
		expect(!r.ok && r.reason).toMatch(/No elevation reaches the target plane at 200 m/);
	});

	it('refuses an aim point below the ground', () => {
		expect(() => solveElevation({ ...lob, aimHeightM: -1 })).toThrow(PhysicsInputError);
	});
});

// ---------------------------------------------------------------------------------------------
// Calibrations of either family (physics.md §4: the lowest pressure on a non-monotone curve).

/** A gas-work calibration whose η(p) = 0.5 − 0.3 (p − 4 bar)/4 bar makes v(p) rise, peak and fall in [0, 8 bar]. */
function humped(): LauncherCalibration {
	return {
		model: { family: 'gas-work', drag: 'constant' },
		parameters: { ...neutralParameters(4e5), efficiency: 0.5, pressureSlope: -0.3, energyOffsetJ: 2, dragCoefficient: 0.5 },
		fitted: [],
		identifiable: [],
		covariance: [],
		fillPressureRangePa: { min: 1e5, max: 7e5 }
	};
}

const PLANNED: PlannedShot = {
	rig: { reservoirM3: 1e-3, deadM3: 0, boreDiameterM: 0.025, travelM: 1 },
	projectile: { massKg: 0.02, diameterM: 0.025 },
	session: { targetDistanceM: 30, elevationDeg: 1, launchHeightM: 1.5, aimHeightM: 1.5, airDensityKgM3: 1.2, ambientPa: 101325 }
};

/** The calibrated muzzle speed, or null where the model predicts no shot. */
function curve(c: LauncherCalibration, shot: PlannedShot, p: number): number | null {
	const r = calibratedMuzzleSpeed(c.model!, c.parameters, { ...shot, fillGaugePa: p }, p);
	return r.ok ? r.speedMps : null;
}

/** The curve on a 1 Pa-free dense grid (10 000 points): its maximum, for checking the solver's peak. */
function densePeak(c: LauncherCalibration, shot: PlannedShot, ratedPa: number) {
	let best = { p: 0, v: -Infinity };
	for (let i = 0; i <= 10_000; i++) {
		const p = (ratedPa * i) / 10_000;
		const v = curve(c, shot, p);
		if (v !== null && v > best.v) best = { p, v };
	}
	return best;
}

describe('solveFillPressure under a calibration whose curve rises, peaks and falls (η1 < 0)', () => {
	const c = humped();
	const peak = densePeak(c, PLANNED, RATED_PA);

	it('has its peak inside the window (the premise of the cases below)', () => {
		expect(peak.p).toBeGreaterThan(2e5);
		expect(peak.p).toBeLessThan(6e5);
		expect(curve(c, PLANNED, RATED_PA)!).toBeLessThan(peak.v - 5);
	});

	it('returns the LOWEST pressure for a speed reached on both flanks (and another pressure on the falling flank gives it too)', () => {
		const top = curve(c, PLANNED, RATED_PA)!;
		for (const v of [0.5 * top, top - 1, (top + peak.v) / 2]) {
			const r = solveFillPressure({ calibration: c, shot: PLANNED, at: 'muzzle', requiredSpeedMps: v, ratedPressurePa: RATED_PA });
			expect(r.ok, `${v} m/s`).toBe(true);
			if (!r.ok) return;
			expect(r.fillGaugePa).toBeLessThan(peak.p);
			expect(Math.abs(curve(c, PLANNED, r.fillGaugePa)! - v)).toBeLessThan(1e-9 * v);
			// Nothing below the answer reaches the speed (scanned on a fine grid)...
			for (let i = 0; i < 200; i++) {
				const below = curve(c, PLANNED, (r.fillGaugePa * i) / 200);
				expect(below === null || below < v).toBe(true);
			}
			// ...while the falling flank reaches it again at a higher pressure.
			const falling = [];
			for (let p = peak.p; p <= RATED_PA; p += 1000) falling.push(curve(c, PLANNED, p)!);
			if (v > top) expect(falling.some((s) => s < v)).toBe(true);
			expect(r.speedPerPressureMpsPerPa).toBeGreaterThan(0);
			expect(r.warnings).toEqual([]);
		}
	});

	it('reports dv/dp at the answer as the analytic derivative of the gas-work curve (checked by a central difference)', () => {
		const r = solveFillPressure({ calibration: c, shot: PLANNED, at: 'muzzle', requiredSpeedMps: peak.v - 10, ratedPressurePa: RATED_PA });
		if (!r.ok) throw new Error(r.reason);
		const h = 10;
		const central = (curve(c, PLANNED, r.fillGaugePa + h)! - curve(c, PLANNED, r.fillGaugePa - h)!) / (2 * h);
		expect(r.speedPerPressureMpsPerPa).toBeCloseTo(central, 9);
	});

	it('refuses a speed above the peak, naming the peak speed and its pressure', () => {
		const r = solveFillPressure({ calibration: c, shot: PLANNED, at: 'muzzle', requiredSpeedMps: peak.v + 0.5, ratedPressurePa: RATED_PA });
		expect(r).toMatchObject({ ok: false, code: 'beyond-curve-peak' });
		if (r.ok || !r.peak) throw new Error('expected a refusal with the peak');
		// The dense grid's step is 80 Pa; the curve is flat at the top (second order).
		expect(Math.abs(r.peak.fillGaugePa - peak.p)).toBeLessThan(200);
		expect(r.peak.speedMps).toBeGreaterThanOrEqual(peak.v - 1e-9);
		expect(r.peak.speedMps - peak.v).toBeLessThan(1e-4);
		expect(r.reason).toContain(`${r.peak.speedMps.toFixed(3)} m/s`);
		expect(r.reason).toContain(`${(r.peak.fillGaugePa / 1e5).toFixed(3)} bar`);
	});

	it('never refuses a speed the calibration predicts at some allowed pressure: just under the peak is solved', () => {
		const r = solveFillPressure({ calibration: c, shot: PLANNED, at: 'muzzle', requiredSpeedMps: peak.v - 1e-3, ratedPressurePa: RATED_PA });
		expect(r.ok).toBe(true);
	});

	it('at the target plane: the lowest pressure on the rising flank, the flight arriving at the speed', () => {
		const v = curve(c, PLANNED, 2.5e5)! - 5;
		const r = solveFillPressure({ calibration: c, shot: PLANNED, at: 'target', requiredSpeedMps: v, ratedPressurePa: RATED_PA });
		if (!r.ok) throw new Error(r.reason);
		expect(r.fillGaugePa).toBeLessThan(peak.p);
		const shot = predictShot(c, { ...PLANNED, fillGaugePa: r.fillGaugePa });
		if (!shot.ok) throw new Error(shot.reason);
		expect(Math.abs(shot.impact.speedMps - v)).toBeLessThan(1e-6 * v);
	});
});

describe('solveFillPressure under a valve-flow calibration (Rohrbach, Buresh & Madsen 2012 family)', () => {
	// 3 L reservoir, 36 mm bore, 1.5 m travel, 20.6 g projectile, rated 1 MPa.
	const rated = 1e6;
	const valve: LauncherCalibration = {
		model: { family: 'valve-flow', drag: 'sphere' },
		parameters: { ...neutralParameters(5e5), valveAreaM2: 2e-4, openingTimeS: 0.015, frictionN: 1, dragCoefficient: 1 },
		fitted: [],
		identifiable: [],
		covariance: [],
		fillPressureRangePa: { min: 1e5, max: 9e5 }
	};
	const shot: PlannedShot = {
		rig: { reservoirM3: 3e-3, deadM3: 2e-5, boreDiameterM: 0.036, travelM: 1.5 },
		projectile: { massKg: 0.0206, diameterM: 0.035 },
		session: { targetDistanceM: 10, elevationDeg: 2, launchHeightM: 1.2, aimHeightM: 1.2, airDensityKgM3: 1.2, ambientPa: 101325, temperatureC: 20 }
	};

	it('solves a mid-range muzzle speed; predictShot at the answer gives it to 1e-6 relative', () => {
		const low = curve(valve, shot, 0.2 * rated)!;
		const high = curve(valve, shot, 0.8 * rated)!;
		const v = (low + high) / 2;
		const r = solveFillPressure({ calibration: valve, shot, at: 'muzzle', requiredSpeedMps: v, ratedPressurePa: rated });
		if (!r.ok) throw new Error(r.reason);
		expect(r.efficiency).toBeNull();
		const p = predictShot(valve, { ...shot, fillGaugePa: r.fillGaugePa });
		if (!p.ok) throw new Error(p.reason);
		expect(Math.abs(p.muzzleSpeedMps - v)).toBeLessThan(1e-6 * v);
		// dv/dp from muzzleWithDerivatives (forward difference of the ODE).
		const d = muzzleWithDerivatives(valve.model!, valve.parameters, { ...shot, fillGaugePa: r.fillGaugePa });
		expect(r.speedPerPressureMpsPerPa).toBeCloseTo(d!.perPressure, 12);
	});

	it('solves a speed at the target plane under the sphere drag law', () => {
		const muzzleAtHalf = curve(valve, shot, 0.5 * rated)!;
		const atHalf = predictShot(valve, { ...shot, fillGaugePa: 0.5 * rated });
		if (!atHalf.ok) throw new Error(atHalf.reason);
		expect(atHalf.impact.speedMps).toBeLessThan(muzzleAtHalf);
		const r = solveFillPressure({ calibration: valve, shot, at: 'target', requiredSpeedMps: atHalf.impact.speedMps, ratedPressurePa: rated });
		if (!r.ok) throw new Error(r.reason);
		expect(Math.abs(r.fillGaugePa - 0.5 * rated)).toBeLessThan(1e-3);
	});

	it('aims under the sphere law with the elevation bias: flying at set elevation + δθ hits the aim height', () => {
		const biased = { ...valve, parameters: { ...valve.parameters, elevationBiasDeg: 0.4 } };
		const speed = curve(valve, shot, 0.5 * rated)!;
		const r = solveCalibratedElevation(biased, shot, speed);
		if (!r.ok) throw new Error(r.reason);
		const check = predictShot(biased, { ...shot, fillGaugePa: 0.5 * rated, session: { ...shot.session, elevationDeg: r.elevationDeg } });
		if (!check.ok) throw new Error(check.reason);
		expect(Math.abs(check.impact.heightM)).toBeLessThan(1e-7);
		// The constant law with the same number would aim elsewhere: the drag law is honoured.
		const constant = solveCalibratedElevation({ ...biased, model: { family: 'valve-flow', drag: 'constant' } }, shot, speed);
		if (!constant.ok) throw new Error(constant.reason);
		expect(Math.abs(constant.elevationDeg - r.elevationDeg)).toBeGreaterThan(1e-4);
	});
});

describe('solveFillPressure on the reference campaigns (shared/reference/campaigns, gas work η0 + η1 + E)', () => {
	for (const name of CAMPAIGN_FILES) {
		it(`${name}: the median measured muzzle speed is hit by the calibrated model at the solver's answer`, () => {
			const file: CampaignFile = JSON.parse(readFileSync(path.resolve('..', 'shared/reference/campaigns', name), 'utf8'));
			const shots = campaignShots(file);
			const fit = fitLauncher(shots, campaignSds(file), { pressureSlope: true, energyOffset: true, elevationBias: true, crossValidation: false });
			const speeds = shots.flatMap((s) => (s.muzzleSpeedMps === undefined ? [] : [s.muzzleSpeedMps])).sort((a, b) => a - b);
			const median = speeds[Math.floor(speeds.length / 2)];
			const planned: PlannedShot = { rig: shots[0].rig, projectile: shots[0].projectile, session: shots[0].session };
			const r = solveFillPressure({ calibration: fit.calibration, shot: planned, at: 'muzzle', requiredSpeedMps: median, ratedPressurePa: file.rig.ratedGaugePa });
			if (!r.ok) throw new Error(r.reason);
			expect(r.fillGaugePa).toBeLessThanOrEqual(file.rig.ratedGaugePa);
			const setup: ShotSetup = { ...planned, fillGaugePa: r.fillGaugePa };
			const p = predictShot(fit.calibration, setup);
			if (!p.ok) throw new Error(p.reason);
			expect(Math.abs(p.muzzleSpeedMps - median)).toBeLessThan(1e-6 * median);
			// The lowest answer: no lower pressure of a fine grid reaches the speed.
			for (let i = 0; i < 400; i++) {
				const below = curve(fit.calibration, planned, (r.fillGaugePa * i) / 400);
				expect(below === null || below < median).toBe(true);
			}
		});
	}
});

/** Standard normal CDF Φ(x) = ½(1 + erf(x/√2)) (simple-statistics' erf: Numerical Recipes' erfcc, < 1.2e-7). */
const phi = (x: number) => 0.5 * (1 + errorFunction(x / Math.SQRT2));

describe('gaugeSpread (physics.md §4: what the gauge error does to the speed)', () => {
	it('σ_v = |dv/dp|·σ_p and P(|δv| ≤ tol) = 2Φ(tol/σ_v) − 1 (normal rule)', () => {
		// 1.7 m/s per kPa, σ_p = 1 kPa, ±5 % of 70 m/s: 96 % from the gauge alone, inside the 95 % rule.
		const g = gaugeSpread(1.7e-3, 1000, 3.5);
		expect(g.speedSdMps).toBeCloseTo(1.7, 12);
		expect(g.withinToleranceProbability).toBeCloseTo(2 * phi(3.5 / 1.7) - 1, 6);
		expect(g.withinToleranceProbability).toBeLessThan(0.97);
		expect(g.exceedsTolerance).toBe(false);
		// ±3 m/s: ±1.96 σ_v = ±3.33 m/s no longer fits.
		expect(gaugeSpread(1.7e-3, 1000, 3).exceedsTolerance).toBe(true);
		expect(gaugeSpread(0, 1000, 1)).toEqual({ speedSdMps: 0, withinToleranceProbability: 1, exceedsTolerance: false });
		expect(() => gaugeSpread(1e-3, -1, 1)).toThrow(PhysicsInputError);
	});
});
