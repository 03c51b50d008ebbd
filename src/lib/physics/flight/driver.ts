// The flight driver: validates a shot, integrates the model of ./model with DOP853 under
// step-size control, and stops at the first event (./events). The drag law picks the model: a
// constant C_D (FlightModel) or a factor on the Morrison sphere correlation C_D(Re)
// (SphereDragFlightModel). Public entry points:
//   flyToPlane(f)            where and how fast the projectile meets the target plane x = D
//   flightPath(f, {samples}) the same flight sampled evenly in time, for plots
// (shared/design/physics.md §3; reference sheet §5.)

import { PhysicsInputError, requireInRange, requireNonNegative, requirePositive } from '../errors';
import { toSI } from '../units';
import { errorNorm, initialStep, stepFactor, MIN_FACTOR, type Tolerances } from './control';
import { crossesGround, crossesPlane, locateEvent } from './events';
import {
	dragFactor,
	FlightModel,
	SphereDragFlightModel,
	STANDARD_GRAVITY_MPS2,
	STATE_SIZE,
	stokesDragRate,
	VX,
	VY,
	VZ,
	X,
	Y,
	Z,
	type FlightSystem
} from './model';
import { denseOutput, interpolateState, rungeKuttaStep, StepWork } from './stepper';
import { DOP853 } from './tableau';

/**
 * Default error tolerances. With these the worst error over the reference flights of
 * shared/reference/flights.json is about 0.2 % of the required 1e-6 m / 1e-7 s / 1e-6 m/s
 * (flight.spec.ts insists on < 1 %), at 2-7 steps a flight.
 */
export const DEFAULT_RELATIVE_TOLERANCE = 1e-10;
export const DEFAULT_ABSOLUTE_TOLERANCE = 1e-10;
/** A flight still in the air after this long has stalled for any purpose of a test range, s. */
export const MAX_FLIGHT_TIME_S = 600;
/** Hard cap on attempted steps, so the loop always ends whatever the inputs. */
const MAX_STEPS = 100_000;
/** Steps shorter than this many ulps of max(t, 1 s) make no progress; give up. */
const MIN_STEP_ULPS = 16;
/**
 * Bounds on the inputs, far beyond any pneumatic launcher or range, so that no intermediate
 * quantity can overflow to ±Infinity (and from there to NaN).
 */
const FLIGHT_LIMITS = {
	speedMps: { min: 0, max: 10_000 },
	windMps: { min: -200, max: 200 },
	gravityMps2: { min: 0, max: 100 },
	lengthM: { min: 0, max: 100_000 },
	targetDistanceM: { min: 0, max: 100_000, minExclusive: true },
	/** Air is ≈ 1.8e-5 Pa·s; any gas at any range temperature is within 1e-6..1e-4. */
	viscosityPaS: { min: 1e-7, max: 1 }
} as const;
/** Largest number of points a path for plotting may ask for. */
const MAX_PATH_SAMPLES = 10_000;

/**
 * Scratch arrays kept between flights: allocating typed arrays costs more than a short flight's
 * arithmetic. They hold no data beyond one synchronous call; a nested call (an observer that
 * flies again) simply finds the pool empty and allocates its own.
 */
const sparePool: StepWork[] = [];

export interface FlightInput {
	/** Muzzle speed, m/s. */
	speedMps: number;
	/** Elevation of the bore above horizontal, degrees, in [−90, 90]. */
	elevationDeg: number;
	/** Azimuth, degrees to the right of the downrange axis; default 0. */
	azimuthDeg?: number;
	/** Muzzle height above the ground, m. */
	launchHeightM: number;
	/** Distance D of the target plane, m (> 0). */
	targetDistanceM: number;
	massKg: number;
	diameterM: number;
	/**
	 * Without `dragLaw`: the drag coefficient C_D, constant over the flight. With
	 * `dragLaw: { kind: 'sphere' }`: a dimensionless factor on the published sphere correlation
	 * (C_D = dragCoefficient × C_D,sphere(Re); 1 = a smooth sphere as Morrison's correlation has it).
	 */
	dragCoefficient: number;
	airDensityKgM3: number;
	/**
	 * How C_D varies along the flight. Absent: constant, C_D = dragCoefficient. 'sphere': at each
	 * instant C_D = dragCoefficient × sphereDragCoefficient(Re) (Morrison 2013/16, ../drag), with
	 * Re = ρ |v − w| d / μ from this viscosity (e.g. sutherlandViscosity of the air temperature).
	 */
	dragLaw?: SphereDragLaw;
	/** Wind, m/s: xMps > 0 a tail wind, zMps > 0 blowing to the right. Default still air. */
	wind?: { xMps: number; zMps: number };
	/** Default standard gravity 9.806 65 m/s². */
	gravityMps2?: number;
}

