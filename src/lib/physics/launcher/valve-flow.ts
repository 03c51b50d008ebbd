// Valve-flow family of the muzzle-speed model (shared/design/physics.md §1): a time-resolved
// internal ballistics in the spirit of Z.J. Rohrbach, T.R. Buresh & M.J. Madsen, "Modeling the exit
// velocity of a compressed air cannon", Am. J. Phys. 80 (2012) 24–26, doi:10.1119/1.3644253, who
// found that the reservoir's discharge through the valve, not the adiabatic or isothermal
// expansion alone, sets the exit speed. All SI: Pa, m³, m, kg, K, s, N, m/s.
//
//   Reservoir V_r, isentropic:   T_r = T0 (P_r/P_r0)^((γ−1)/γ),   dP_r/dt = −γ ṁ R T_r / V_r
//   Valve area, linear opening:  a(t) = a_v · min(1, t/τ)
//   Orifice flow, r = P_b/P_r:   ṁ = a P_r ψ(r) / √(R T_r)
//       ψ = √γ (2/(γ+1))^((γ+1)/(2(γ−1)))            choked,   r ≤ r* = (2/(γ+1))^(γ/(γ−1))
//       ψ = √(2γ/(γ−1) · (r^(2/γ) − r^((γ+1)/γ)))    subsonic, r* < r < 1
//       ψ = 0                                        r ≥ 1 (a check valve in effect: no back-flow)
//     (isentropic flow of an ideal gas through a nozzle from stagnation conditions (P_r, T_r),
//     e.g. J.D. Anderson, "Modern Compressible Flow", 3rd ed., McGraw-Hill 2003, ch. 5.)
//   Gas behind the projectile:   V_b = V_d + A x,  dP_b/dt = γ (ṁ R T_r − P_b A v)/V_b
//     (first law for an open volume of ideal gas, U = P V/(γ−1), receiving the enthalpy flow
//     ṁ c_p T_r and doing the work P_b dV_b: the control-volume energy balance of e.g.
//     M.J. Moran & H.N. Shapiro, "Fundamentals of Engineering Thermodynamics", ch. 4.)
//   R is DRY_AIR_GAS_CONSTANT of ../air.ts (287.052 87 J/(kg·K)); γ defaults to 1.4.
//   Projectile:                   m dv/dt = (P_b − p_a) A − F   while moving; at rest it starts
//     only once (P_b − p_a) A > F (static friction F, any finite sign, subtracted once moving).
//
// Why the code is our own: no JavaScript package implements this model, and a general ODE package
// (odex, used by the tests as an independent check) has no event location of its own and
// allocates on every call, while a calibration evaluates this model thousands of times. The integrator is not
// new code: it is the DOP853 pair of ../flight/ (tableau, stepper, step-size control, checked
// there against SciPy), imported as it is.
//
// How it is integrated. The state is scaled so that a single rtol/atol fits every component:
// pressures over P_r0, position over the travel L, speed over V* = √(2 P_r0 A L / m) (the speed a
// constant P_r0 would give; an upper bound), time over T* = L/V*. Time is itself a component
// (ds/ds = 1, integrated exactly), because the flight/ machinery is written for autonomous
// systems. The right-hand side is piecewise smooth; every piece boundary is made a step boundary
// so the 8th-order steps never straddle a kink: the valve's full opening t = τ (steps are clipped
// to end on it exactly); the start of the motion ((P_b − p_a) A = F), a stop (v = 0) and the
// switch between choked and subsonic flow (r = r*, where ψ is only C¹), each located as a root of
// the step's dense-output interpolant, with each formula continued smoothly past its boundary
// inside the step that finds it.
//
// Known cost: DOP853 is explicit. When the valve can pass far more gas than the moving projectile
// makes room for (a large, fast valve; a low fill; the first instants of a shot without friction)
// the pressures on the two sides nearly equalise, and since ψ ≈ √(2(1 − r)) there, the system is
// stiff (relaxation rate ∝ (valve area)² / demand): steps are then limited by stability, not by
// accuracy, and a shot costs thousands of evaluations instead of a few hundred (see the spec).
//
// While the projectile rests the gas does no work, so P_r V_r + P_b V_b is conserved and the
// pressure behind it can rise at most to P_eq = (P_r V_r + P_b V_b)/(V_r + V_b): if that does not
// overcome the friction it never (re)starts, which is reported at once instead of integrating to
// the time limit.

