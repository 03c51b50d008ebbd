import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { PhysicsInputError } from '../errors';
import { createRandom } from '../random';
import { flightPath, flyToPlane, type FlightInput, type FlightResult } from './driver';
import { dragFactor, STANDARD_GRAVITY_MPS2 as G } from './model';

// Reference flights: shared/reference/flights.json (SciPy solve_ivp DOP853, rtol = atol = 1e-12;
// reference-sheet.md §5), found beside the repository so the test runs from any clone location.
const FLIGHTS_JSON = fileURLToPath(new URL('../../../../../shared/reference/flights.json', import.meta.url));

interface ReferenceCase {
	name: string;
	input: FlightInput;
	expected: { reached: boolean; timeS: number; heightM: number; lateralM: number; speedMps: number };
}
const REFERENCE: ReferenceCase[] = JSON.parse(readFileSync(FLIGHTS_JSON, 'utf8')).cases;

/** Accuracy required by shared/design/physics.md §3 and flights.json's "about". */
const TOL_M = 1e-6;
const TOL_S = 1e-7;
const TOL_MPS = 1e-6;

/** Every numeric field of a result is finite (never NaN, never ±Infinity). */
function expectFinite(r: FlightResult): void {
	for (const key of ['timeS', 'heightM', 'lateralM', 'speedMps', 'downrangeM'] as const) {
		expect(Number.isFinite(r[key]), `${key} = ${r[key]}`).toBe(true);
	}
}

describe('flyToPlane — reference flights (flights.json; reference §5, SciPy DOP853 at 1e-12)', () => {
	it('has the six cases C1..C6', () => {
		expect(REFERENCE.map((c) => c.name.slice(0, 2))).toEqual(['C1', 'C2', 'C3', 'C4', 'C5', 'C6']);
	});

	for (const c of REFERENCE) {
		it(`${c.name}: within 1e-6 m, 1e-7 s, 1e-6 m/s`, () => {
			const r = flyToPlane(c.input);
			expect(r.reached).toBe(c.expected.reached);
			expect(r.endedBy).toBe('target');
			expect(r.downrangeM).toBe(c.input.targetDistanceM);
			expect(Math.abs(r.timeS - c.expected.timeS)).toBeLessThan(TOL_S);
			expect(Math.abs(r.heightM - c.expected.heightM)).toBeLessThan(TOL_M);
			expect(Math.abs(r.lateralM - c.expected.lateralM)).toBeLessThan(TOL_M);
			expect(Math.abs(r.speedMps - c.expected.speedMps)).toBeLessThan(TOL_MPS);
		});
	}

	it('keeps a margin: the worst error over all cases is below 1 % of each tolerance', () => {
		let worst = 0;
		for (const c of REFERENCE) {
			const r = flyToPlane(c.input);
			worst = Math.max(
				worst,
				Math.abs(r.timeS - c.expected.timeS) / TOL_S,
				Math.abs(r.heightM - c.expected.heightM) / TOL_M,
				Math.abs(r.lateralM - c.expected.lateralM) / TOL_M,
				Math.abs(r.speedMps - c.expected.speedMps) / TOL_MPS
			);
		}
		expect(worst).toBeLessThan(0.01);
	});
});

const SPHERE_40MM: Omit<FlightInput, 'speedMps' | 'elevationDeg' | 'launchHeightM' | 'targetDistanceM'> = {
	massKg: 0.05,
	diameterM: 0.04,
	dragCoefficient: 0.47,
	airDensityKgM3: 1.225
};