/**
 * The Reynolds-dependent drag law of a smooth sphere (shared/design/physics.md §3). Its drag does
 * not vanish with the air density: as Re → 0 it tends to Stokes drag 3πμd|v − w|, which depends on
 * μ alone; a drag-free flight under this law is dragCoefficient = 0.
 */
export interface SphereDragLaw {
	kind: 'sphere';
	/** Dynamic viscosity μ of the air, Pa·s (≈ 1.81e-5 at 20 °C; sutherlandViscosity). */
	dynamicViscosityPaS: number;
}

/**
 * How the flight ended: 'target' the plane x = D was reached; 'ground' it came down before the
 * plane; 'stall' it stopped moving downrange with no tail wind to carry it on (it cannot reach
 * the plane) and is reported where it came down; 'limit' it was still in the air after
 * MAX_FLIGHT_TIME_S (or the integrator could not continue), reported where it was last.
 */
export type FlightEnd = 'target' | 'ground' | 'stall' | 'limit';

export interface FlightResult {
	reached: boolean;
	/** Time of flight to the end point, s. */
	timeS: number;
	/** Height above the ground at the end point, m. */
	heightM: number;
	/** Lateral offset z at the end point, m (> 0 to the right). */
	lateralM: number;
	/** Ground speed at the end point, m/s. */
	speedMps: number;
	/** x at the end point, m; equals targetDistanceM when reached. */
	downrangeM: number;
	endedBy: FlightEnd;
	/** Accepted and rejected steps. */
	steps: number;
	/** Evaluations of the equations of motion. */
	evaluations: number;
}

export interface FlightOptions {
	relativeTolerance?: number;
	absoluteTolerance?: number;
}

interface FlightProblem {
	model: FlightSystem;
	/** Launch state: height (m) and velocity components (m/s); x = z = 0. */
	launch: { heightM: number; vx: number; vy: number; vz: number };
	targetX: number;
	tolerances: Tolerances;
}

/** Called after each accepted step with its dense output; θ_end < 1 on the last, partial one. */
type StepObserver = (tStart: number, h: number, y: Float64Array, dense: Float64Array, thetaEnd: number) => void;

function flightProblem(f: FlightInput, options: FlightOptions): FlightProblem {
	const speed = requireInRange(f.speedMps, 'speedMps', FLIGHT_LIMITS.speedMps);
	const elevation = toSI('angle', 'deg', requireInRange(f.elevationDeg, 'elevationDeg', { min: -90, max: 90 }));
	const azimuth = toSI('angle', 'deg', requireInRange(f.azimuthDeg ?? 0, 'azimuthDeg', { min: -180, max: 180 }));
	const density = requireNonNegative(f.airDensityKgM3, 'airDensityKgM3');
	const dragCoefficient = requireNonNegative(f.dragCoefficient, 'dragCoefficient');
	const diameter = requirePositive(f.diameterM, 'diameterM');
	const mass = requirePositive(f.massKg, 'massKg');
	const windX = requireInRange(f.wind?.xMps ?? 0, 'wind.xMps', FLIGHT_LIMITS.windMps);
	const windZ = requireInRange(f.wind?.zMps ?? 0, 'wind.zMps', FLIGHT_LIMITS.windMps);
	const gravity = requireInRange(f.gravityMps2 ?? STANDARD_GRAVITY_MPS2, 'gravityMps2', FLIGHT_LIMITS.gravityMps2);
	let model: FlightSystem;
	if (!f.dragLaw) {
		model = new FlightModel(dragFactor(density, dragCoefficient, diameter, mass), windX, windZ, gravity);
	} else if (f.dragLaw.kind === 'sphere') {
		const mu = requireInRange(f.dragLaw.dynamicViscosityPaS, 'dragLaw.dynamicViscosityPaS', FLIGHT_LIMITS.viscosityPaS);
		model = new SphereDragFlightModel(
			stokesDragRate(dragCoefficient, mu, diameter, mass),
			(density * diameter) / mu,
			windX,
			windZ,
			gravity
		);
	} else {
		const kind = String((f.dragLaw as { kind?: unknown }).kind);
		throw new PhysicsInputError('dragLaw.kind', 'out-of-range', `dragLaw.kind must be 'sphere' (got ${kind})`);
	}
	return {
		model,
		launch: {
			heightM: requireInRange(f.launchHeightM, 'launchHeightM', FLIGHT_LIMITS.lengthM),
			vx: speed * Math.cos(elevation) * Math.cos(azimuth),
			vy: speed * Math.sin(elevation),
			vz: speed * Math.cos(elevation) * Math.sin(azimuth)
		},
		targetX: requireInRange(f.targetDistanceM, 'targetDistanceM', FLIGHT_LIMITS.targetDistanceM),
		tolerances: {
			relative: requirePositive(options.relativeTolerance ?? DEFAULT_RELATIVE_TOLERANCE, 'relativeTolerance'),
			absolute: requirePositive(options.absoluteTolerance ?? DEFAULT_ABSOLUTE_TOLERANCE, 'absoluteTolerance')
		}
	};
}

