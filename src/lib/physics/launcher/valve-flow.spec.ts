// Checks of the valve-flow muzzle-speed model (./valve-flow.ts; shared/design/physics.md §1).
// - Against an independent integrator: odex (Hairer & Wanner's ODEX, a Gragg–Bulirsch–Stoer
//   extrapolation code, "Solving Ordinary Differential Equations I", 2nd ed. 1993, §II.9), run on
//   the same equations written out again below in plain SI units, at tolerance 1e-13, with the
//   start of motion and the exit located by bisection on its dense output and then by Newton
//   steps on re-integrations (so the reference does not lean on odex's interpolant).
// - The adiabatic limit of physics.md §1 (reference sheet §1; Rohrbach, Buresh & Madsen 2012 eq. 3).
// - Monotonicity, typed failures, input validation, and the smoothness a least-squares fit needs.

import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { DRY_AIR_GAS_CONSTANT } from '../air';
import { PhysicsInputError } from '../errors';
import {
	DEFAULT_ABSOLUTE_TOLERANCE,
	DEFAULT_RELATIVE_TOLERANCE,
	valveFlowMuzzleSpeed,
	type ValveFlowInput,
	type ValveFlowResult
} from './valve-flow';

// odex ships TypeScript sources that do not pass this project's strict checks, so it is loaded
// untyped (as in flight.spec.ts) with the part of its API these tests use.
type OdexDense = (n: number, xOld: number, x: number, y: number[], dense?: (i: number, x: number) => number) => boolean | void;
interface Solver {
	relativeTolerance: number | number[];
	absoluteTolerance: number | number[];
	maxSteps: number;
	denseOutput: boolean;
	solve(f: (t: number, y: number[]) => number[], t0: number, y0: number[], t1: number, out?: OdexDense): { y: number[]; outcome: number };
}
const { Solver } = createRequire(import.meta.url)('odex') as { Solver: new (n: number) => Solver };

/** A 30 mm launcher with a 5 L reservoir, 30 g projectile, valve opening in 10 ms. */
const RIG: ValveFlowInput = {
	fillGaugePa: 5e5,
	ambientPa: 101_325,
	temperatureK: 293.15,
	reservoirM3: 5e-3,
	deadM3: 5e-5,
	boreDiameterM: 0.03,
	travelM: 1.5,
	massKg: 0.03,
	valveAreaM2: 2e-4,
	openingTimeS: 0.01,
	frictionN: 5
};

function speedOf(r: ValveFlowResult): number {
	if (!r.ok) throw new Error(`expected an exit, got: ${r.reason}`);
	return r.speedMps;
}

function speed(i: ValveFlowInput): number {
	return speedOf(valveFlowMuzzleSpeed(i));
}

// ---------------------------------------------------------------------------------------------
// Reference: the brief's equations in SI, integrated by odex.

interface Reference {
	speedMps: number;
	exitTimeS: number;
	exitPressurePa: number;
	reservoirPressurePa: number;
	/** Smallest and largest P_b/P_r seen at accepted steps (choked below r*). */
	minRatio: number;
	maxRatio: number;
	/** Time the projectile started moving, s. */
	startTimeS: number;
}

const REFERENCE_RTOL = 1e-13;

