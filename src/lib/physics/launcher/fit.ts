// Launcher calibration (shared/design/physics.md §5): fit a model's parameters to a set of shots.
// Every prediction goes through ./model.ts (the family's muzzle speed, the drag law's flight), so
// what the server shows for a setup is exactly what the calibration was fitted to.
//
// Statistics:
// - Each shot's observations (muzzle speed, downrange speed, vertical impact offset) have their
//   measurement SDs; the fill-pressure gauge error σ_p moves every prediction of that shot
//   through the same true pressure, so the shot's covariance is Σ = diag(σ_k²) + σ_p² g gᵀ with
//   g_k = ∂(prediction k)/∂p_g (physics.md §5 asks for σ_p·dv/dp in the speed SD; the shared
//   pressure error also correlates a shot's residuals, so the full Σ is used). Residuals are
//   whitened per shot by the Cholesky factor of Σ (generalised least squares), so mixed kinds are
//   fitted together on one scale. Σ depends on the parameters through g, so it is recomputed at
//   the solution and the fit repeated until it settles (iteratively reweighted; cf. the
//   "effective variance" method, J. Orear, Am. J. Phys. 50 (1982) 912, from memory).
// - Parameter covariance s²(JᵀJ)⁻¹, s² = χ²/(n − p), 95 % intervals with t(0.975; n − p):
//   leastSquares (Bates & Watts 1988).
// - Starting values from the data (./start.ts); shots the start cannot predict are set aside,
//   listed by number with the reason.

import { PhysicsInputError, requireFinite, requireNonNegative, requirePositive } from '../errors';
import type { FlightResult } from '../flight/driver';
import { leastSquares, type LeastSquaresResult } from '../fit/least-squares';
import {
	DEFAULT_MODEL,
	FAMILY_PARAMETERS,
	OBSERVATION_KINDS,
	PARAMETER_FIELD,
	calibratedMuzzleSpeed,
	flyUnder,
	muzzleWithDerivatives,
	neutralParameters,
	type CalibrationParameters,
	type LauncherCalibration,
	type LauncherModel,
	type LauncherRig,
	type ObservationKind,
	type ParameterName,
	type Projectile,
	type RangeConditions,
	type ShotSetup
} from './model';
import { dragStart, gasWorkStart, valveFlowStart, type StartShot } from './start';
import { MuzzleCurves } from './muzzle-curves';
import { parameterReports, type ParameterReport } from './identifiability';
import { crossValidate, type CrossValidationReport } from './cross-validation';

export interface CalibrationShot {
	id?: string;
	rig: LauncherRig;
	projectile: Projectile;
	session: RangeConditions;
	/** Fill pressure read on the gauge, Pa. */
	fillGaugePa: number;
	/** Measured muzzle speed, m/s. */
	muzzleSpeedMps?: number;
	/** A second chronograph downrange: its distance from the muzzle and the speed it read. */
	downrange?: { distanceM: number; speedMps: number };
	/** Vertical offset of the impact from the aim point in the target plane, m (+ up). */
	impactHeightM?: number;
}

export interface MeasurementSds {
	/** Chronograph SD (muzzle and, unless given separately, downrange), m/s. */
	speedMps: number;
	/** Downrange chronograph SD, m/s; default speedMps. */
	downrangeSpeedMps?: number;
	/** Fill-pressure gauge reading SD, Pa. */
	pressurePa: number;
	/** SD of a measured vertical impact position, m. */
	impactM: number;
}

export interface FitLauncherOptions {
	/** Family and drag law; default gas work with a constant C_D. */
	model?: LauncherModel;
	/** Gas work: fit η1 (pressure slope of the efficiency). Default false. */
	pressureSlope?: boolean;
	/** Gas work: fit the energy term E. Default false. */
	energyOffset?: boolean;
	/** Fit the drag parameter. Default: when some shot has a downrange speed or an impact height. */
	dragCoefficient?: boolean;
	/** Fit an elevation bias δθ. Default false. */
	elevationBias?: boolean;
	/** Values to hold (parameters not fitted) or to start from; the data give the rest. */
	start?: Partial<Omit<CalibrationParameters, 'pRefPa'>>;
	/**
	 * Cross-validation: 'auto' (default) leaves one session out when the shots carry two or more
	 * session ids, else uses k-fold; a number k forces k-fold; false skips it.
	 */
	crossValidation?: 'auto' | number | false;
}

export type { ParameterReport } from './identifiability';
export type { CrossValidationReport } from './cross-validation';