import { DRY_AIR_GAS_CONSTANT } from '../air';
import { PhysicsInputError, requireInRange, requirePositive } from '../errors';
import { errorNorm, initialStep, stepFactor, type Tolerances } from '../flight/control';
import type { OdeSystem } from '../flight/model';
import { denseOutput, interpolate, interpolateState, rungeKuttaStep, StepWork } from '../flight/stepper';
import { DOP853 } from '../flight/tableau';
import { brentRoot } from '../roots';

export interface ValveFlowInput {
	/** Fill pressure read on the gauge (relative to ambient), Pa. */
	fillGaugePa: number;
	/** Ambient (barometric) pressure, Pa. */
	ambientPa: number;
	/** Air temperature of the session: the reservoir gas starts at it, K. */
	temperatureK: number;
	/** Reservoir gas volume, m³. */
	reservoirM3: number;
	/** Dead volume between valve and projectile base, m³ (> 0: the gas behind the projectile needs a volume). */
	deadM3: number;
	boreDiameterM: number;
	/** Projectile travel in the barrel, m. */
	travelM: number;
	massKg: number;
	/** Effective (discharge-coefficient-weighted) valve area when fully open, C·A_v, m². */
	valveAreaM2: number;
	/** Time for the valve to open fully (linear ramp of the area), s. */
	openingTimeS: number;
	/** Friction force on the projectile, N; any finite value (a fit may try small negatives). */
	frictionN: number;
	/** Ratio of specific heats γ; default 1.4 (dry air, ISO 2533). */
	polytropicIndex?: number;
}

export interface ValveFlowOptions {
	/** Relative tolerance of the error test on the scaled state; default DEFAULT_RELATIVE_TOLERANCE. */
	relativeTolerance?: number;
	/** Absolute tolerance on the scaled state (all components of order 1); default DEFAULT_ABSOLUTE_TOLERANCE. */
	absoluteTolerance?: number;
}

export type ValveFlowResult =
	| {
			ok: true;
			speedMps: number;
			/** Time from the valve starting to open to the projectile leaving the bore, s. */
			exitTimeS: number;
			/** Absolute pressure behind the projectile at exit, Pa. */
			exitPressurePa: number;
			/** Absolute reservoir pressure at exit, Pa. */
			reservoirPressurePa: number;
			/** Attempted (accepted and rejected) steps. */
			steps: number;
			/** Evaluations of the right-hand side. */
			evaluations: number;
	  }
	| { ok: false; reason: string };

/**
 * Default tolerances on the scaled state. Tight enough that forward differences with relative
 * steps down to 1e-5 (a calibration's Jacobian) see a smooth function, and that the speed agrees
 * with an independent extrapolation solver to well under 1e-6 m/s (valve-flow.spec.ts).
 */
export const DEFAULT_RELATIVE_TOLERANCE = 1e-10;
export const DEFAULT_ABSOLUTE_TOLERANCE = 1e-10;
/** Ratio of specific heats of dry air, κ = 1.4 (ISO 2533:1975 Table 1). */
const AIR_HEAT_CAPACITY_RATIO = 1.4;
/** A shot still in the barrel after this much simulated time has stalled, s (exits take 5–100 ms). */
export const MAX_SIMULATED_TIME_S = 2;
/** Hard cap on attempted steps, so the loop always ends whatever the inputs. */
const MAX_STEPS = 50_000;
/** Restarts at located events before giving up (a real shot has a start and a regime change or two). */
const MAX_PIECES = 100;
/** Steps shorter than this many ulps of max(s, 1) make no progress; give up. */
const MIN_STEP_ULPS = 16;
/** Root tolerance in θ (fraction of a step) for the located events: machine precision. */
const THETA_TOLERANCE = 1e-15;
/**
 * Bounds on the inputs, far beyond any launcher, so no intermediate quantity overflows; the lower
 * bounds are the physical ones (the same spirit as ../internal.ts).
 */
const VALVE_FLOW_LIMITS = {
	pressurePa: 1e9,
	volumeM3: 100,
	lengthM: 100,
	massKg: 1000,
	forceN: 1e7,
	areaM2: 100,
	openingTimeS: 10,
	temperatureK: 2000
} as const;
/** γ = 1 would be isothermal, where the orifice formulas have no finite form; 5/3 is helium. */
const HEAT_CAPACITY_RATIO_RANGE = { min: 1, max: 2, minExclusive: true } as const;

/** Scaled state: pressures over P_r0, x/L, v/V*, t/T*. */
const STATE_SIZE = 5;
const PR = 0;
const PB = 1;
const XI = 2;
const U = 3;
const S = 4;