function referenceShot(c: ValveFlowInput): Reference {
	const g = c.polytropicIndex ?? 1.4;
	const R = DRY_AIR_GAS_CONSTANT;
	const A = (Math.PI * c.boreDiameterM ** 2) / 4;
	const pa = c.ambientPa;
	const P0 = c.fillGaugePa + pa;
	const T0 = c.temperatureK;
	const rStar = Math.pow(2 / (g + 1), g / (g - 1));
	const tau = c.openingTimeS;
	const T_MAX = 2;

	// Isentropic orifice mass flow, kg/s, from (Pr, Tr) into Pb through area a.
	const massFlow = (a: number, Pr: number, Tr: number, Pb: number): number => {
		const r = Pb / Pr;
		if (r >= 1) return 0;
		if (r <= rStar) return a * Pr * Math.sqrt(g / (R * Tr)) * Math.pow(2 / (g + 1), (g + 1) / (2 * (g - 1)));
		return a * Pr * Math.sqrt(((2 * g) / ((g - 1) * R * Tr)) * (Math.pow(r, 2 / g) - Math.pow(r, (g + 1) / g)));
	};
	const rhs =
		(moving: boolean) =>
		(t: number, y: number[]): number[] => {
			const [Pr, Pb, x, v] = y;
			const a = c.valveAreaM2 * Math.min(1, t / tau);
			const Tr = T0 * Math.pow(Pr / P0, (g - 1) / g);
			const mdot = massFlow(a, Pr, Tr, Pb);
			const Vb = c.deadM3 + A * x;
			const dPr = (-g * mdot * R * Tr) / c.reservoirM3;
			if (!moving) return [dPr, (g * mdot * R * Tr) / Vb, 0, 0];
			return [dPr, (g * (mdot * R * Tr - Pb * A * v)) / Vb, v, ((Pb - pa) * A - c.frictionN) / c.massKg];
		};
	const atol = [P0 * 1e-14, P0 * 1e-14, c.travelM * 1e-14, 1e-12];
	const solver = (dense: boolean): Solver => {
		const s = new Solver(4);
		s.relativeTolerance = REFERENCE_RTOL;
		s.absoluteTolerance = atol;
		s.maxSteps = 1_000_000;
		s.denseOutput = dense;
		return s;
	};
	let minRatio = Infinity;
	let maxRatio = -Infinity;

	/** Event functions e(y) (the event is e crossing 0 upwards) and their gradients. */
	const startEvent = { e: (y: number[]) => (y[1] - pa) * A - c.frictionN, grad: [0, A, 0, 0] };
	const exitEvent = { e: (y: number[]) => y[2] - c.travelM, grad: [0, 0, 1, 0] };
	type Ev = typeof startEvent;

	/** Integrate from (t0, y0) towards t1, stopping at the first upward zero of ev.e. */
	const segment = (moving: boolean, t0: number, y0: number[], t1: number, ev: Ev) => {
		const f = rhs(moving);
		let previous = { t: t0, y: y0.slice() };
		const found: { hit?: { tOld: number; yOld: number[]; t: number; dense: (c: number, x: number) => number } } = {};
		const out = solver(true).solve(f, t0, y0, t1, (n, xOld, x, y, dense) => {
			minRatio = Math.min(minRatio, y[1] / y[0]);
			maxRatio = Math.max(maxRatio, y[1] / y[0]);
			if (n > 1 && ev.e(y) >= 0 && dense) {
				found.hit = { tOld: previous.t, yOld: previous.y, t: x, dense };
				return false;
			}
			previous = { t: x, y: y.slice() };
		});
		if (!found.hit) return { t: t1, y: out.y, hit: false };
		const { tOld, yOld, t, dense } = found.hit;
		// Bisection on the dense output, then Newton on exact re-integrations from the step start.
		const denseState = (x: number) => [0, 1, 2, 3].map((k) => dense(k, x));
		let lo = tOld;
		let hi = t;
		for (let k = 0; k < 200 && hi - lo > 1e-16 * hi; k++) {
			const mid = 0.5 * (lo + hi);
			if (ev.e(denseState(mid)) >= 0) hi = mid;
			else lo = mid;
		}
		const exactAt = (x: number) => (x === tOld ? yOld.slice() : solver(false).solve(f, tOld, yOld, x).y);
		let te = hi;
		for (let k = 0; k < 4; k++) {
			const y = exactAt(te);
			const dy = f(te, y);
			const slope = ev.grad.reduce((s, gk, i) => s + gk * dy[i], 0);
			if (!(slope > 0)) break;
			te -= ev.e(y) / slope;
		}
		return { t: te, y: exactAt(te), hit: true };
	};

	let t = 0;
	let y = [P0, pa, 0, 0];
	// At rest the projectile starts once (P_b − p_a)A > F; with F ≤ 0 that is at once (F = 0:
	// the valve's opening raises P_b above ambient immediately).
	let moving = c.frictionN <= 0;
	let startTimeS = 0;
	for (;;) {
		const tEnd = t < tau ? tau : T_MAX;
		const s = segment(moving, t, y, tEnd, moving ? exitEvent : startEvent);
		t = s.t;
		y = s.y;
		if (s.hit && moving) {
			return { speedMps: y[3], exitTimeS: t, exitPressurePa: y[1], reservoirPressurePa: y[0], minRatio, maxRatio, startTimeS };
		}
		if (s.hit) {
			moving = true;
			startTimeS = t;
		} else if (tEnd === T_MAX) {
			throw new Error('reference: the projectile did not leave the barrel');
		}
	}
}