export interface ObservationResidual {
	kind: ObservationKind;
	measured: number;
	predicted: number;
	/** measured − predicted, in m/s or m. */
	residual: number;
	/** Measurement SD of this observation including the propagated gauge error. */
	sd: number;
	/** residual / sd. */
	standardized: number;
	outlier: boolean;
}

export interface ShotResiduals {
	index: number;
	id?: string;
	observations: ObservationResidual[];
	outlier: boolean;
}

export type PerKind = Record<ObservationKind, number | null>;

/** A shot the fit could not use, with the reason in plain words. */
export interface UnusedShot {
	index: number;
	id?: string;
	reason: string;
}

export interface LauncherFitResult {
	converged: boolean;
	/** What happened, in plain words: how the fit ended, then each parameter's caveat. */
	message: string;
	/** When the solver stopped early: the cause in plain words (e.g. a derivative that is not finite). */
	failure: string | null;
	model: LauncherModel;
	calibration: LauncherCalibration;
	parameters: ParameterReport[];
	/** Correlation matrix in the order of `parameters`. */
	correlation: number[][];
	/** χ² of the whitened residuals, n − p, and s = √(χ²/(n − p)) (≈ 1 when the SDs are right). */
	chiSquare: number;
	dof: number;
	residualScale: number;
	nUsed: { shots: number; observations: number } & Record<ObservationKind, number>;
	/** Shots set aside because the start could not predict them. */
	unused: UnusedShot[];
	/** In-sample RMS residual per kind, m/s or m. */
	rmsByKind: PerKind;
	/** √mean(σ²) per kind: what the RMS would be with a perfect model. */
	noiseFloorByKind: PerKind;
	crossValidation: CrossValidationReport | null;
	shots: ShotResiduals[];
	/** Observations with |standardised residual| > OUTLIER_THRESHOLD: flagged, never excluded. */
	outliers: { shotIndex: number; id?: string; kind: ObservationKind; standardized: number }[];
	/** Outer reweighting passes and total LM iterations. */
	passes: number;
	iterations: number;
}

/** |residual/SD| above this flags an observation (physics.md §5). */
export const OUTLIER_THRESHOLD = 3;
/** η0 ∈ (0, 1] (physics.md §1); the open end as a tiny positive bound. */
const EFFICIENCY_LOWER = 1e-6;
const ELEVATION_BIAS_LIMIT_DEG = 45;
/** Reweighting stops when no observation SD moves by more than this (relative): 1 % of an SD is statistically immaterial. */
const REWEIGHT_TOLERANCE = 1e-2;
const MAX_PASSES = 4;
/** Forward-difference steps for the flight derivatives (relative for v0 and C_D, degrees for θ). */
const SPEED_STEP_RELATIVE = 1e-5;
const DRAG_STEP_RELATIVE = 1e-4;
const DRAG_STEP_FLOOR = 1e-5;
const ELEVATION_STEP_DEG = 1e-4;
/**
 * LM tolerances for calibrations. A relative χ² change of 1e-8 and a relative step of 1e-7 pin
 * the parameters to well under 1 % of their standard errors (even for 10⁴ shots), while staying
 * far above the integrators' noise; tighter only costs flights.
 */
const FIT_FTOL = 1e-8;
const FIT_XTOL = 1e-7;
/** Every fittable parameter, in report order. */
export const PARAMETER_ORDER: readonly ParameterName[] = [
	'efficiency',
	'pressureSlope',
	'energyOffset',
	'valveArea',
	'openingTime',
	'friction',
	'dragCoefficient',
	'elevationBias'
];

// ---------------------------------------------------------------------------------------------
// Shots and their observations.

export interface Observation {
	kind: ObservationKind;
	measured: number;
	/** Distance of the plane it is taken at (0 for the muzzle), m. */
	distanceM: number;
	measurementSd: number;
}

/** Flight-dependent part of a shot's predictions: a function of (v0, drag, θ) only. */
interface FlightPart {
	values: number[];
	perSpeed?: number[];
	perDrag?: number[];
	perElevation?: number[];
}

export interface ShotModel {
	values: number[];
	muzzleSpeedMps: number;
	derivatives?: {
		perParameter: Partial<Record<ParameterName, number>>;
		/** ∂v0/∂p_g. */
		speedPerPressure: number;
		perSpeed: number[];
		perDrag: number[];
		perElevation: number[];
	};
}