/**
 * The right-hand side in scaled variables (s = t/T*, V* T* = L):
 *   dp_r/ds = −γ κ ρ α p_r θ ψ(r),   dp_b/ds = γ (κ α p_r θ ψ(r) − p_b u)/(δ + ξ),
 *   dξ/ds = u,   du/ds = ½ (p_b − p_a/P_r0 − F/(P_r0 A)),   ds/ds = 1,
 * with θ = p_r^((γ−1)/(2γ)) = √(T_r/T0), α = a(t)/a_v, κ = T* a_v √(R T0)/(A L), ρ = A L/V_r,
 * δ = V_d/(A L). At rest ξ and u are frozen.
 */
class ValveFlowModel implements OdeSystem {
	readonly dimension = STATE_SIZE;
	/** Valve still opening (α = s/s_τ) or fully open (α = 1). */
	opening = true;
	/** Projectile moving, or held by static friction. */
	moving = false;
	/**
	 * Flow regime of this piece: choked (ψ constant) or subsonic. Each formula is continued
	 * smoothly past r* inside a step; the crossing is located and the step ended there.
	 */
	choked = true;

	private readonly thetaExponent: number;
	private readonly inverseGamma: number;
	private readonly subsonicFactor: number;
	/** Critical pressure ratio r*. */
	readonly criticalRatio: number;
	/** ψ in choked flow. */
	private readonly chokedFlux: number;

	constructor(
		readonly gamma: number,
		/** κ, see above. */
		readonly kappa: number,
		/** ρ = A L / V_r. */
		readonly sweptOverReservoir: number,
		/** δ = V_d / (A L). */
		readonly deadOverSwept: number,
		/** p_a / P_r0. */
		readonly ambient: number,
		/** F / (P_r0 A). */
		readonly friction: number,
		/** s_τ = τ / T*. */
		readonly openingTime: number
	) {
		this.thetaExponent = (gamma - 1) / (2 * gamma);
		this.inverseGamma = 1 / gamma;
		this.subsonicFactor = (2 * gamma) / (gamma - 1);
		const base = 2 / (gamma + 1);
		this.criticalRatio = Math.pow(base, gamma / (gamma - 1));
		this.chokedFlux = Math.sqrt(gamma) * Math.pow(base, (gamma + 1) / (2 * (gamma - 1)));
	}

	/** Dimensionless mass flux ψ(r) of the orifice at pressure ratio r = P_b/P_r. */
	flux(r: number): number {
		if (this.choked) return this.chokedFlux;
		if (r >= 1) return 0; // no back-flow: the valve is modelled as letting gas out of the reservoir only
		const q = Math.pow(r, this.inverseGamma); // r^(2/γ) − r^((γ+1)/γ) = q (q − r)
		return Math.sqrt(this.subsonicFactor * q * (q - r));
	}

	/** Net force on the projectile over P_r0 A: (P_b − p_a)/P_r0 − F/(P_r0 A). */
	netForce(y: Float64Array): number {
		return y[PB] - this.ambient - this.friction;
	}

	derivative(y: Float64Array, out: Float64Array, o: number): void {
		const pr = y[PR];
		const pb = y[PB];
		const alpha = this.opening ? y[S] / this.openingTime : 1;
		const enthalpyFlow = this.kappa * alpha * pr * Math.pow(pr, this.thetaExponent) * this.flux(pb / pr);
		const g = this.gamma;
		out[o + PR] = -g * this.sweptOverReservoir * enthalpyFlow;
		out[o + S] = 1;
		if (this.moving) {
			const u = y[U];
			out[o + PB] = (g * (enthalpyFlow - pb * u)) / (this.deadOverSwept + y[XI]);
			out[o + XI] = u;
			out[o + U] = 0.5 * (pb - this.ambient - this.friction);
		} else {
			out[o + PB] = (g * enthalpyFlow) / (this.deadOverSwept + y[XI]);
			out[o + XI] = 0;
			out[o + U] = 0;
		}
	}

	/**
	 * The highest p_b the gas can reach while the projectile rests at y: P_eq of the header when
	 * gas still flows in, else the present p_b.
	 */
	highestRestingPressure(y: Float64Array): number {
		if (!(y[PR] > y[PB])) return y[PB];
		const barrelOverReservoir = this.sweptOverReservoir * (this.deadOverSwept + y[XI]);
		return (y[PR] + y[PB] * barrelOverReservoir) / (1 + barrelOverReservoir);
	}
}