describe('flyToPlane — closed forms (reference §5)', () => {
	it('vacuum, v0 = 20 m/s at 30° to D = 30 m: t = D/(v0 cosθ) = 1.732051 s, y = 2.610533 m (standard; from memory)', () => {
		const v0 = 20;
		const theta = Math.PI / 6;
		const D = 30;
		const r = flyToPlane({
			speedMps: v0,
			elevationDeg: 30,
			launchHeightM: 10,
			targetDistanceM: D,
			massKg: 1,
			diameterM: 0.05,
			dragCoefficient: 0,
			airDensityKgM3: 1.2
		});
		const t = D / (v0 * Math.cos(theta));
		const y = D * Math.tan(theta) - (G * D * D) / (2 * v0 * v0 * Math.cos(theta) ** 2);
		const vy = v0 * Math.sin(theta) - G * t;
		expect(t).toBeCloseTo(1.732051, 6);
		expect(y).toBeCloseTo(2.610533, 6);
		expect(Math.abs(r.timeS - t)).toBeLessThan(1e-12);
		expect(Math.abs(r.heightM - 10 - y)).toBeLessThan(1e-12);
		expect(Math.abs(r.speedMps - Math.hypot(v0 * Math.cos(theta), vy))).toBeLessThan(1e-12);
	});

	it('vacuum level range R = v0² sin2θ / g = 35.324006 m and flight time 2 v0 sinθ / g = 2.039432 s (ground event)', () => {
		const r = flyToPlane({
			speedMps: 20,
			elevationDeg: 30,
			launchHeightM: 0,
			targetDistanceM: 100,
			massKg: 1,
			diameterM: 0.05,
			dragCoefficient: 0,
			airDensityKgM3: 1.2
		});
		expect(r.reached).toBe(false);
		expect(r.endedBy).toBe('ground');
		expect(r.heightM).toBe(0);
		expect(Math.abs(r.downrangeM - 35.32400580358996)).toBeLessThan(1e-10);
		expect(Math.abs(r.timeS - 2.039432425955856)).toBeLessThan(1e-12);
	});

	it('drag only, g = 0, no wind: v(x) = v0 e^(−kx), t(x) = (e^(kx) − 1)/(k v0); k = 0.006805966, v0 = 80, x = 50 → 56.924643 m/s, 0.74450627 s', () => {
		const shot = { massKg: 0.02, diameterM: 0.025, dragCoefficient: 0.47, airDensityKgM3: 1.18 };
		const k = dragFactor(shot.airDensityKgM3, shot.dragCoefficient, shot.diameterM, shot.massKg);
		expect(k).toBeCloseTo(0.006805966, 9);
		const r = flyToPlane({ ...shot, speedMps: 80, elevationDeg: 0, launchHeightM: 2, targetDistanceM: 50, gravityMps2: 0 });
		const v = 80 * Math.exp(-k * 50);
		const t = Math.expm1(k * 50) / (k * 80);
		expect(v).toBeCloseTo(56.924643, 6);
		expect(t).toBeCloseTo(0.74450627, 8);
		expect(Math.abs(r.speedMps - v)).toBeLessThan(1e-9);
		expect(Math.abs(r.timeS - t)).toBeLessThan(1e-11);
		expect(r.heightM).toBe(2);
	});

	it('fall from rest (50 g, 40 mm, C_D 0.47, ρ 1.225): v_t = √(g/k) = 36.816155 m/s; after 3 s v = v_t tanh(gt/v_t) = 24.428835 m/s, drop (v_t²/g) ln cosh(gt/v_t) = 40.104426 m', () => {
		const k = dragFactor(1.225, 0.47, 0.04, 0.05);
		const vt = Math.sqrt(G / k);
		expect(vt).toBeCloseTo(36.816155, 6);
		const drop = ((vt * vt) / G) * Math.log(Math.cosh((G * 3) / vt));
		expect(drop).toBeCloseTo(40.104426, 6);
		const r = flyToPlane({ ...SPHERE_40MM, speedMps: 0, elevationDeg: 0, launchHeightM: drop, targetDistanceM: 10 });
		// Not moving downrange and no tail wind: a stall, reported where it lands.
		expect(r).toMatchObject({ endedBy: 'stall', heightM: 0, downrangeM: 0 });
		expect(Math.abs(r.timeS - 3)).toBeLessThan(1e-9);
		expect(Math.abs(r.speedMps - vt * Math.tanh((G * 3) / vt))).toBeLessThan(1e-8);
		expect(Math.abs(r.speedMps - 24.428835)).toBeLessThan(1e-6);
	});

	it('straight up at 45 m/s from the ground: apex (v_t/g) atan(v0/v_t) = 3.322822 s at (v_t²/2g) ln(1 + v0²/v_t²) = 63.156419 m, then the fall back to y = 0', () => {
		const k = dragFactor(1.225, 0.47, 0.04, 0.05);
		const vt = Math.sqrt(G / k);
		const tApex = (vt / G) * Math.atan(45 / vt);
		const hApex = ((vt * vt) / (2 * G)) * Math.log1p((45 * 45) / (vt * vt));
		expect(tApex).toBeCloseTo(3.322822, 6);
		expect(hApex).toBeCloseTo(63.156419, 6);
		// From the apex, a fall from rest through hApex: cosh(g t/v_t) = exp(g h / v_t²).
		const tFall = (vt / G) * Math.acosh(Math.exp((G * hApex) / (vt * vt)));
		const r = flyToPlane({ ...SPHERE_40MM, speedMps: 45, elevationDeg: 90, launchHeightM: 0, targetDistanceM: 10 });
		expect(r.reached).toBe(false);
		expect(Math.abs(r.timeS - (tApex + tFall))).toBeLessThan(1e-9);
		expect(Math.abs(r.speedMps - vt * Math.tanh((G * tFall) / vt))).toBeLessThan(1e-8);
		const path = flightPath({ ...SPHERE_40MM, speedMps: 45, elevationDeg: 90, launchHeightM: 0, targetDistanceM: 10 }, { samples: 2001 });
		const top = Math.max(...path.points.map((p) => p.heightM));
		expect(Math.abs(top - hApex)).toBeLessThan(1e-4);
	});
});