/**
 * Recent flight parts of one shot, keyed by (v0, drag, θ): the LM asks for the Jacobian at a
 * point whose residuals it computed several trials earlier, and the reweighting and the
 * cross-validation folds start where the last fit ended, so most flights would otherwise be
 * flown twice. Derivatives are also reused from an entry within DERIVATIVE_REUSE_RELATIVE of the
 * asked point: that changes them by about as much as the forward-difference error they already
 * carry (~1e-4 relative), far inside the standard errors' own sampling uncertainty.
 */
class FlightCache {
	private entries: { v0: number; drag: number; elevation: number; part: FlightPart }[] = [];

	exact(v0: number, drag: number, elevation: number): FlightPart | undefined {
		return this.entries.find((e) => e.v0 === v0 && e.drag === drag && e.elevation === elevation)?.part;
	}

	nearDerivatives(v0: number, drag: number, elevation: number): FlightPart | undefined {
		const close = (a: number, b: number, scale: number) => Math.abs(a - b) <= DERIVATIVE_REUSE_RELATIVE * scale;
		return this.entries.find(
			(e) =>
				e.part.perSpeed &&
				close(e.v0, v0, v0) &&
				close(e.drag, drag, Math.max(drag, DRAG_STEP_FLOOR / DRAG_STEP_RELATIVE)) &&
				close(e.elevation, elevation, 1)
		)?.part;
	}

	set(v0: number, drag: number, elevation: number, part: FlightPart): void {
		this.entries = this.entries.filter((e) => !(e.v0 === v0 && e.drag === drag && e.elevation === elevation));
		this.entries.push({ v0, drag, elevation, part });
		if (this.entries.length > FLIGHT_CACHE_SIZE) this.entries.shift();
	}
}
const FLIGHT_CACHE_SIZE = 4;
const DERIVATIVE_REUSE_RELATIVE = 1e-4;

export interface PreparedShot {
	index: number;
	id?: string;
	sessionKey: string;
	setup: ShotSetup;
	observations: Observation[];
	flightCache: FlightCache;
}

function observable(kind: ObservationKind, f: FlightResult, setup: ShotSetup): number {
	return kind === 'impactHeight' ? f.heightM - setup.session.aimHeightM : f.speedMps;
}

function flightPart(
	model: LauncherModel,
	setup: ShotSetup,
	observations: Observation[],
	v0: number,
	drag: number,
	elevationDeg: number,
	withDerivatives: boolean,
	base: FlightPart | undefined
): FlightPart | null {
	const fly = (v: number, c: number, e: number, d: number) => flyUnder(model.drag, setup, v, c, e, d);
	let values = base?.values;
	if (!values) {
		const flights = new Map<number, FlightResult>();
		values = [];
		for (const o of observations) {
			if (o.kind === 'muzzleSpeed') {
				values.push(v0);
				continue;
			}
			let f = flights.get(o.distanceM);
			if (!f) {
				f = fly(v0, drag, elevationDeg, o.distanceM);
				if (!f.reached) return null;
				flights.set(o.distanceM, f);
			}
			values.push(observable(o.kind, f, setup));
		}
	}
	if (!withDerivatives) return { values };
	const hv = SPEED_STEP_RELATIVE * v0;
	const hc = Math.max(DRAG_STEP_FLOOR, DRAG_STEP_RELATIVE * drag);
	const perSpeed: number[] = [];
	const perDrag: number[] = [];
	const perElevation: number[] = [];
	const shifted = new Map<number, FlightResult[]>();
	for (let k = 0; k < observations.length; k++) {
		const o = observations[k];
		if (o.kind === 'muzzleSpeed') {
			perSpeed.push(1);
			perDrag.push(0);
			perElevation.push(0);
			continue;
		}
		let s = shifted.get(o.distanceM);
		if (!s) {
			s = [
				fly(v0 + hv, drag, elevationDeg, o.distanceM),
				fly(v0, drag + hc, elevationDeg, o.distanceM),
				fly(v0, drag, elevationDeg + ELEVATION_STEP_DEG, o.distanceM)
			];
			if (!s.every((f) => f.reached)) return null;
			shifted.set(o.distanceM, s);
		}
		perSpeed.push((observable(o.kind, s[0], setup) - values[k]) / hv);
		perDrag.push((observable(o.kind, s[1], setup) - values[k]) / hc);
		perElevation.push((observable(o.kind, s[2], setup) - values[k]) / ELEVATION_STEP_DEG);
	}
	return { values, perSpeed, perDrag, perElevation };
}

/**
 * Predict a shot's observations under parameters p, optionally with the derivatives the fit
 * needs. Null when the model cannot produce them (the projectile stays in the barrel, η leaves
 * (0, 1], or a flight does not reach its plane): the fit treats that as an infeasible trial.
 */