/**
 * Moving upwind or not at all with no tail wind: dv_x/dt = −k|v−w|(v_x − w_x), k ≥ 0 under
 * either drag law, then keeps v_x at or below max(v_x, w_x) ≤ 0 for good, so x never grows again.
 */
function stalled(y: Float64Array, model: FlightSystem): boolean {
	return y[VX] <= 0 && model.windX <= 0;
}

function isFiniteState(y: Float64Array): boolean {
	for (let c = 0; c < y.length; c++) if (!Number.isFinite(y[c])) return false;
	return true;
}

function result(end: FlightEnd, t: number, y: Float64Array, p: FlightProblem, steps: number, evaluations: number): FlightResult {
	return {
		reached: end === 'target',
		timeS: t,
		heightM: end === 'ground' || end === 'stall' ? 0 : y[Y],
		lateralM: y[Z],
		speedMps: Math.sqrt(y[VX] * y[VX] + y[VY] * y[VY] + y[VZ] * y[VZ]),
		downrangeM: end === 'target' ? p.targetX : y[X],
		endedBy: end,
		steps,
		evaluations
	};
}

function placeAtLaunch(y: Float64Array, p: FlightProblem): void {
	y.fill(0);
	y[Y] = p.launch.heightM;
	y[VX] = p.launch.vx;
	y[VY] = p.launch.vy;
	y[VZ] = p.launch.vz;
}

/** At ground level and moving down (or at rest vertically and accelerating down): down already. */
function downAtLaunch(y: Float64Array, k0: Float64Array): boolean {
	return y[Y] === 0 && (y[VY] < 0 || (y[VY] === 0 && k0[VY] < 0));
}

function integrate(p: FlightProblem, observer: StepObserver | null): FlightResult {
	const w = sparePool.pop() ?? new StepWork(STATE_SIZE, DOP853);
	try {
		return integrateWith(w, p, observer);
	} finally {
		sparePool.push(w);
	}
}

function integrateWith(w: StepWork, p: FlightProblem, observer: StepObserver | null): FlightResult {
	const { model, tolerances } = p;
	const n = STATE_SIZE;
	const kNew = (DOP853.stepStages - 1) * n;
	let [y, yNew] = w.states;
	placeAtLaunch(y, p);
	model.derivative(y, w.K, 0);
	let evaluations = 1;
	let steps = 0;
	let t = 0;
	let hasStalled = stalled(y, model);
	if (downAtLaunch(y, w.K)) return result(hasStalled ? 'stall' : 'ground', 0, y, p, steps, evaluations);
	let h = initialStep(model, DOP853, y, w, tolerances);
	evaluations++;
	let afterRejection = false;
	while (steps < MAX_STEPS && t < MAX_FLIGHT_TIME_S) {
		h = Math.min(h, MAX_FLIGHT_TIME_S - t);
		rungeKuttaStep(model, DOP853, y, h, w, yNew);
		evaluations += DOP853.stepStages - 1;
		steps++;
		const err = errorNorm(DOP853, y, yNew, h, w, tolerances);
		// From ground level a step must not jump the whole arc: its end below ground would
		// hide the crossing (the start is itself at y = 0).
		const jumpedArc = y[Y] === 0 && crossesGround(yNew);
		if (!(err <= 1) || jumpedArc || !isFiniteState(yNew)) {
			h *= err <= 1 ? MIN_FACTOR : stepFactor(DOP853, err, afterRejection);
			afterRejection = true;
			if (h <= MIN_STEP_ULPS * Number.EPSILON * Math.max(t, 1)) break;
			continue;
		}
		const plane = crossesPlane(yNew, p.targetX);
		const ground = crossesGround(yNew);
		if (plane || ground || observer) {
			denseOutput(model, DOP853, y, yNew, h, w);
			evaluations += DOP853.allStages - DOP853.stepStages;
		}
		if (plane || ground) {
			const located = locateEvent(w.dense, n, y, plane, ground, p.targetX);
			interpolateState(w.dense, n, y, located.theta, yNew);
			observer?.(t, h, y, w.dense, located.theta);
			const end = located.event === 'target' ? 'target' : hasStalled ? 'stall' : 'ground';
			return result(end, t + located.theta * h, yNew, p, steps, evaluations);
		}
		observer?.(t, h, y, w.dense, 1);
		t += h;
		const previous = y;
		y = yNew;
		yNew = previous;
		w.K.copyWithin(0, kNew, kNew + n);
		hasStalled ||= stalled(y, model);
		h *= stepFactor(DOP853, err, afterRejection);
		afterRejection = false;
	}
	return result('limit', t, y, p, steps, evaluations);
}