interface ValveFlowProblem {
	model: ValveFlowModel;
	/** P_r0, Pa. */
	startPa: number;
	/** V*, m/s. */
	speedScale: number;
	/** T*, s. */
	timeScale: number;
	travelM: number;
	frictionN: number;
	/** Bore area A, m². */
	boreAreaM2: number;
	tolerances: Tolerances;
}

function positiveUpTo(value: number, field: string, max: number): number {
	requirePositive(value, field);
	return requireInRange(value, field, { min: 0, max });
}

function valveFlowProblem(i: ValveFlowInput, options: ValveFlowOptions): ValveFlowProblem {
	const lim = VALVE_FLOW_LIMITS;
	const ambientPa = positiveUpTo(i.ambientPa, 'ambientPa', lim.pressurePa);
	const fillGaugePa = requireInRange(i.fillGaugePa, 'fillGaugePa', { min: 0, max: lim.pressurePa });
	const temperatureK = positiveUpTo(i.temperatureK, 'temperatureK', lim.temperatureK);
	const reservoirM3 = positiveUpTo(i.reservoirM3, 'reservoirM3', lim.volumeM3);
	const deadM3 = positiveUpTo(i.deadM3, 'deadM3', lim.volumeM3);
	const bore = positiveUpTo(i.boreDiameterM, 'boreDiameterM', lim.lengthM);
	const travelM = positiveUpTo(i.travelM, 'travelM', lim.lengthM);
	const massKg = positiveUpTo(i.massKg, 'massKg', lim.massKg);
	const valveAreaM2 = positiveUpTo(i.valveAreaM2, 'valveAreaM2', lim.areaM2);
	const openingTimeS = positiveUpTo(i.openingTimeS, 'openingTimeS', lim.openingTimeS);
	const frictionN = requireInRange(i.frictionN, 'frictionN', { min: -lim.forceN, max: lim.forceN });
	const gamma = requireInRange(i.polytropicIndex ?? AIR_HEAT_CAPACITY_RATIO, 'polytropicIndex', HEAT_CAPACITY_RATIO_RANGE);
	const tolerances = {
		relative: requirePositive(options.relativeTolerance ?? DEFAULT_RELATIVE_TOLERANCE, 'relativeTolerance'),
		absolute: requirePositive(options.absoluteTolerance ?? DEFAULT_ABSOLUTE_TOLERANCE, 'absoluteTolerance')
	};

	const startPa = fillGaugePa + ambientPa;
	const boreAreaM2 = (Math.PI * bore * bore) / 4;
	const sweptM3 = boreAreaM2 * travelM;
	const speedScale = Math.sqrt((2 * startPa * sweptM3) / massKg);
	const timeScale = travelM / speedScale;
	const kappa = (timeScale * valveAreaM2 * Math.sqrt(DRY_AIR_GAS_CONSTANT * temperatureK)) / sweptM3;
	const model = new ValveFlowModel(
		gamma,
		kappa,
		sweptM3 / reservoirM3,
		deadM3 / sweptM3,
		ambientPa / startPa,
		frictionN / (startPa * boreAreaM2),
		openingTimeS / timeScale
	);
	// Extreme but individually valid inputs (e.g. a 1000 kg projectile on a 1 Pa atmosphere)
	// could still combine into scales that overflow or vanish.
	const scales = [speedScale, timeScale, kappa, model.friction, model.openingTime, model.deadOverSwept];
	if (!scales.every((x) => Number.isFinite(x)) || !(speedScale > 0)) {
		throw new PhysicsInputError(
			'input',
			'out-of-range',
			'the valve-flow inputs combine into a non-finite time or speed scale; check the units of the inputs'
		);
	}
	return { model, startPa, speedScale, timeScale, travelM, frictionN, boreAreaM2, tolerances };
}

/**
 * Scratch arrays kept between calls (allocating typed arrays costs more than a short shot's
 * arithmetic); they hold nothing beyond one synchronous call, as in ../flight/driver.ts.
 */
const sparePool: StepWork[] = [];

function isFiniteState(y: Float64Array): boolean {
	for (let c = 0; c < STATE_SIZE; c++) if (!Number.isFinite(y[c])) return false;
	return true;
}

/** A distance in metres for a message: at most 3 decimals, no trailing zeros. */
function metres(x: number): string {
	return String(Number(x.toFixed(3)));
}

function kilopascals(pa: number): string {
	return String(Number((pa / 1000).toFixed(1)));
}

