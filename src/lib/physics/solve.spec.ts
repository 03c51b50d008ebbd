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