function muzzleOnly(model: LauncherModel, setup: ShotSetup, p: CalibrationParameters, fill: number): number | null {
	const r = calibratedMuzzleSpeed(model, p, setup, fill);
	return r.ok ? r.speedMps : null;
}

/** From the session's shared curve when it has one (valve flow, large sessions), else the ODE. */
function curveOrOde(model: LauncherModel, curves: MuzzleCurves, setup: ShotSetup, p: CalibrationParameters, fill: number): number | null {
	const v = curves.speed(setup, p, fill);
	return v === undefined ? muzzleOnly(model, setup, p, fill) : v;
}

export function modelShot(
	model: LauncherModel,
	shot: PreparedShot,
	p: CalibrationParameters,
	withDerivatives: boolean,
	curves?: MuzzleCurves
): ShotModel | null {
	try {
		let v0: number;
		let muzzle: ReturnType<typeof muzzleWithDerivatives> = null;
		if (withDerivatives) {
			muzzle = muzzleWithDerivatives(model, p, shot.setup, curves ? (q, fill) => curveOrOde(model, curves, shot.setup, q, fill) : undefined);
			if (!muzzle) return null;
			v0 = muzzle.speedMps;
		} else {
			const v = curves ? curveOrOde(model, curves, shot.setup, p, shot.setup.fillGaugePa) : muzzleOnly(model, shot.setup, p, shot.setup.fillGaugePa);
			if (v === null) return null;
			v0 = v;
		}
		const elevation = shot.setup.session.elevationDeg + p.elevationBiasDeg;
		const drag = p.dragCoefficient;
		const cache = shot.flightCache;
		let part = cache.exact(v0, drag, elevation);
		if (!part || (withDerivatives && !part.perSpeed)) {
			const near = withDerivatives ? cache.nearDerivatives(v0, drag, elevation) : undefined;
			const computed = near
				? (part ?? flightPart(model, shot.setup, shot.observations, v0, drag, elevation, false, undefined))
				: flightPart(model, shot.setup, shot.observations, v0, drag, elevation, withDerivatives, part);
			if (!computed) return null;
			part = near ? { ...computed, perSpeed: near.perSpeed, perDrag: near.perDrag, perElevation: near.perElevation } : computed;
			cache.set(v0, drag, elevation, part);
		}
		const out: ShotModel = { values: part.values, muzzleSpeedMps: v0 };
		if (!withDerivatives || !muzzle) return out;
		out.derivatives = {
			perParameter: muzzle.perParameter,
			speedPerPressure: muzzle.perPressure,
			perSpeed: part.perSpeed!,
			perDrag: part.perDrag!,
			perElevation: part.perElevation!
		};
		return out;
	} catch (e) {
		if (e instanceof PhysicsInputError) return null;
		throw e;
	}
}

export function prepareShots(shots: CalibrationShot[], sds: MeasurementSds): PreparedShot[] {
	const speedSd = requirePositive(sds.speedMps, 'sds.speedMps');
	const downrangeSd = requirePositive(sds.downrangeSpeedMps ?? sds.speedMps, 'sds.downrangeSpeedMps');
	const impactSd = requirePositive(sds.impactM, 'sds.impactM');
	requireNonNegative(sds.pressurePa, 'sds.pressurePa');
	return shots.map((s, index) => {
		const field = (name: string) => `shots[${index}].${name}`;
		requireNonNegative(s.fillGaugePa, field('fillGaugePa'));
		requirePositive(s.session.targetDistanceM, field('session.targetDistanceM'));
		requireFinite(s.session.aimHeightM, field('session.aimHeightM'));
		const observations: Observation[] = [];
		if (s.muzzleSpeedMps !== undefined)
			observations.push({
				kind: 'muzzleSpeed',
				measured: requirePositive(s.muzzleSpeedMps, field('muzzleSpeedMps')),
				distanceM: 0,
				measurementSd: speedSd
			});
		if (s.downrange)
			observations.push({
				kind: 'downrangeSpeed',
				measured: requirePositive(s.downrange.speedMps, field('downrange.speedMps')),
				distanceM: requirePositive(s.downrange.distanceM, field('downrange.distanceM')),
				measurementSd: downrangeSd
			});
		if (s.impactHeightM !== undefined)
			observations.push({
				kind: 'impactHeight',
				measured: requireFinite(s.impactHeightM, field('impactHeightM')),
				distanceM: s.session.targetDistanceM,
				measurementSd: impactSd
			});
		if (observations.length === 0)
			throw new PhysicsInputError(`shots[${index}]`, 'out-of-range', `shot ${index} has no measurement to fit`);
		return {
			index,
			id: s.id,
			sessionKey: s.session.sessionId ?? '',
			setup: { rig: s.rig, projectile: s.projectile, session: s.session, fillGaugePa: s.fillGaugePa },
			observations,
			flightCache: new FlightCache()
		};
	});
}