describe('valve flow: agreement with an independent integrator (odex, Hairer & Wanner ODEX)', () => {
	const AIR_CRITICAL_RATIO = Math.pow(2 / 2.4, 1.4 / 0.4); // 0.5283 (γ = 1.4)
	const cases: { name: string; input: ValveFlowInput; check: (ref: Reference) => void }[] = [
		{
			name: 'choked at first, static friction holds it until the pressure builds (valve opening 10 ms)',
			input: RIG,
			check: (ref) => {
				expect(ref.minRatio).toBeLessThan(AIR_CRITICAL_RATIO);
				expect(ref.maxRatio).toBeGreaterThan(AIR_CRITICAL_RATIO);
				expect(ref.startTimeS).toBeGreaterThan(0);
			}
		},
		{
			name: 'subsonic throughout (0.05 MPa gauge), fast valve (1 ms), no friction',
			input: { ...RIG, fillGaugePa: 5e4, openingTimeS: 1e-3, frictionN: 0 },
			check: (ref) => expect(ref.minRatio).toBeGreaterThan(AIR_CRITICAL_RATIO)
		},
		{
			name: 'small slow valve (1e-5 m², 50 ms), choked throughout, heavy projectile',
			input: { ...RIG, fillGaugePa: 1e6, valveAreaM2: 1e-5, openingTimeS: 0.05, massKg: 0.07, frictionN: 0 },
			check: (ref) => expect(ref.maxRatio).toBeLessThan(AIR_CRITICAL_RATIO)
		},
		{
			name: 'large fast valve (1e-3 m², 1 ms), light projectile, friction 2 N',
			input: { ...RIG, fillGaugePa: 2e5, valveAreaM2: 1e-3, openingTimeS: 1e-3, massKg: 0.005, frictionN: 2 },
			check: (ref) => expect(ref.maxRatio).toBeGreaterThan(0.9)
		},
		{
			name: 'leaves the barrel while the valve is still opening, small negative friction',
			input: { ...RIG, fillGaugePa: 1e6, valveAreaM2: 3e-4, openingTimeS: 0.05, massKg: 0.01, frictionN: -1 },
			check: (ref) => expect(ref.exitTimeS).toBeLessThan(0.05)
		},
		{
			name: 'near the threshold fill (exits at a few m/s against 20 N of friction)',
			input: { ...RIG, fillGaugePa: 49_500, frictionN: 20 },
			check: (ref) => expect(ref.speedMps).toBeLessThan(10)
		},
		{
			name: 'another rig and gas: γ = 1.3, 20 mm bore, 1 L, cold air, low ambient',
			input: {
				fillGaugePa: 3e5,
				ambientPa: 95_000,
				temperatureK: 275,
				reservoirM3: 1e-3,
				deadM3: 2e-5,
				boreDiameterM: 0.02,
				travelM: 1,
				massKg: 0.012,
				valveAreaM2: 5e-5,
				openingTimeS: 5e-3,
				frictionN: 3,
				polytropicIndex: 1.3
			},
			check: () => undefined
		}
	];

	for (const { name, input, check } of cases) {
		it(`${name}: speed within 1e-6 m/s of the reference`, () => {
			const ref = referenceShot(input);
			check(ref);
			const r = valveFlowMuzzleSpeed(input);
			if (!r.ok) throw new Error(r.reason);
			expect(Math.abs(r.speedMps - ref.speedMps)).toBeLessThan(1e-6);
			expect(Math.abs(r.exitTimeS - ref.exitTimeS)).toBeLessThan(1e-9);
			expect(Math.abs(r.exitPressurePa - ref.exitPressurePa)).toBeLessThan(1e-6 * ref.reservoirPressurePa);
			expect(Math.abs(r.reservoirPressurePa - ref.reservoirPressurePa)).toBeLessThan(1e-6 * ref.reservoirPressurePa);
		});
	}
});