function failure(reason: string): ValveFlowResult {
	return { ok: false, reason };
}

/** The projectile rests at y and the gas can never push it past the friction: why, in words. */
function heldReason(p: ValveFlowProblem, y: Float64Array): string {
	const reached = y[XI] * p.travelM;
	const gaugePa = (p.model.highestRestingPressure(y) - p.model.ambient) * p.startPa;
	const where =
		reached > 0
			? `the projectile stops after ${metres(reached)} m of ${metres(p.travelM)} m`
			: `the projectile never starts: it stays at 0 m of ${metres(p.travelM)} m`;
	return (
		`${where}; the pressure behind it can reach at most ${kilopascals(gaugePa)} kPa gauge ` +
		`(${(gaugePa * p.boreAreaM2).toFixed(2)} N on the projectile), ` +
		`which does not overcome the friction of ${p.frictionN.toFixed(2)} N.`
	);
}

type RestDecision = 'move' | 'wait' | 'held';

/**
 * At rest at y: start now (net force > 0, or = 0 with gas still flowing in, which only happens
 * at t = 0 with no friction), wait for the pressure to rise, or stay held for good.
 */
function decideAtRest(model: ValveFlowModel, y: Float64Array): RestDecision {
	const g = model.netForce(y);
	if (g > 0 || (g === 0 && y[PR] > y[PB])) return 'move';
	return model.highestRestingPressure(y) - model.ambient - model.friction > 0 ? 'wait' : 'held';
}

/**
 * What ends a piece of the integration: the projectile leaves the bore (ξ = 1), stops (u = 0),
 * starts ((P_b − p_a) A = F), or the orifice flow changes regime (r = r*).
 */
type ValveFlowEvent = 'exit' | 'stop' | 'start' | 'regime';

/** Bit flags of the events a step's end points show (several can happen in one step). */
const EXIT = 1;
const STOP = 2;
const START = 4;
const REGIME = 8;

/** The events flagged by the accepted step y → yNew, or null. */
function detectEvent(model: ValveFlowModel, y: Float64Array, yNew: Float64Array): number | null {
	let flags = 0;
	if (model.moving) {
		if (yNew[XI] >= 1) flags |= EXIT;
		if (yNew[U] < 0 || (yNew[U] === 0 && y[U] > 0)) flags |= STOP;
	} else if (model.netForce(yNew) >= 0) {
		flags |= START;
	}
	const r = yNew[PB] / yNew[PR];
	if (model.choked ? r > model.criticalRatio : r < model.criticalRatio) flags |= REGIME;
	return flags === 0 ? null : flags;
}

/** θ in [0, 1] where g of the step's interpolated state crosses 0 (g(0) and g(1) differ in sign). */
function crossing(g: (theta: number) => number): number {
	return brentRoot(g, 0, 1, { tolerance: THETA_TOLERANCE }).root;
}

/** The earliest of the flagged events, from the step's dense output in w.dense; ties go to the exit. */
function locateEvent(
	model: ValveFlowModel,
	w: StepWork,
	y: Float64Array,
	yNew: Float64Array,
	flags: number
): { event: ValveFlowEvent; theta: number } {
	const { dense: F, n } = w;
	const at = (c: number, theta: number) => interpolate(F, n, y, theta, c);
	let event: ValveFlowEvent = 'exit';
	let theta = Infinity;
	const consider = (candidate: ValveFlowEvent, t: number) => {
		if (t < theta) {
			event = candidate;
			theta = t;
		}
	};
	if (flags & EXIT) consider('exit', crossing((t) => at(XI, t) - 1));
	if (flags & STOP) consider('stop', crossing((t) => at(U, t)));
	if (flags & START) consider('start', crossing((t) => at(PB, t) - model.ambient - model.friction));
	if (flags & REGIME) consider('regime', crossing((t) => at(PB, t) - model.criticalRatio * at(PR, t)));
	return { event, theta: Math.min(theta, 1) };
}