/**
 * Fly a shot to the target plane x = D (or to where it comes down first). Never returns NaN:
 * inputs are validated (PhysicsInputError) and the loop always ends with a finite state.
 */
export function flyToPlane(f: FlightInput, options: FlightOptions = {}): FlightResult {
	return integrate(flightProblem(f, options), null);
}

export interface FlightPathPoint {
	timeS: number;
	downrangeM: number;
	heightM: number;
	lateralM: number;
	speedMps: number;
}

export interface FlightPath {
	/** The same result flyToPlane gives. */
	result: FlightResult;
	/** Evenly spaced in time from launch to the end point, both included. */
	points: FlightPathPoint[];
}

interface Segment {
	tStart: number;
	h: number;
	y: Float64Array;
	dense: Float64Array;
	thetaEnd: number;
}

function pathPoint(t: number, s: Segment, state: Float64Array): FlightPathPoint {
	const theta = Math.min(s.thetaEnd, Math.max(0, (t - s.tStart) / s.h));
	interpolateState(s.dense, STATE_SIZE, s.y, theta, state);
	return {
		timeS: t,
		downrangeM: state[X],
		heightM: state[Y],
		lateralM: state[Z],
		speedMps: Math.sqrt(state[VX] * state[VX] + state[VY] * state[VY] + state[VZ] * state[VZ])
	};
}

/**
 * The flight of flyToPlane sampled at `samples` instants evenly spaced in time (for plots), from
 * the dense output of each step, so the points lie on the integrated path and cost no extra steps.
 */
export function flightPath(f: FlightInput, options: FlightOptions & { samples: number }): FlightPath {
	const samples = requireInRange(options.samples, 'samples', { min: 2, max: MAX_PATH_SAMPLES });
	if (!Number.isInteger(samples)) {
		throw new PhysicsInputError('samples', 'out-of-range', `samples must be a whole number (got ${samples})`);
	}
	const p = flightProblem(f, options);
	const segments: Segment[] = [];
	const result = integrate(p, (tStart, h, y, dense, thetaEnd) =>
		segments.push({ tStart, h, y: Float64Array.from(y), dense: Float64Array.from(dense), thetaEnd })
	);
	const { vx, vy, vz } = p.launch;
	const first: FlightPathPoint = {
		timeS: 0,
		downrangeM: 0,
		heightM: p.launch.heightM,
		lateralM: 0,
		speedMps: Math.sqrt(vx * vx + vy * vy + vz * vz)
	};
	if (segments.length === 0) return { result, points: [first] };
	const state = new Float64Array(STATE_SIZE);
	const points = [first];
	const tEnd = result.timeS;
	let s = 0;
	for (let i = 1; i < samples - 1; i++) {
		const t = (tEnd * i) / (samples - 1);
		while (s < segments.length - 1 && t > segments[s].tStart + segments[s].h) s++;
		points.push(pathPoint(t, segments[s], state));
	}
	const { timeS, downrangeM, heightM, lateralM, speedMps } = result;
	points.push({ timeS, downrangeM, heightM, lateralM, speedMps });
	return { result, points };
}