describe('valve flow: limits and trends (physics.md §1)', () => {
	it('a huge, instantly open valve approaches the adiabatic gas work with efficiency 1 (reference sheet §1)', () => {
		// ½ m v² = W_gas − p_a A L with W_gas = P V0/(γ−1)·[1 − (V0/Vf)^(γ−1)], V0 = V_r + V_d,
		// Vf = V0 + A L. The dead volume starts at ambient, not at P0: an instant equalisation
		// conserves P_r V_r + P_b V_b (no work is done), so the start pressure of the combined
		// volume is P = (P0 V_r + p_a V_d)/V0, and the expansion after it is adiabatic whatever
		// the temperatures of the two gases (the energy U = P V/(γ−1) is that of one volume).
		// The gap closes like 1/a_v² (a 10× bore-area valve opening in 0.1 ms is within 2e-4).
		const g = 1.4;
		const base: ValveFlowInput = {
			fillGaugePa: 3e5,
			ambientPa: 101_325,
			temperatureK: 293.15,
			reservoirM3: 2e-3,
			deadM3: 5e-5,
			boreDiameterM: 0.02,
			travelM: 1,
			massKg: 0.02,
			valveAreaM2: 3e-3,
			openingTimeS: 1e-4,
			frictionN: 0
		};
		const A = (Math.PI * base.boreDiameterM ** 2) / 4;
		const P0 = base.fillGaugePa + base.ambientPa;
		const V0 = base.reservoirM3 + base.deadM3;
		const Vf = V0 + A * base.travelM;
		const P = (P0 * base.reservoirM3 + base.ambientPa * base.deadM3) / V0;
		const gasWork = ((P * V0) / (g - 1)) * (1 - Math.pow(V0 / Vf, g - 1));
		const limit = Math.sqrt((2 * (gasWork - base.ambientPa * A * base.travelM)) / base.massKg);
		const gaps = [3e-4, 1e-3, 3e-3].map((a) => 1 - speed({ ...base, valveAreaM2: a }) / limit);
		expect(gaps[0]).toBeGreaterThan(gaps[1]);
		expect(gaps[1]).toBeGreaterThan(gaps[2]);
		expect(gaps[2]).toBeGreaterThan(0); // a finite valve always throttles a little
		expect(gaps[2]).toBeLessThan(2e-4);
	});

	it('speed rises with the fill pressure', () => {
		const v = [1e5, 2e5, 4e5, 7e5, 1e6].map((p) => speed({ ...RIG, fillGaugePa: p }));
		for (let k = 1; k < v.length; k++) expect(v[k]).toBeGreaterThan(v[k - 1]);
	});

	it('speed rises with the valve area', () => {
		const v = [2e-5, 5e-5, 1e-4, 2e-4, 4e-4].map((a) => speed({ ...RIG, valveAreaM2: a }));
		for (let k = 1; k < v.length; k++) expect(v[k]).toBeGreaterThan(v[k - 1]);
	});

	it('speed falls with friction', () => {
		const v = [-2, 0, 2, 5, 10, 20].map((f) => speed({ ...RIG, frictionN: f }));
		for (let k = 1; k < v.length; k++) expect(v[k]).toBeLessThan(v[k - 1]);
	});

	it('speed falls with the opening time', () => {
		const v = [1e-3, 3e-3, 1e-2, 2e-2, 5e-2].map((tau) => speed({ ...RIG, openingTimeS: tau }));
		for (let k = 1; k < v.length; k++) expect(v[k]).toBeLessThan(v[k - 1]);
	});

	it('the reservoir and the gas behind the projectile end between ambient and the fill', () => {
		const r = valveFlowMuzzleSpeed(RIG);
		if (!r.ok) throw new Error(r.reason);
		const P0 = RIG.fillGaugePa + RIG.ambientPa;
		expect(r.reservoirPressurePa).toBeLessThan(P0);
		expect(r.exitPressurePa).toBeLessThan(r.reservoirPressurePa);
		expect(r.exitPressurePa).toBeGreaterThan(RIG.ambientPa);
	});
});