// Independent cross-check: Hairer & Wanner's ODEX (Gragg–Bulirsch–Stoer extrapolation, a
// different family of method from DOP853), in the `odex` npm port, used only in this test.
interface OdexSolver {
	absoluteTolerance: number;
	relativeTolerance: number;
	maxSteps: number;
	solve(f: (t: number, y: number[]) => number[], t0: number, y0: number[], t1: number): { y: number[]; outcome: number };
}
const { Solver } = createRequire(import.meta.url)('odex') as { Solver: new (n: number) => OdexSolver };

/** State at time t by ODEX at 1e-13, from the launch state of f. */
function odexStateAt(f: FlightInput, t: number): number[] {
	const k = dragFactor(f.airDensityKgM3, f.dragCoefficient, f.diameterM, f.massKg);
	const wx = f.wind?.xMps ?? 0;
	const wz = f.wind?.zMps ?? 0;
	const g = f.gravityMps2 ?? G;
	const el = (f.elevationDeg * Math.PI) / 180;
	const az = ((f.azimuthDeg ?? 0) * Math.PI) / 180;
	const v0 = f.speedMps;
	const solver = new Solver(6);
	solver.absoluteTolerance = 1e-13;
	solver.relativeTolerance = 1e-13;
	solver.maxSteps = 100_000;
	const rhs = (_t: number, s: number[]) => {
		const rx = s[3] - wx;
		const rz = s[5] - wz;
		const kv = k * Math.sqrt(rx * rx + s[4] * s[4] + rz * rz);
		return [s[3], s[4], s[5], -kv * rx, -kv * s[4] - g, -kv * rz];
	};
	const start = [0, f.launchHeightM, 0, v0 * Math.cos(el) * Math.cos(az), v0 * Math.sin(el), v0 * Math.cos(el) * Math.sin(az)];
	const out = solver.solve(rhs, 0, start, t);
	expect(out.outcome).toBe(0);
	return out.y;
}

function randomShots(seed: number, count: number): FlightInput[] {
	const rnd = createRandom(seed);
	const between = (a: number, b: number) => a + (b - a) * rnd.next();
	return Array.from({ length: count }, () => ({
		speedMps: between(15, 150),
		elevationDeg: between(-3, 25),
		azimuthDeg: between(-5, 5),
		launchHeightM: between(0.5, 5),
		targetDistanceM: between(5, 80),
		massKg: between(0.005, 0.3),
		diameterM: between(0.01, 0.07),
		dragCoefficient: between(0.2, 1.2),
		airDensityKgM3: between(1.0, 1.3),
		wind: { xMps: between(-6, 6), zMps: between(-6, 6) }
	}));
}