// ---------------------------------------------------------------------------------------------
// The fit core: GLS with reweighting.

export interface FitConfig {
	model: LauncherModel;
	/** Valve flow over large sessions: shared muzzle-speed curves (./muzzle-curves.ts). */
	curves?: MuzzleCurves;
	names: ParameterName[];
	/** Values of the parameters that are held (and starting values of the fitted ones). */
	base: CalibrationParameters;
	pressureSd: number;
	lower: number[];
	upper: number[];
}

function withVector(config: FitConfig, x: number[], base = config.base): CalibrationParameters {
	const p = { ...base };
	config.names.forEach((name, j) => (p[PARAMETER_FIELD[name]] = x[j]));
	return p;
}

function vectorOf(config: FitConfig, p: CalibrationParameters): number[] {
	return config.names.map((name) => p[PARAMETER_FIELD[name]]);
}

/** Per shot: lower Cholesky factor of Σ (row-major, k×k) and the marginal SDs. */
export interface ShotWeights {
	chol: number[][];
	sd: number[];
}

function shotWeights(shot: PreparedShot, model: ShotModel, pressureSd: number): ShotWeights {
	const d = model.derivatives!;
	const g = d.perSpeed.map((v) => v * d.speedPerPressure);
	const k = shot.observations.length;
	const sigma = Array.from({ length: k }, (_, a) =>
		Array.from({ length: k }, (_, b) => {
			const common = pressureSd * pressureSd * g[a] * g[b];
			return a === b ? shot.observations[a].measurementSd ** 2 + common : common;
		})
	);
	const chol = Array.from({ length: k }, () => new Array<number>(k).fill(0));
	for (let j = 0; j < k; j++) {
		let s = sigma[j][j];
		for (let q = 0; q < j; q++) s -= chol[j][q] * chol[j][q];
		chol[j][j] = Math.sqrt(s);
		for (let i = j + 1; i < k; i++) {
			let t = sigma[i][j];
			for (let q = 0; q < j; q++) t -= chol[i][q] * chol[j][q];
			chol[i][j] = t / chol[j][j];
		}
	}
	return { chol, sd: sigma.map((row, a) => Math.sqrt(row[a])) };
}

/** Solve L·w = e for the block e = v[start .. start + k) in place (forward substitution). */
function whitenInPlace(chol: number[][], v: number[], start = 0): void {
	for (let i = 0; i < chol.length; i++) {
		let t = v[start + i];
		for (let q = 0; q < i; q++) t -= chol[i][q] * v[start + q];
		v[start + i] = t / chol[i][i];
	}
}

function derivativeColumns(shot: PreparedShot, m: ShotModel, names: ParameterName[]): number[][] {
	const d = m.derivatives!;
	return names.map((name) =>
		shot.observations.map((_, k) => {
			if (name === 'dragCoefficient') return d.perDrag[k];
			if (name === 'elevationBias') return d.perElevation[k];
			return d.perSpeed[k] * (d.perParameter[name] ?? 0);
		})
	);
}

export interface CoreFit {
	ls: LeastSquaresResult;
	params: CalibrationParameters;
	shots: PreparedShot[];
	models: ShotModel[];
	weights: ShotWeights[];
	passes: number;
	iterations: number;
	/** Plain-words cause when the solver stopped early, else null. */
	failure: string | null;
	/** Shots set aside because they could not be predicted at the start. */
	unused: UnusedShot[];
}

function shotName(s: PreparedShot): string {
	return s.id !== undefined ? `shot ${s.id}` : `shot #${s.index + 1}`;
}

/**
 * Fit the configured parameters from `start`. Shots the start cannot predict are set aside and
 * listed; the fit refuses only when no shot is left (PhysicsInputError).
 */