function integrate(p: ValveFlowProblem, w: StepWork): ValveFlowResult {
	const { model, tolerances } = p;
	const n = STATE_SIZE;
	const kNew = (DOP853.stepStages - 1) * n;
	const sMax = MAX_SIMULATED_TIME_S / p.timeScale;
	let [y, yNew] = w.states;
	y[PR] = 1;
	y[PB] = model.ambient;
	y[XI] = 0;
	y[U] = 0;
	y[S] = 0;
	model.opening = true;
	model.moving = false;
	model.choked = model.ambient <= model.criticalRatio;

	let steps = 0;
	let evaluations = 0;
	let pieces = 0;
	let h = 0;
	let afterRejection = false;
	let restart = true;
	const where = (state: Float64Array): string =>
		`at ${metres(state[XI] * p.travelM)} m of ${metres(p.travelM)} m after ${(state[S] * p.timeScale * 1000).toFixed(1)} ms`;

	while (steps < MAX_STEPS) {
		if (restart) {
			if (!model.moving) {
				const decision = decideAtRest(model, y);
				if (decision === 'held') return failure(heldReason(p, y));
				model.moving = decision === 'move';
			}
			model.derivative(y, w.K, 0);
			evaluations++;
			if (h === 0) {
				h = initialStep(model, DOP853, y, w, tolerances);
				evaluations++;
			}
			restart = false;
		}
		// Clip to the end of the phase: the valve's full opening, or the time limit.
		const phaseEnd = model.opening ? Math.min(model.openingTime, sMax) : sMax;
		const remaining = phaseEnd - y[S];
		const endsPhase = h >= remaining;
		const hStep = endsPhase ? remaining : h;
		rungeKuttaStep(model, DOP853, y, hStep, w, yNew);
		evaluations += DOP853.stepStages - 1;
		steps++;
		if (endsPhase) yNew[S] = phaseEnd;
		const err = errorNorm(DOP853, y, yNew, hStep, w, tolerances);
		if (!(err <= 1) || !isFiniteState(yNew)) {
			h = hStep * stepFactor(DOP853, err, afterRejection);
			afterRejection = true;
			if (h <= MIN_STEP_ULPS * Number.EPSILON * Math.max(y[S], 1)) {
				return failure(`the integration could not continue (the step size fell to nothing) ${where(y)}`);
			}
			continue;
		}
		const factor = stepFactor(DOP853, err, afterRejection);
		afterRejection = false;
		// A clipped step says nothing against the step size that was proposed.
		h = endsPhase ? Math.max(h, hStep * factor) : hStep * factor;

		const event = detectEvent(model, y, yNew);
		if (event !== null) {
			denseOutput(model, DOP853, y, yNew, hStep, w);
			evaluations += DOP853.allStages - DOP853.stepStages;
			const located = locateEvent(model, w, y, yNew, event);
			interpolateState(w.dense, n, y, located.theta, yNew);
			switch (located.event) {
				case 'exit':
					return {
						ok: true,
						speedMps: yNew[U] * p.speedScale,
						exitTimeS: yNew[S] * p.timeScale,
						exitPressurePa: yNew[PB] * p.startPa,
						reservoirPressurePa: yNew[PR] * p.startPa,
						steps,
						evaluations
					};
				case 'stop':
					yNew[U] = 0;
					model.moving = false;
					break;
				case 'start':
					model.moving = true;
					break;
				case 'regime':
					model.choked = !model.choked;
					break;
			}
			if (++pieces > MAX_PIECES) {
				return failure(`the flow switched regime or the projectile stopped too often ${where(yNew)}; giving up`);
			}
			// The right-hand side changes form here: start the next piece no longer than the
			// step that found the event rather than with that step's growth.
			h = Math.min(h, hStep);
			[y, yNew] = [yNew, y];
			restart = true;
			continue;
		}
		[y, yNew] = [yNew, y];
		if (endsPhase) {
			if (!model.opening || y[S] >= sMax) {
				return failure(
					`the projectile is still in the barrel after ${MAX_SIMULATED_TIME_S} s of simulated time, ` +
						`at ${metres(y[XI] * p.travelM)} m of ${metres(p.travelM)} m`
				);
			}
			model.opening = false;
			restart = true;
		} else {
			w.K.copyWithin(0, kNew, kNew + n); // first same as last: f(y_new) is the next k_0
		}
	}
	return failure(`the integration took more than ${MAX_STEPS} steps and was stopped ${where(y)}`);
}

/**
 * Muzzle speed of the valve-flow model (physics.md §1), or a typed failure when the projectile
 * does not leave the barrel. Invalid inputs throw PhysicsInputError naming the field; the result
 * is never NaN and never a negative speed.
 */
export function valveFlowMuzzleSpeed(i: ValveFlowInput, options: ValveFlowOptions = {}): ValveFlowResult {
	const p = valveFlowProblem(i, options);
	const w = sparePool.pop() ?? new StepWork(STATE_SIZE, DOP853);
	try {
		return integrate(p, w);
	} finally {
		sparePool.push(w);
	}
}