describe('flyToPlane against ODEX (odex npm, Hairer & Wanner extrapolation code, tol 1e-13)', () => {
	const shots = [...REFERENCE.map((c) => c.input), ...randomShots(20240611, 40)];

	it('agrees at the end point of every flight within 1e-6 m and 1e-6 m/s (6 reference + 40 seeded random shots)', () => {
		let reached = 0;
		for (const f of shots) {
			const r = flyToPlane(f);
			expectFinite(r);
			const s = odexStateAt(f, r.timeS);
			if (r.reached) {
				reached++;
				expect(Math.abs(s[0] - f.targetDistanceM)).toBeLessThan(TOL_M);
			} else {
				expect(r.endedBy).toBe('ground');
				expect(Math.abs(s[0] - r.downrangeM)).toBeLessThan(TOL_M);
			}
			expect(Math.abs(s[1] - r.heightM)).toBeLessThan(TOL_M);
			expect(Math.abs(s[2] - r.lateralM)).toBeLessThan(TOL_M);
			expect(Math.abs(Math.hypot(s[3], s[4], s[5]) - r.speedMps)).toBeLessThan(TOL_MPS);
		}
		// The sample must exercise both ends: most shots reach the plane, some come down first.
		expect(reached).toBeGreaterThan(30);
		expect(reached).toBeLessThan(shots.length);
	});
});

describe('flyToPlane — how flights end', () => {
	const lob = { ...SPHERE_40MM, speedMps: 20, launchHeightM: 1.5, targetDistanceM: 100 };

	it('a shot that falls short reports reached: false where it came down, at height 0', () => {
		const r = flyToPlane({ ...lob, elevationDeg: 30 });
		expect(r).toMatchObject({ reached: false, endedBy: 'ground', heightM: 0 });
		expect(r.downrangeM).toBeGreaterThan(0);
		expect(r.downrangeM).toBeLessThan(100);
	});

	it('a vertical shot into a head wind stalls (cannot move downrange again) and is reported where it lands', () => {
		const r = flyToPlane({ ...lob, elevationDeg: 90, wind: { xMps: -2, zMps: 0 } });
		expect(r).toMatchObject({ reached: false, endedBy: 'stall', heightM: 0 });
		expect(r.downrangeM).toBeLessThan(0);
		expectFinite(r);
	});

	it('a tail wind carries a vertical shot downrange again, so it is not a stall', () => {
		const r = flyToPlane({ ...lob, elevationDeg: 90, targetDistanceM: 1, wind: { xMps: 5, zMps: 0 } });
		expect(r.endedBy).not.toBe('stall');
	});

	it('launched from the ground pointing down, it ends at once', () => {
		const r = flyToPlane({ ...lob, launchHeightM: 0, elevationDeg: -5 });
		expect(r).toMatchObject({ reached: false, endedBy: 'ground', timeS: 0, downrangeM: 0, speedMps: 20 });
	});

	it('without gravity or drag a motionless projectile stays put until the time limit, still finite', () => {
		const r = flyToPlane({ ...lob, speedMps: 0, elevationDeg: 0, dragCoefficient: 0, gravityMps2: 0 });
		expect(r.endedBy).toBe('limit');
		expect(r.reached).toBe(false);
		expectFinite(r);
	});

	it('azimuth turns the shot to the right: z = D tanψ in vacuum', () => {
		const r = flyToPlane({ ...lob, elevationDeg: 0, azimuthDeg: 10, dragCoefficient: 0, targetDistanceM: 20, gravityMps2: 0 });
		expect(Math.abs(r.lateralM - 20 * Math.tan(Math.PI / 18))).toBeLessThan(1e-12);
	});

	it('never returns NaN over 2000 seeded random shots spanning the accepted inputs', () => {
		const rnd = createRandom(7);
		const pick = (a: number, b: number) => a + (b - a) * rnd.next();
		for (let i = 0; i < 2000; i++) {
			const r = flyToPlane({
				speedMps: pick(0, 400),
				elevationDeg: pick(-90, 90),
				azimuthDeg: pick(-180, 180),
				launchHeightM: rnd.next() < 0.2 ? 0 : pick(0, 50),
				targetDistanceM: pick(0.01, 500),
				massKg: 10 ** pick(-5, 1),
				diameterM: 10 ** pick(-3, -0.5),
				dragCoefficient: pick(0, 2),
				airDensityKgM3: pick(0, 1.5),
				wind: { xMps: pick(-30, 30), zMps: pick(-30, 30) },
				gravityMps2: rnd.next() < 0.1 ? 0 : G
			});
			expectFinite(r);
		}
	});
});