export function fitCore(all: PreparedShot[], config: FitConfig, start: CalibrationParameters): CoreFit {
	let params = start;
	let passes = 0;
	let iterations = 0;
	const unused: UnusedShot[] = [];
	const shots: PreparedShot[] = [];
	let models: ShotModel[] = [];
	for (const s of all) {
		const m = modelShot(config.model, s, params, true, config.curves);
		if (m) {
			shots.push(s);
			models.push(m);
			continue;
		}
		const speed = calibratedMuzzleSpeed(config.model, params, s.setup, s.setup.fillGaugePa);
		unused.push({
			index: s.index,
			id: s.id,
			reason: speed.ok
				? 'the projectile would not reach a measuring plane at the starting values'
				: `at the starting values: ${speed.reason}`
		});
	}
	const nObservations = shots.reduce((n, s) => n + s.observations.length, 0);
	if (nObservations <= config.names.length)
		throw new PhysicsInputError(
			'shots',
			'out-of-range',
			unused.length
				? `${unused.length} of ${all.length} shots cannot be predicted at the starting values (first: ${unused[0].id ?? unused[0].index + 1}, ${unused[0].reason}); the rest cannot determine ${config.names.length} parameters`
				: `${nObservations} measurements cannot determine ${config.names.length} parameters`
		);
	let weights = shots.map((s, i) => shotWeights(s, models[i], config.pressureSd));
	let ls: LeastSquaresResult | null = null;
	let failure: string | null = null;

	for (; passes < MAX_PASSES; ) {
		passes++;
		const w = weights;
		let jacobianProblem: string | null = null;
		const evaluate = (x: number[], derivatives: boolean) => {
			const p = withVector(config, x);
			return { p, models: shots.map((s) => modelShot(config.model, s, p, derivatives, config.curves)) };
		};
		ls = leastSquares({
			start: vectorOf(config, params),
			lower: config.lower,
			upper: config.upper,
			options: { ftol: FIT_FTOL, xtol: FIT_XTOL },
			residuals: (x) => {
				const { models: ms } = evaluate(x, false);
				const out: number[] = [];
				shots.forEach((s, i) => {
					const m = ms[i];
					const begin = out.length;
					for (let k = 0; k < s.observations.length; k++) out.push(m ? s.observations[k].measured - m.values[k] : NaN);
					whitenInPlace(w[i].chol, out, begin);
				});
				return out;
			},
			jacobian: (x) => {
				const { models: ms } = evaluate(x, true);
				const rows: number[][] = [];
				shots.forEach((s, i) => {
					const m = ms[i];
					if (!m?.derivatives) {
						jacobianProblem ??= `${shotName(s)} cannot be predicted with its derivatives at the current values (the projectile stays in the barrel or a nudged flight misses its plane)`;
						for (let k = 0; k < s.observations.length; k++) rows.push(config.names.map(() => NaN));
						return;
					}
					const columns = derivativeColumns(s, m, config.names);
					for (const col of columns) {
						for (let k = 0; k < col.length; k++) col[k] = -col[k];
						whitenInPlace(w[i].chol, col);
					}
					const bad = columns.findIndex((col) => col.some((v) => !Number.isFinite(v)));
					if (bad >= 0)
						jacobianProblem ??= `the derivative of ${shotName(s)} with respect to ${config.names[bad]} is not a finite number`;
					for (let k = 0; k < s.observations.length; k++) rows.push(columns.map((col) => col[k]));
				});
				return rows;
			}
		});
		iterations += ls.iterations;
		params = withVector(config, ls.params);
		if (!ls.converged) {
			failure =
				ls.status === 'invalid-jacobian' && jacobianProblem
					? `stopped: ${jacobianProblem}`
					: ls.status === 'invalid-start'
						? `not started: some shot cannot be predicted at the starting values`
						: ls.message;
			break;
		}
		const atSolution = evaluate(ls.params, true).models;
		const failed = atSolution.findIndex((m) => m === null);
		if (failed >= 0) {
			failure = `stopped: ${shotName(shots[failed])} cannot be predicted at the solution`;
			break;
		}
		models = atSolution as ShotModel[];
		const next = shots.map((s, i) => shotWeights(s, models[i], config.pressureSd));
		let change = 0;
		next.forEach((nw, i) => nw.sd.forEach((sd, k) => (change = Math.max(change, Math.abs(sd / w[i].sd[k] - 1)))));
		weights = next;
		if (change <= REWEIGHT_TOLERANCE) break;
	}
	return { ls: ls!, params, shots, models, weights, passes, iterations, failure, unused };
}

// ---------------------------------------------------------------------------------------------
// The public fit.

export function mean(xs: number[]): number {
	return xs.reduce((s, v) => s + v, 0) / xs.length;
}

export function rms(xs: number[]): number | null {
	return xs.length === 0 ? null : Math.sqrt(xs.reduce((s, v) => s + v * v, 0) / xs.length);
}