describe('valve flow: typed failures, never NaN (physics.md §1)', () => {
	it('too little pressure against friction: it never starts, and says where it is', () => {
		const r = valveFlowMuzzleSpeed({ ...RIG, fillGaugePa: 1e4, frictionN: 20 });
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.reason).toMatch(/never starts: it stays at 0 m of 1\.5 m/);
		expect(r.reason).toMatch(/friction of 20\.00 N/);
	});

	it('too much friction: it starts, then stops in the barrel, and names the distance reached', () => {
		const r = valveFlowMuzzleSpeed({ ...RIG, fillGaugePa: 3e4, reservoirM3: 1e-3, frictionN: 10 });
		expect(r.ok).toBe(false);
		if (r.ok) return;
		const m = /stops after (\d+(?:\.\d+)?) m of 1\.5 m/.exec(r.reason);
		expect(m).not.toBeNull();
		const reached = Number(m![1]);
		expect(reached).toBeGreaterThan(0);
		expect(reached).toBeLessThan(1.5);
	});

	it('just below the threshold fill it stops short; just above it leaves slowly', () => {
		const below = valveFlowMuzzleSpeed({ ...RIG, fillGaugePa: 48_000, frictionN: 20 });
		const above = valveFlowMuzzleSpeed({ ...RIG, fillGaugePa: 50_000, frictionN: 20 });
		expect(below.ok).toBe(false);
		if (!below.ok) expect(below.reason).toMatch(/stops after 1\.\d+ m of 1\.5 m/);
		expect(speedOf(above)).toBeGreaterThan(0);
		expect(speedOf(above)).toBeLessThan(10);
	});

	it('a shot still in the barrel after 2 s of simulated time is a failure, not a hang', () => {
		const r = valveFlowMuzzleSpeed({ ...RIG, fillGaugePa: 1e5, valveAreaM2: 1e-9, frictionN: 0 });
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.reason).toMatch(/still in the barrel after 2 s of simulated time, at \d+(\.\d+)? m of 1\.5 m/);
	});

	it('a zero fill gauge pressure is a failure, not NaN', () => {
		expect(valveFlowMuzzleSpeed({ ...RIG, fillGaugePa: 0 }).ok).toBe(false);
	});

	const invalid: [keyof ValveFlowInput, number][] = [
		['fillGaugePa', Number.NaN],
		['fillGaugePa', -1],
		['ambientPa', 0],
		['temperatureK', -10],
		['reservoirM3', 0],
		['reservoirM3', Number.POSITIVE_INFINITY],
		['deadM3', 0],
		['boreDiameterM', -0.03],
		['travelM', 0],
		['massKg', Number.NaN],
		['valveAreaM2', 0],
		['openingTimeS', 0],
		['frictionN', Number.POSITIVE_INFINITY],
		['polytropicIndex', 1],
		['polytropicIndex', 3]
	];
	for (const [field, value] of invalid) {
		it(`refuses ${field} = ${value} with a PhysicsInputError naming the field`, () => {
			let caught: unknown = null;
			try {
				valveFlowMuzzleSpeed({ ...RIG, [field]: value });
			} catch (e) {
				caught = e;
			}
			expect(caught).toBeInstanceOf(PhysicsInputError);
			expect((caught as PhysicsInputError).field).toBe(field);
			expect((caught as PhysicsInputError).message).toContain(field);
		});
	}

	it('refuses non-positive tolerances', () => {
		expect(() => valveFlowMuzzleSpeed(RIG, { relativeTolerance: 0 })).toThrow(PhysicsInputError);
		expect(() => valveFlowMuzzleSpeed(RIG, { absoluteTolerance: -1 })).toThrow(PhysicsInputError);
	});
});