describe('flightPath', () => {
	const shot: FlightInput = REFERENCE[0].input;

	it('samples evenly in time from the launch point to the same end point as flyToPlane', () => {
		const { result, points } = flightPath(shot, { samples: 11 });
		// Same flight; only the count of evaluations differs (the path asks for every step's dense output).
		expect({ ...result, evaluations: 0 }).toEqual({ ...flyToPlane(shot), evaluations: 0 });
		expect(points).toHaveLength(11);
		expect(points[0]).toEqual({ timeS: 0, downrangeM: 0, heightM: 5, lateralM: 0, speedMps: 20 });
		expect(points[10]).toMatchObject({ timeS: result.timeS, downrangeM: 30, heightM: result.heightM });
		for (let i = 1; i < 11; i++) expect(points[i].timeS - points[i - 1].timeS).toBeCloseTo(result.timeS / 10, 12);
	});

	it('its points lie on the integrated path (ODEX at the same instants, within 1e-6 m)', () => {
		const { points } = flightPath(shot, { samples: 7 });
		for (const p of points.slice(1)) {
			const s = odexStateAt(shot, p.timeS);
			expect(Math.abs(s[0] - p.downrangeM)).toBeLessThan(TOL_M);
			expect(Math.abs(s[1] - p.heightM)).toBeLessThan(TOL_M);
		}
	});

	it('refuses a sample count that is not a whole number ≥ 2', () => {
		expect(() => flightPath(shot, { samples: 1 })).toThrow(PhysicsInputError);
		expect(() => flightPath(shot, { samples: 2.5 })).toThrow(PhysicsInputError);
	});
});

/** NaN and ±Infinity survive into the test title (JSON.stringify would print null). */
const label = (v: unknown) =>
	JSON.stringify(v, (_k, x) => (typeof x === 'number' && !Number.isFinite(x) ? String(x) : x));

describe('flyToPlane — bad input is a PhysicsInputError naming the field', () => {
	const good: FlightInput = REFERENCE[2].input;
	const cases: [string, Partial<FlightInput>][] = [
		['massKg', { massKg: 0 }],
		['massKg', { massKg: -0.02 }],
		['diameterM', { diameterM: 0 }],
		['targetDistanceM', { targetDistanceM: 0 }],
		['targetDistanceM', { targetDistanceM: -10 }],
		['speedMps', { speedMps: Number.NaN }],
		['speedMps', { speedMps: -1 }],
		['elevationDeg', { elevationDeg: 91 }],
		['elevationDeg', { elevationDeg: Number.POSITIVE_INFINITY }],
		['launchHeightM', { launchHeightM: -1 }],
		['dragCoefficient', { dragCoefficient: Number.NaN }],
		['airDensityKgM3', { airDensityKgM3: -1.2 }],
		['wind.xMps', { wind: { xMps: Number.NaN, zMps: 0 } }],
		['wind.zMps', { wind: { xMps: 0, zMps: Number.NEGATIVE_INFINITY } }],
		['gravityMps2', { gravityMps2: -9.8 }],
		['azimuthDeg', { azimuthDeg: Number.NaN }]
	];
	for (const [field, patch] of cases) {
		it(`${field}: ${label(Object.values(patch)[0])}`, () => {
			try {
				flyToPlane({ ...good, ...patch });
				expect.unreachable();
			} catch (e) {
				expect(e).toBeInstanceOf(PhysicsInputError);
				expect((e as PhysicsInputError).field).toBe(field);
			}
		});
	}
});