function startShots(prepared: PreparedShot[]): StartShot[] {
	return prepared.map((s) => {
		const m = s.observations.find((o) => o.kind === 'muzzleSpeed');
		const d = s.observations.find((o) => o.kind === 'downrangeSpeed');
		return {
			index: s.index,
			setup: s.setup,
			muzzleSpeedMps: m?.measured,
			downrange: d ? { distanceM: d.distanceM, speedMps: d.measured } : undefined
		};
	});
}

/** The parameters a model fits under the options, in report order. */
export function fittedNames(model: LauncherModel, options: FitLauncherOptions, hasFlightData: boolean): ParameterName[] {
	return PARAMETER_ORDER.filter((name) => {
		if (name === 'dragCoefficient') return options.dragCoefficient ?? hasFlightData;
		if (name === 'elevationBias') return options.elevationBias === true;
		if (!FAMILY_PARAMETERS[model.family].includes(name)) return false;
		if (name === 'pressureSlope') return options.pressureSlope === true;
		if (name === 'energyOffset') return options.energyOffset === true;
		return true;
	});
}

const BOUNDS: Record<ParameterName, [number, number]> = {
	efficiency: [EFFICIENCY_LOWER, 1],
	pressureSlope: [-Infinity, Infinity],
	// physics.md §5: E is free (either sign), never clamped to look physical.
	energyOffset: [-Infinity, Infinity],
	valveArea: [1e-12, Infinity],
	openingTime: [1e-6, Infinity],
	friction: [-Infinity, Infinity],
	dragCoefficient: [0, Infinity],
	elevationBias: [-ELEVATION_BIAS_LIMIT_DEG, ELEVATION_BIAS_LIMIT_DEG]
};

/**
 * Fit a launcher calibration to shots (physics.md §5). Throws PhysicsInputError on invalid input
 * or when no shot can be predicted; a fit that stops early returns `converged: false` with the
 * cause in `failure`.
 */