describe('valve flow: smooth enough for finite-difference Jacobians', () => {
	// Forward differences with relative steps 1e-4 and 1e-5 must agree to 1e-3: the adaptive
	// step control must not make the speed jumpy as a parameter moves.
	const cases: [string, ValveFlowInput][] = [
		['the 30 mm rig', RIG],
		['subsonic, fast valve', { ...RIG, fillGaugePa: 5e4, openingTimeS: 1e-3, frictionN: 0 }],
		['large valve, light projectile', { ...RIG, fillGaugePa: 2e5, valveAreaM2: 1e-3, openingTimeS: 1e-3, massKg: 0.005, frictionN: 2 }],
		['small slow valve', { ...RIG, fillGaugePa: 1e6, valveAreaM2: 1e-5, openingTimeS: 0.05, massKg: 0.07, frictionN: 0 }]
	];
	for (const [name, input] of cases) {
		it(`∂v/∂(valve area), ${name}`, () => {
			const v0 = speed(input);
			const derivative = (relative: number) => {
				const da = input.valveAreaM2 * relative;
				return (speed({ ...input, valveAreaM2: input.valveAreaM2 + da }) - v0) / da;
			};
			const d4 = derivative(1e-4);
			const d5 = derivative(1e-5);
			expect(Math.abs(d4)).toBeGreaterThan(0);
			expect(Math.abs(d4 / d5 - 1)).toBeLessThan(1e-3);
		});
	}
});

describe('valve flow: cost (for information only; nothing here is asserted on time)', () => {
	it('reports microseconds and evaluations per call', () => {
		const inputs: [string, ValveFlowInput][] = [
			['30 mm rig', RIG],
			['slow small valve', { ...RIG, fillGaugePa: 1e6, valveAreaM2: 1e-5, openingTimeS: 0.05, massKg: 0.07, frictionN: 0 }],
			['subsonic fast valve', { ...RIG, fillGaugePa: 5e4, openingTimeS: 1e-3, frictionN: 0 }]
		];
		const lines = inputs.map(([name, input]) => {
			const calls = 400;
			for (let k = 0; k < 100; k++) valveFlowMuzzleSpeed(input);
			let last: ValveFlowResult = valveFlowMuzzleSpeed(input);
			const t0 = performance.now();
			for (let k = 0; k < calls; k++) last = valveFlowMuzzleSpeed(input);
			const us = ((performance.now() - t0) / calls) * 1000;
			const evaluations = last.ok ? last.evaluations : Number.NaN;
			return `${name}: ${us.toFixed(0)} µs/call, ${evaluations} evaluations`;
		});
		console.log(
			`valve-flow cost (rtol ${DEFAULT_RELATIVE_TOLERANCE}, atol ${DEFAULT_ABSOLUTE_TOLERANCE}): ${lines.join('; ')}`
		);
		expect(lines.length).toBe(3);
	});
});