export function fitLauncher(shots: CalibrationShot[], sds: MeasurementSds, options: FitLauncherOptions = {}): LauncherFitResult {
	if (shots.length === 0) throw new PhysicsInputError('shots', 'out-of-range', 'no shots to fit');
	const prepared = prepareShots(shots, sds);
	const model = options.model ?? DEFAULT_MODEL;
	const hasFlightData = prepared.some((s) => s.observations.some((o) => o.kind !== 'muzzleSpeed'));
	const names = fittedNames(model, options, hasFlightData);
	const pressures = prepared.map((s) => s.setup.fillGaugePa);
	const pRefPa = mean(pressures);
	if (!(pRefPa > 0)) throw new PhysicsInputError('fillGaugePa', 'not-positive', 'the mean fill pressure must be > 0');

	const given = options.start ?? {};
	const base: CalibrationParameters = { ...neutralParameters(pRefPa), ...given, pRefPa };
	const starts = startShots(prepared);
	if (model.family === 'gas-work' && given.efficiency === undefined) {
		// The energy-linear solution with every requested term; should it leave shots that the
		// start cannot predict (η(p) outside (0, 1] at the ends of a short sweep), the same without
		// the slope, and whichever predicts more shots starts the fit (the LM then moves η1).
		const energyOffset = names.includes('energyOffset');
		const tries = [gasWorkStart(starts, pRefPa, { pressureSlope: names.includes('pressureSlope'), energyOffset })];
		if (names.includes('pressureSlope')) tries.push(gasWorkStart(starts, pRefPa, { pressureSlope: false, energyOffset }));
		const failures = (t: (typeof tries)[number]) => {
			const trial = { ...base, efficiency: t.efficiency, pressureSlope: t.pressureSlope, energyOffsetJ: energyOffset ? t.energyOffsetJ : base.energyOffsetJ };
			return prepared.filter((s) => !calibratedMuzzleSpeed(model, trial, s.setup, s.setup.fillGaugePa).ok).length;
		};
		const chosen = tries.reduce((a, b) => (failures(b) < failures(a) ? b : a));
		base.efficiency = chosen.efficiency;
		if (names.includes('pressureSlope')) base.pressureSlope = chosen.pressureSlope;
		if (energyOffset) base.energyOffsetJ = chosen.energyOffsetJ;
	}
	if (model.family === 'valve-flow' && given.valveAreaM2 === undefined) {
		const s = valveFlowStart(starts, base);
		base.valveAreaM2 = s.valveAreaM2;
		base.openingTimeS = s.openingTimeS;
		base.frictionN = s.frictionN;
	}
	if (given.dragCoefficient === undefined) base.dragCoefficient = dragStart(starts, model.drag);
	requireNonNegative(base.dragCoefficient, 'start.dragCoefficient');
	requireFinite(base.elevationBiasDeg, 'start.elevationBiasDeg');
	const config: FitConfig = {
		model,
		curves: model.family === 'valve-flow' ? new MuzzleCurves(model, prepared.map((s) => s.setup)) : undefined,
		names,
		base,
		pressureSd: sds.pressurePa,
		lower: names.map((n) => BOUNDS[n][0]),
		upper: names.map((n) => BOUNDS[n][1])
	};
	const nObservations = prepared.reduce((s, p) => s + p.observations.length, 0);
	if (nObservations < names.length)
		throw new PhysicsInputError('shots', 'out-of-range', `${nObservations} measurements cannot determine ${names.length} parameters`);

	const core = fitCore(prepared, config, base);
	const { ls, params, models, weights } = core;
	const used = core.shots;

	const shotResiduals: ShotResiduals[] = used.map((s, i) => {
		const observations = s.observations.map((o, k) => {
			const predicted = models[i].values[k];
			const residual = o.measured - predicted;
			const sd = weights[i].sd[k];
			const standardized = residual / sd;
			return { kind: o.kind, measured: o.measured, predicted, residual, sd, standardized, outlier: Math.abs(standardized) > OUTLIER_THRESHOLD };
		});
		return { index: s.index, id: s.id, observations, outlier: observations.some((o) => o.outlier) };
	});
	const byKind = (pick: (o: ObservationResidual) => number) =>
		Object.fromEntries(
			OBSERVATION_KINDS.map((kind) => [kind, rms(shotResiduals.flatMap((s) => s.observations.filter((o) => o.kind === kind).map(pick)))])
		) as PerKind;
	const counts = Object.fromEntries(
		OBSERVATION_KINDS.map((kind) => [kind, used.reduce((n, s) => n + s.observations.filter((o) => o.kind === kind).length, 0)])
	) as Record<ObservationKind, number>;

	const reports = parameterReports(model, names, ls, used, core.failure !== null || !ls.converged);
	const identifiable = reports.map((r) => r.identifiable);
	const covariance = ls.covariance.map((row, a) => row.map((c, b) => (identifiable[a] && identifiable[b] ? c : a === b ? Infinity : NaN)));
	const correlation = ls.correlation.map((row, a) => row.map((c, b) => (identifiable[a] && identifiable[b] ? c : NaN)));
	const usedPressures = used.map((s) => s.setup.fillGaugePa);
	const calibration: LauncherCalibration = {
		model,
		parameters: params,
		fitted: names,
		identifiable,
		covariance,
		fillPressureRangePa: { min: Math.min(...usedPressures), max: Math.max(...usedPressures) }
	};

	const converged = core.failure === null && ls.converged;
	const messages = [converged ? `The fit ${ls.message}` : `The fit ${core.failure ?? ls.message}`];
	if (core.unused.length)
		messages.push(
			`${core.unused.length} shot${core.unused.length === 1 ? '' : 's'} set aside: the start could not predict ${core.unused.length === 1 ? 'it' : 'them'} (${core.unused
				.slice(0, 5)
				.map((u) => u.id ?? `#${u.index + 1}`)
				.join(', ')}${core.unused.length > 5 ? ', …' : ''})`
		);
	for (const r of reports) {
		if (r.reason) messages.push(r.reason);
		else if (r.atBound) messages.push(`${r.label} ended on its ${r.atBound} bound (${r.value}): its interval assumes the bound is not active`);
	}

	let crossValidation: CrossValidationReport | null = null;
	if (converged && options.crossValidation !== false)
		crossValidation = crossValidate(used, config, params, options.crossValidation ?? 'auto');

	const outliers = shotResiduals.flatMap((s) =>
		s.observations.filter((o) => o.outlier).map((o) => ({ shotIndex: s.index, id: s.id, kind: o.kind, standardized: o.standardized }))
	);
	return {
		converged,
		message: messages.join('; '),
		failure: core.failure,
		model,
		calibration,
		parameters: reports,
		correlation,
		chiSquare: ls.rss,
		dof: ls.dof,
		residualScale: ls.residualSd,
		nUsed: { shots: used.length, observations: used.reduce((n, s) => n + s.observations.length, 0), ...counts },
		unused: core.unused,
		rmsByKind: byKind((o) => o.residual),
		noiseFloorByKind: byKind((o) => o.sd),
		crossValidation,
		shots: shotResiduals,
		outliers,
		passes: core.passes,
		iterations: core.iterations
	};
}

