// Launcher calibration (shared/design/physics.md §5): fit the efficiency η0 (always), its pressure
// slope η1, a constant loss force F, the drag coefficient C_D and an elevation bias δθ to a set
// of shots, and predict shots from the result. Predictions go through muzzleSpeed (physics.md §1)
// and flyToPlane (§3): `predictShot` and the fit's residuals take the same steps (η at the fill
// pressure, muzzleInput, fly, observable below), so what the server shows for a setup is exactly
// what the calibration was fitted to.
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
// - Predictive check: k-fold or leave-one-session-out cross-validated RMS prediction error per
//   residual kind, beside the in-sample RMS and the noise floor √mean(σ²) (physics.md §5).

import { PhysicsInputError, requireFinite, requireNonNegative, requirePositive } from '../errors';
import { flyToPlane, type FlightResult } from '../flight/driver';
import { muzzleSpeed, type GasInertia } from '../internal';
import { describeLeastSquaresStatus, leastSquares, type LeastSquaresResult } from './least-squares';

export interface LauncherRig {
	reservoirM3: number;
	deadM3: number;
	boreDiameterM: number;
	travelM: number;
	/** Default 1.4 (adiabatic air). */
	polytropicIndex?: number;
	gasInertia?: GasInertia;
}

export interface Projectile {
	massKg: number;
	diameterM: number;
}

/** Range conditions of a session (or of a planned shot). */
export interface RangeConditions {
	/** Groups shots for leave-one-session-out cross-validation. */
	sessionId?: string;
	/** Distance of the target plane, m. */
	targetDistanceM: number;
	/** Set elevation of the launcher, degrees (the fitted bias δθ is added to it). */
	elevationDeg: number;
	azimuthDeg?: number;
	launchHeightM: number;
	/** Height of the aim point above the ground at the target plane, m. */
	aimHeightM: number;
	airDensityKgM3: number;
	/** Barometric pressure, Pa (the reference of the gauge reading). */
	ambientPa: number;
	wind?: { xMps: number; zMps: number };
	gravityMps2?: number;
}

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

export type ParameterName = 'efficiency' | 'pressureSlope' | 'lossForce' | 'dragCoefficient' | 'elevationBias';
export type ObservationKind = 'muzzleSpeed' | 'downrangeSpeed' | 'impactHeight';

/** Everything a prediction needs; a parameter that was not fitted holds its given value. */
export interface CalibrationParameters {
	/** η0. */
	efficiency: number;
	/** η1 (0 when not fitted). */
	pressureSlope: number;
	/** p_ref of the pressure slope: mean fill gauge pressure of the fitted shots, Pa. */
	pRefPa: number;
	/** F, N. */
	lossN: number;
	dragCoefficient: number;
	/** δθ, degrees, added to the set elevation. */
	elevationBiasDeg: number;
}

/** Where each fittable parameter lives in CalibrationParameters. */
export const PARAMETER_FIELD: Record<ParameterName, Exclude<keyof CalibrationParameters, 'pRefPa'>> = {
	efficiency: 'efficiency',
	pressureSlope: 'pressureSlope',
	lossForce: 'lossN',
	dragCoefficient: 'dragCoefficient',
	elevationBias: 'elevationBiasDeg'
};

/** The parameters with one of them replaced (for finite differences and sampling). */
export function withParameter(p: CalibrationParameters, name: ParameterName, value: number): CalibrationParameters {
	return { ...p, [PARAMETER_FIELD[name]]: value };
}

export function parameterValue(p: CalibrationParameters, name: ParameterName): number {
	return p[PARAMETER_FIELD[name]];
}

/** A stored calibration: values, which of them were fitted, and their covariance. */
export interface LauncherCalibration {
	parameters: CalibrationParameters;
	/** Fitted parameters, in the order of `covariance`. */
	fitted: ParameterName[];
	/** Per fitted parameter: false when the data do not determine it (see the fit report). */
	identifiable: boolean[];
	/** Covariance of the fitted parameters (δθ in degrees); Infinity/NaN where not determined. */
	covariance: number[][];
	/** Range of fill gauge pressures in the calibration, Pa: predictions outside it say so. */
	fillPressureRangePa: { min: number; max: number };
}

export interface FitLauncherOptions {
	/** Fit η1 (pressure slope of the efficiency). Default false. */
	pressureSlope?: boolean;
	/** Fit a constant loss force F. Default false. */
	lossForce?: boolean;
	/** Fit C_D. Default: when some shot has a downrange speed or an impact height. */
	dragCoefficient?: boolean;
	/** Fit an elevation bias δθ. Default false. */
	elevationBias?: boolean;
	/** Starting values; a parameter that is not fitted is held at its value here. */
	start?: Partial<Omit<CalibrationParameters, 'pRefPa'>>;
	/**
	 * Cross-validation: 'auto' (default) leaves one session out when the shots carry two or more
	 * session ids, else uses k-fold; a number k forces k-fold; false skips it.
	 */
	crossValidation?: 'auto' | number | false;
}

export interface ParameterReport {
	name: ParameterName;
	label: string;
	unit: string;
	value: number;
	/** Infinity when not determined. */
	standardError: number;
	confidence95: { lower: number; upper: number };
	/** False when the data cannot determine it; `reason` says why in plain words. */
	identifiable: boolean;
	reason: string | null;
	/** Which bound it ended on, if any. */
	atBound: 'lower' | 'upper' | null;
}

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

export interface CrossValidationReport {
	method: 'leave-one-session-out' | 'k-fold';
	folds: number;
	/** Folds whose training fit did not converge or could not predict the held-out shots. */
	failedFolds: number;
	/** RMS of (measured − predicted) for held-out shots, per kind. */
	rmsByKind: PerKind;
}

export interface LauncherFitResult {
	converged: boolean;
	message: string;
	calibration: LauncherCalibration;
	parameters: ParameterReport[];
	/** Correlation matrix in the order of `parameters`. */
	correlation: number[][];
	/** χ² of the whitened residuals, n − p, and s = √(χ²/(n − p)) (≈ 1 when the SDs are right). */
	chiSquare: number;
	dof: number;
	residualScale: number;
	nUsed: { shots: number; observations: number } & Record<ObservationKind, number>;
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
/**
 * A fitted parameter whose 95 % half-width exceeds this fraction of its plausible span counts as
 * not identifiable ("cannot be determined"): the data do not narrow it to a useful range even
 * though J has full rank (e.g. C_D from impacts 2 m from the muzzle).
 */
const UNDETERMINED_SPAN_FRACTION = 0.5;
/** Plausible spans (what "useful range" means above). F's span is the mean driving force. */
const PLAUSIBLE_SPAN: Record<Exclude<ParameterName, 'lossForce'>, number> = {
	efficiency: 1,
	pressureSlope: 1,
	dragCoefficient: 2,
	elevationBias: 10
};
const DEFAULT_DRAG_COEFFICIENT_START = 0.5;
const DEFAULT_EFFICIENCY_START = 0.6;
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
const DEFAULT_FOLDS = 5;
/**
 * LM tolerances for calibrations. A relative χ² change of 1e-8 and a relative step of 1e-7 pin
 * the parameters to well under 1 % of their standard errors (even for 10⁴ shots), while staying
 * far above the flight integrator's noise (~1e-12 relative); tighter only costs flights.
 */
const FIT_FTOL = 1e-8;
const FIT_XTOL = 1e-7;

const LABELS: Record<ParameterName, { label: string; unit: string }> = {
	efficiency: { label: 'efficiency η0', unit: '' },
	pressureSlope: { label: 'pressure slope η1', unit: '' },
	lossForce: { label: 'loss force F', unit: 'N' },
	dragCoefficient: { label: 'drag coefficient C_D', unit: '' },
	elevationBias: { label: 'elevation bias δθ', unit: '°' }
};
const ORDER: ParameterName[] = ['efficiency', 'pressureSlope', 'lossForce', 'dragCoefficient', 'elevationBias'];
const KINDS: ObservationKind[] = ['muzzleSpeed', 'downrangeSpeed', 'impactHeight'];

// ---------------------------------------------------------------------------------------------
// The shared prediction path.

/** A shot's launcher and range, without anything fitted. */
export interface ShotSetup {
	rig: LauncherRig;
	projectile: Projectile;
	session: RangeConditions;
	fillGaugePa: number;
}

interface Observation {
	kind: ObservationKind;
	measured: number;
	/** Distance of the plane it is taken at (0 for the muzzle), m. */
	distanceM: number;
	measurementSd: number;
}

/** Flight-dependent part of a shot's predictions: a function of (v0, C_D, θ) only. */
interface FlightPart {
	/** Predicted value of each observation (v0 itself for a muzzle speed). */
	values: number[];
	/** Per observation: ∂/∂v0, ∂/∂C_D, ∂/∂θ (per degree); set when derivatives were asked for. */
	perSpeed?: number[];
	perDrag?: number[];
	perElevation?: number[];
}

interface ShotModel {
	/** Predicted value of each observation. */
	values: number[];
	muzzleSpeedMps: number;
	efficiency: number;
	/** Set when derivatives were requested. */
	derivatives?: {
		/** ∂v0/∂η, ∂v0/∂F, ∂v0/∂p_g. */
		speedPerEfficiency: number;
		speedPerLoss: number;
		speedPerPressure: number;
		perSpeed: number[];
		perDrag: number[];
		perElevation: number[];
	};
}

/**
 * Recent flight parts of one shot, keyed by (v0, C_D, θ): the LM asks for the Jacobian at a point
 * whose residuals it computed several trials earlier, the reweighting and the cross-validation
 * folds start where the last fit ended, so most flights would otherwise be flown twice.
 * Derivatives are also reused from an entry within DERIVATIVE_REUSE_RELATIVE of the asked point
 * (relative in v0 and C_D, degrees in θ): that changes them by about as much as the
 * forward-difference error they already carry (~1e-4 relative for the C_D step), i.e. standard
 * errors stay accurate to ~1e-4 of themselves, far inside their own sampling uncertainty.
 */
class FlightCache {
	private entries: { v0: number; drag: number; elevation: number; part: FlightPart }[] = [];

	exact(v0: number, drag: number, elevation: number): FlightPart | undefined {
		return this.entries.find((e) => e.v0 === v0 && e.drag === drag && e.elevation === elevation)?.part;
	}

	/** Derivatives computed at a point close enough to (v0, drag, elevation), if any. */
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

function efficiencyAtPressure(p: CalibrationParameters, fillGaugePa: number): number {
	return p.pressureSlope === 0 ? p.efficiency : p.efficiency + (p.pressureSlope * (fillGaugePa - p.pRefPa)) / p.pRefPa;
}

function muzzleInput(setup: ShotSetup, fillGaugePa: number, efficiency: number, lossN: number) {
	return {
		fillGaugePa,
		ambientPa: setup.session.ambientPa,
		reservoirM3: setup.rig.reservoirM3,
		deadM3: setup.rig.deadM3,
		boreDiameterM: setup.rig.boreDiameterM,
		travelM: setup.rig.travelM,
		massKg: setup.projectile.massKg,
		efficiency,
		lossN,
		polytropicIndex: setup.rig.polytropicIndex,
		gasInertia: setup.rig.gasInertia
	};
}

/** Muzzle speed for a setup under calibration parameters, or null if it does not leave the barrel. */
function speedAt(setup: ShotSetup, p: CalibrationParameters, fillGaugePa: number) {
	const efficiency = efficiencyAtPressure(p, fillGaugePa);
	if (!(efficiency > 0 && efficiency <= 1)) return null;
	const result = muzzleSpeed(muzzleInput(setup, fillGaugePa, efficiency, p.lossN));
	return result.ok ? { result, efficiency } : null;
}

function fly(setup: ShotSetup, speedMps: number, dragCoefficient: number, elevationDeg: number, distanceM: number) {
	const s = setup.session;
	return flyToPlane({
		speedMps,
		elevationDeg,
		azimuthDeg: s.azimuthDeg,
		launchHeightM: s.launchHeightM,
		targetDistanceM: distanceM,
		massKg: setup.projectile.massKg,
		diameterM: setup.projectile.diameterM,
		dragCoefficient,
		airDensityKgM3: s.airDensityKgM3,
		wind: s.wind,
		gravityMps2: s.gravityMps2
	});
}

function observable(kind: ObservationKind, f: FlightResult, setup: ShotSetup): number {
	return kind === 'impactHeight' ? f.heightM - setup.session.aimHeightM : f.speedMps;
}

/**
 * Observations predicted from a muzzle speed v0, drag coefficient and elevation, with their
 * forward-difference derivatives when asked. Null when a flight does not reach its plane.
 */
function flightPart(
	setup: ShotSetup,
	observations: Observation[],
	v0: number,
	dragCoefficient: number,
	elevationDeg: number,
	withDerivatives: boolean,
	base: FlightPart | undefined
): FlightPart | null {
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
				f = fly(setup, v0, dragCoefficient, elevationDeg, o.distanceM);
				if (!f.reached) return null;
				flights.set(o.distanceM, f);
			}
			values.push(observable(o.kind, f, setup));
		}
	}
	if (!withDerivatives) return { values };
	const hv = SPEED_STEP_RELATIVE * v0;
	const hc = Math.max(DRAG_STEP_FLOOR, DRAG_STEP_RELATIVE * dragCoefficient);
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
				fly(setup, v0 + hv, dragCoefficient, elevationDeg, o.distanceM),
				fly(setup, v0, dragCoefficient + hc, elevationDeg, o.distanceM),
				fly(setup, v0, dragCoefficient, elevationDeg + ELEVATION_STEP_DEG, o.distanceM)
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
 * needs. Returns null when the model cannot produce them (the projectile stays in the barrel, η
 * leaves (0, 1], or a flight does not reach its plane): the fit treats that as an infeasible trial.
 */
function modelShot(
	setup: ShotSetup,
	observations: Observation[],
	p: CalibrationParameters,
	withDerivatives: boolean,
	cache?: FlightCache
): ShotModel | null {
	try {
		const speed = speedAt(setup, p, setup.fillGaugePa);
		if (!speed) return null;
		const ms = speed.result;
		const efficiency = speed.efficiency;
		const v0 = ms.speedMps;
		const elevation = setup.session.elevationDeg + p.elevationBiasDeg;
		const drag = p.dragCoefficient;
		let part = cache?.exact(v0, drag, elevation);
		if (!part || (withDerivatives && !part.perSpeed)) {
			const near = withDerivatives ? cache?.nearDerivatives(v0, drag, elevation) : undefined;
			const computed = near
				? (part ?? flightPart(setup, observations, v0, drag, elevation, false, undefined))
				: flightPart(setup, observations, v0, drag, elevation, withDerivatives, part);
			if (!computed) return null;
			part = near ? { ...computed, perSpeed: near.perSpeed, perDrag: near.perDrag, perElevation: near.perElevation } : computed;
			cache?.set(v0, drag, elevation, part);
		}
		const model: ShotModel = { values: part.values, muzzleSpeedMps: v0, efficiency };
		if (!withDerivatives) return model;

		// ½ m_eff v² = η(p)·W(p) − W_atm − F·L with W ∝ P0 = p + p_a and, with the gas-inertia
		// option, m_eff = m + P0·V0/(3RT); differentiating in p gives ∂v0/∂p below.
		const absolutePa = setup.fillGaugePa + setup.session.ambientPa;
		const slope = p.pressureSlope / p.pRefPa;
		const gasMassShare = ms.effectiveMassKg - setup.projectile.massKg;
		const energyPerPa = slope * ms.gasWorkJ + (efficiency * ms.gasWorkJ) / absolutePa;
		model.derivatives = {
			speedPerEfficiency: ms.gasWorkJ / (ms.effectiveMassKg * v0),
			speedPerLoss: -setup.rig.travelM / (ms.effectiveMassKg * v0),
			speedPerPressure: (energyPerPa - (0.5 * v0 * v0 * gasMassShare) / absolutePa) / (ms.effectiveMassKg * v0),
			perSpeed: part.perSpeed!,
			perDrag: part.perDrag!,
			perElevation: part.perElevation!
		};
		return model;
	} catch (e) {
		if (e instanceof PhysicsInputError) return null;
		throw e;
	}
}

export interface ShotPrediction {
	ok: true;
	/** η at this fill pressure (η0 plus the slope term). */
	efficiency: number;
	muzzleSpeedMps: number;
	/** At the given downrange chronograph distance, when asked for. */
	downrange: { distanceM: number; speedMps: number } | null;
	/** At the target plane. */
	impact: {
		reached: boolean;
		/** Vertical offset from the aim point, m (+ up). */
		heightM: number;
		heightAboveGroundM: number;
		lateralM: number;
		speedMps: number;
		timeS: number;
		downrangeM: number;
	};
	/** True when the fill pressure lies outside the calibration's pressure range. */
	outsideCalibratedPressures: boolean;
	warnings: string[];
}

export type ShotPredictionResult = ShotPrediction | { ok: false; reason: string };

export interface PredictShotOptions {
	/** Also predict the speed at a downrange chronograph this far from the muzzle, m. */
	downrangeDistanceM?: number;
	/** Fly this muzzle speed instead of the calibrated one (what-if, sensitivities), m/s. */
	muzzleSpeedMps?: number;
}

/**
 * Predicted muzzle speed, downrange speed and impact for a planned shot under a calibration:
 * muzzleSpeed with η(p_g) and F, then flyToPlane with C_D and elevation + δθ. The server, the
 * setup preview, the chance estimate and the fit all predict through these same steps.
 */
export function predictShot(
	calibration: LauncherCalibration,
	setup: ShotSetup,
	options: PredictShotOptions = {}
): ShotPredictionResult {
	const p = calibration.parameters;
	const fill = requireNonNegative(setup.fillGaugePa, 'fillGaugePa');
	const efficiency = efficiencyAtPressure(p, fill);
	if (!(efficiency > 0 && efficiency <= 1)) {
		return {
			ok: false,
			reason: `The calibrated efficiency at ${fill} Pa is ${efficiency.toFixed(4)}, outside (0, 1]: this fill pressure is too far from the calibrated range.`
		};
	}
	let speedMps: number;
	if (options.muzzleSpeedMps !== undefined) {
		speedMps = requirePositive(options.muzzleSpeedMps, 'muzzleSpeedMps');
	} else {
		const ms = muzzleSpeed(muzzleInput(setup, fill, efficiency, p.lossN));
		if (!ms.ok) return { ok: false, reason: ms.reason };
		speedMps = ms.speedMps;
	}
	const elevation = setup.session.elevationDeg + p.elevationBiasDeg;
	const target = fly(setup, speedMps, p.dragCoefficient, elevation, setup.session.targetDistanceM);
	let downrange: ShotPrediction['downrange'] = null;
	const warnings: string[] = [];
	if (options.downrangeDistanceM !== undefined) {
		const d = requirePositive(options.downrangeDistanceM, 'downrangeDistanceM');
		const f = fly(setup, speedMps, p.dragCoefficient, elevation, d);
		if (f.reached) downrange = { distanceM: d, speedMps: f.speedMps };
		else warnings.push(`The projectile comes down at ${f.downrangeM.toFixed(2)} m, before the chronograph at ${d} m.`);
	}
	if (!target.reached)
		warnings.push(`The projectile comes down at ${target.downrangeM.toFixed(2)} m, short of the target plane.`);
	const range = calibration.fillPressureRangePa;
	const outside = fill < range.min || fill > range.max;
	if (outside)
		warnings.push(
			`Fill pressure ${fill} Pa lies outside the calibrated range ${range.min}–${range.max} Pa: the prediction is an extrapolation.`
		);
	return {
		ok: true,
		efficiency,
		muzzleSpeedMps: speedMps,
		downrange,
		impact: {
			reached: target.reached,
			heightM: target.heightM - setup.session.aimHeightM,
			heightAboveGroundM: target.heightM,
			lateralM: target.lateralM,
			speedMps: target.speedMps,
			timeS: target.timeS,
			downrangeM: target.downrangeM
		},
		outsideCalibratedPressures: outside,
		warnings
	};
}

// ---------------------------------------------------------------------------------------------
// The fit.

interface PreparedShot {
	index: number;
	id?: string;
	sessionKey: string;
	setup: ShotSetup;
	observations: Observation[];
	flightCache: FlightCache;
}

function prepareShots(shots: CalibrationShot[], sds: MeasurementSds): PreparedShot[] {
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

interface FitConfig {
	names: ParameterName[];
	/** Values of the parameters that are held (and starting values of the fitted ones). */
	base: CalibrationParameters;
	pressureSd: number;
	lower: number[];
	upper: number[];
}

function withVector(config: FitConfig, x: number[]): CalibrationParameters {
	const p = { ...config.base };
	config.names.forEach((name, j) => {
		if (name === 'efficiency') p.efficiency = x[j];
		else if (name === 'pressureSlope') p.pressureSlope = x[j];
		else if (name === 'lossForce') p.lossN = x[j];
		else if (name === 'dragCoefficient') p.dragCoefficient = x[j];
		else p.elevationBiasDeg = x[j];
	});
	return p;
}

function vectorOf(config: FitConfig, p: CalibrationParameters): number[] {
	return config.names.map((name) =>
		name === 'efficiency'
			? p.efficiency
			: name === 'pressureSlope'
				? p.pressureSlope
				: name === 'lossForce'
					? p.lossN
					: name === 'dragCoefficient'
						? p.dragCoefficient
						: p.elevationBiasDeg
	);
}

/** Per shot: lower Cholesky factor of Σ (row-major, k×k) and the marginal SDs. */
interface ShotWeights {
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

function derivativeColumns(shot: PreparedShot, model: ShotModel, p: CalibrationParameters, names: ParameterName[]) {
	const d = model.derivatives!;
	const relPressure = (shot.setup.fillGaugePa - p.pRefPa) / p.pRefPa;
	return names.map((name) =>
		shot.observations.map((_, k) => {
			switch (name) {
				case 'efficiency':
					return d.perSpeed[k] * d.speedPerEfficiency;
				case 'pressureSlope':
					return d.perSpeed[k] * d.speedPerEfficiency * relPressure;
				case 'lossForce':
					return d.perSpeed[k] * d.speedPerLoss;
				case 'dragCoefficient':
					return d.perDrag[k];
				default:
					return d.perElevation[k];
			}
		})
	);
}

interface CoreFit {
	ls: LeastSquaresResult;
	params: CalibrationParameters;
	models: ShotModel[];
	weights: ShotWeights[];
	passes: number;
	iterations: number;
	failure: string | null;
}

/** Model all shots, with derivatives, at p; the first shot that fails is named. */
function modelAll(shots: PreparedShot[], p: CalibrationParameters): ShotModel[] | { failed: PreparedShot } {
	const out: ShotModel[] = [];
	for (const s of shots) {
		const m = modelShot(s.setup, s.observations, p, true, s.flightCache);
		if (!m) return { failed: s };
		out.push(m);
	}
	return out;
}

function fitCore(shots: PreparedShot[], config: FitConfig, start: CalibrationParameters): CoreFit {
	let params = start;
	let passes = 0;
	let iterations = 0;
	const startModels = modelAll(shots, params);
	if (!Array.isArray(startModels)) {
		const s = startModels.failed;
		throw new PhysicsInputError(
			`shots[${s.index}]`,
			'out-of-range',
			`shot ${s.id ?? s.index} cannot be predicted at the starting parameters (the projectile stays in the barrel or does not reach a measuring plane): check its data or give starting values`
		);
	}
	let models = startModels;
	let weights = shots.map((s, i) => shotWeights(s, models[i], config.pressureSd));
	let ls: LeastSquaresResult | null = null;
	let failure: string | null = null;

	for (; passes < MAX_PASSES; ) {
		passes++;
		const w = weights;
		const evaluate = (x: number[], derivatives: boolean) => {
			const p = withVector(config, x);
			return { p, models: shots.map((s) => modelShot(s.setup, s.observations, p, derivatives, s.flightCache)) };
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
					const start = out.length;
					for (let k = 0; k < s.observations.length; k++)
						out.push(m ? s.observations[k].measured - m.values[k] : NaN);
					whitenInPlace(w[i].chol, out, start);
				});
				return out;
			},
			jacobian: (x) => {
				const { p, models: ms } = evaluate(x, true);
				const rows: number[][] = [];
				shots.forEach((s, i) => {
					const m = ms[i];
					if (!m) {
						for (let k = 0; k < s.observations.length; k++) rows.push(config.names.map(() => NaN));
						return;
					}
					const columns = derivativeColumns(s, m, p, config.names);
					for (const col of columns) {
						for (let k = 0; k < col.length; k++) col[k] = -col[k];
						whitenInPlace(w[i].chol, col);
					}
					for (let k = 0; k < s.observations.length; k++) rows.push(columns.map((col) => col[k]));
				});
				return rows;
			}
		});
		iterations += ls.iterations;
		params = withVector(config, ls.params);
		if (!ls.converged) {
			failure = ls.message;
			break;
		}
		const atSolution = evaluate(ls.params, true).models;
		const failed = atSolution.findIndex((m) => m === null);
		if (failed >= 0) {
			failure = `stopped: shot ${shots[failed].id ?? shots[failed].index} cannot be predicted at the solution`;
			break;
		}
		models = atSolution as ShotModel[];
		const next = shots.map((s, i) => shotWeights(s, models[i], config.pressureSd));
		let change = 0;
		next.forEach((nw, i) => nw.sd.forEach((sd, k) => (change = Math.max(change, Math.abs(sd / w[i].sd[k] - 1)))));
		weights = next;
		if (change <= REWEIGHT_TOLERANCE) break;
	}
	return { ls: ls!, params, models, weights, passes, iterations, failure };
}

function mean(xs: number[]): number {
	return xs.reduce((s, v) => s + v, 0) / xs.length;
}

function rms(xs: number[]): number | null {
	return xs.length === 0 ? null : Math.sqrt(xs.reduce((s, v) => s + v * v, 0) / xs.length);
}

/** A starting η0 from the energy balance solved per shot for its measured muzzle speed. */
function efficiencyStart(shots: PreparedShot[], lossN: number): number {
	const estimates: number[] = [];
	for (const s of shots) {
		const o = s.observations.find((q) => q.kind === 'muzzleSpeed');
		if (!o) continue;
		const r = muzzleSpeed(muzzleInput(s.setup, s.setup.fillGaugePa, 1, lossN));
		if (!r.ok) continue;
		const needed = 0.5 * r.effectiveMassKg * o.measured ** 2 + r.atmosphereWorkJ + r.lossWorkJ;
		estimates.push(needed / r.gasWorkJ);
	}
	if (estimates.length === 0) return DEFAULT_EFFICIENCY_START;
	estimates.sort((a, b) => a - b);
	const median = estimates[Math.floor(estimates.length / 2)];
	return Math.min(1, Math.max(0.01, median));
}

/**
 * A starting C_D from pairs of muzzle and downrange speeds, flat fire v_d = v_m e^(−kx)
 * (reference §5: C_D ≈ (2m/(ρ A Δx)) ln(v1/v2)).
 */
function dragStart(shots: PreparedShot[]): number {
	const estimates: number[] = [];
	for (const s of shots) {
		const m = s.observations.find((o) => o.kind === 'muzzleSpeed');
		const d = s.observations.find((o) => o.kind === 'downrangeSpeed');
		if (!m || !d || !(m.measured > d.measured)) continue;
		const area = (Math.PI * s.setup.projectile.diameterM ** 2) / 4;
		estimates.push(
			((2 * s.setup.projectile.massKg) / (s.setup.session.airDensityKgM3 * area * d.distanceM)) *
				Math.log(m.measured / d.measured)
		);
	}
	if (estimates.length === 0) return DEFAULT_DRAG_COEFFICIENT_START;
	estimates.sort((a, b) => a - b);
	return Math.max(0.01, estimates[Math.floor(estimates.length / 2)]);
}

/**
 * Fit a launcher calibration to shots (physics.md §5). Throws PhysicsInputError on invalid
 * input; a fit that does not converge returns `converged: false` with the reason.
 */
export function fitLauncher(
	shots: CalibrationShot[],
	sds: MeasurementSds,
	options: FitLauncherOptions = {}
): LauncherFitResult {
	if (shots.length === 0) throw new PhysicsInputError('shots', 'out-of-range', 'no shots to fit');
	const prepared = prepareShots(shots, sds);
	const hasFlightData = prepared.some((s) => s.observations.some((o) => o.kind !== 'muzzleSpeed'));
	const hasImpacts = prepared.some((s) => s.observations.some((o) => o.kind === 'impactHeight'));
	const names = ORDER.filter((name) =>
		name === 'efficiency'
			? true
			: name === 'pressureSlope'
				? options.pressureSlope === true
				: name === 'lossForce'
					? options.lossForce === true
					: name === 'dragCoefficient'
						? (options.dragCoefficient ?? hasFlightData)
						: options.elevationBias === true
	);
	const pressures = prepared.map((s) => s.setup.fillGaugePa);
	const pRefPa = mean(pressures);
	if (!(pRefPa > 0)) throw new PhysicsInputError('fillGaugePa', 'not-positive', 'the mean fill pressure must be > 0');
	const given = options.start ?? {};
	const lossStart = requireNonNegative(given.lossN ?? 0, 'start.lossN');
	const base: CalibrationParameters = {
		efficiency: given.efficiency ?? efficiencyStart(prepared, lossStart),
		pressureSlope: requireFinite(given.pressureSlope ?? 0, 'start.pressureSlope'),
		pRefPa,
		lossN: lossStart,
		dragCoefficient: requireNonNegative(given.dragCoefficient ?? dragStart(prepared), 'start.dragCoefficient'),
		elevationBiasDeg: requireFinite(given.elevationBiasDeg ?? 0, 'start.elevationBiasDeg')
	};
	const bounds: Record<ParameterName, [number, number]> = {
		efficiency: [EFFICIENCY_LOWER, 1],
		pressureSlope: [-Infinity, Infinity],
		lossForce: [0, Infinity],
		dragCoefficient: [0, Infinity],
		elevationBias: [-ELEVATION_BIAS_LIMIT_DEG, ELEVATION_BIAS_LIMIT_DEG]
	};
	const config: FitConfig = {
		names,
		base,
		pressureSd: sds.pressurePa,
		lower: names.map((n) => bounds[n][0]),
		upper: names.map((n) => bounds[n][1])
	};
	const nObservations = prepared.reduce((s, p) => s + p.observations.length, 0);
	if (nObservations < names.length)
		throw new PhysicsInputError(
			'shots',
			'out-of-range',
			`${nObservations} measurements cannot determine ${names.length} parameters`
		);

	const core = fitCore(prepared, config, base);
	const { ls, params, models, weights } = core;

	// Per-shot residuals in physical units.
	const shotResiduals: ShotResiduals[] = prepared.map((s, i) => {
		const observations = s.observations.map((o, k) => {
			const predicted = models[i].values[k];
			const residual = o.measured - predicted;
			const sd = weights[i].sd[k];
			const standardized = residual / sd;
			return {
				kind: o.kind,
				measured: o.measured,
				predicted,
				residual,
				sd,
				standardized,
				outlier: Math.abs(standardized) > OUTLIER_THRESHOLD
			};
		});
		return { index: s.index, id: s.id, observations, outlier: observations.some((o) => o.outlier) };
	});
	const byKind = (pick: (o: ObservationResidual) => number) =>
		Object.fromEntries(
			KINDS.map((kind) => [
				kind,
				rms(shotResiduals.flatMap((s) => s.observations.filter((o) => o.kind === kind).map(pick)))
			])
		) as PerKind;
	const counts = Object.fromEntries(
		KINDS.map((kind) => [kind, prepared.reduce((n, s) => n + s.observations.filter((o) => o.kind === kind).length, 0)])
	) as Record<ObservationKind, number>;

	// Parameter reports, with plain reasons for what the data cannot determine.
	const drivingForce = mean(
		models.map((m, i) => {
			const r = muzzleSpeed(muzzleInput(prepared[i].setup, prepared[i].setup.fillGaugePa, m.efficiency, 0));
			return r.ok ? (m.efficiency * r.gasWorkJ) / prepared[i].setup.rig.travelM : 0;
		})
	);
	const distinctPressures = new Set(pressures).size;
	const reports: ParameterReport[] = names.map((name, j) => {
		const span = name === 'lossForce' ? drivingForce : PLAUSIBLE_SPAN[name];
		const se = ls.standardErrors[j];
		const halfWidth = Number.isFinite(se) ? ls.tQuantile975 * se : Infinity;
		let reason: string | null = null;
		if (name === 'dragCoefficient' && !hasFlightData)
			reason = 'drag coefficient cannot be determined: no downrange speeds or impact heights at distance';
		else if (name === 'elevationBias' && !hasImpacts)
			reason = 'elevation bias cannot be determined: no impact heights';
		else if (name === 'pressureSlope' && distinctPressures < 2)
			reason = 'pressure slope cannot be determined: all shots were filled to the same pressure';
		else if (name === 'lossForce' && distinctPressures < 2)
			reason = 'loss force cannot be told apart from the efficiency: all shots were filled to the same pressure';
		else if (!ls.identifiable[j])
			reason = `${LABELS[name].label} cannot be determined: the data do not separate it from the other parameters (rank ${ls.rank} of ${names.length})`;
		else if (!(halfWidth <= UNDETERMINED_SPAN_FRACTION * span))
			reason =
				`${LABELS[name].label} cannot be determined from these shots: its 95 % interval is ±${halfWidth.toPrecision(3)}${LABELS[name].unit ? ' ' + LABELS[name].unit : ''}` +
				(name === 'dragCoefficient'
					? ' (impacts or speeds this close to the muzzle carry almost no drag information; add downrange speeds or impacts farther out)'
					: name === 'lossForce' || name === 'pressureSlope'
						? ' (widen the range of fill pressures)'
						: '');
		const identifiable = reason === null;
		return {
			name,
			label: LABELS[name].label,
			unit: LABELS[name].unit,
			value: ls.params[j],
			standardError: identifiable ? se : Infinity,
			confidence95: identifiable ? ls.confidence95[j] : { lower: -Infinity, upper: Infinity },
			identifiable,
			reason,
			atBound: ls.atBound[j]
		};
	});
	const identifiable = reports.map((r) => r.identifiable);
	const covariance = ls.covariance.map((row, a) =>
		row.map((c, b) => (identifiable[a] && identifiable[b] ? c : a === b ? Infinity : NaN))
	);
	const correlation = ls.correlation.map((row, a) =>
		row.map((c, b) => (identifiable[a] && identifiable[b] ? c : NaN))
	);

	const calibration: LauncherCalibration = {
		parameters: params,
		fitted: names,
		identifiable,
		covariance,
		fillPressureRangePa: {
			min: pressures.reduce((a, b) => Math.min(a, b)),
			max: pressures.reduce((a, b) => Math.max(a, b))
		}
	};

	const converged = core.failure === null && ls.converged;
	const messages = [converged ? describeLeastSquaresStatus(ls.status) : (core.failure ?? ls.message)];
	for (const r of reports) {
		if (r.reason) messages.push(r.reason);
		else if (r.atBound)
			messages.push(`${r.label} ended on its ${r.atBound} bound (${r.value}): its interval assumes the bound is not active`);
	}

	let crossValidation: CrossValidationReport | null = null;
	if (converged && options.crossValidation !== false)
		crossValidation = crossValidate(prepared, config, params, options.crossValidation ?? 'auto');

	const outliers = shotResiduals.flatMap((s) =>
		s.observations
			.filter((o) => o.outlier)
			.map((o) => ({ shotIndex: s.index, id: s.id, kind: o.kind, standardized: o.standardized }))
	);
	return {
		converged,
		message: messages.join('; '),
		calibration,
		parameters: reports,
		correlation,
		chiSquare: ls.rss,
		dof: ls.dof,
		residualScale: ls.residualSd,
		nUsed: { shots: prepared.length, observations: nObservations, ...counts },
		rmsByKind: byKind((o) => o.residual),
		noiseFloorByKind: byKind((o) => o.sd),
		crossValidation,
		shots: shotResiduals,
		outliers,
		passes: core.passes,
		iterations: core.iterations
	};
}

/**
 * Held-out prediction error: refit without each fold (leave one session out, or k-fold by shot
 * order i mod k) from the full fit's parameters, predict the held-out shots, and pool the
 * squared errors per kind. p_ref stays that of the full fit (η0 + η1(p − p_ref)/p_ref spans the
 * same lines for any p_ref, so the predictions do not depend on it).
 */
function crossValidate(
	shots: PreparedShot[],
	config: FitConfig,
	full: CalibrationParameters,
	mode: 'auto' | number
): CrossValidationReport | null {
	const sessions = [...new Set(shots.map((s) => s.sessionKey))];
	const bySession = mode === 'auto' && sessions.length >= 2;
	const k = bySession ? sessions.length : Math.min(typeof mode === 'number' ? mode : DEFAULT_FOLDS, shots.length);
	if (k < 2) return null;
	const foldOf = (s: PreparedShot, i: number) => (bySession ? sessions.indexOf(s.sessionKey) : i % k);
	const errors: Record<ObservationKind, number[]> = { muzzleSpeed: [], downrangeSpeed: [], impactHeight: [] };
	let failedFolds = 0;
	for (let fold = 0; fold < k; fold++) {
		const train = shots.filter((s, i) => foldOf(s, i) !== fold);
		const test = shots.filter((s, i) => foldOf(s, i) === fold);
		const nTrain = train.reduce((n, s) => n + s.observations.length, 0);
		if (test.length === 0) continue;
		if (nTrain <= config.names.length) {
			failedFolds++;
			continue;
		}
		let fit: CoreFit;
		try {
			fit = fitCore(train, { ...config, base: full }, full);
		} catch (e) {
			if (e instanceof PhysicsInputError) {
				failedFolds++;
				continue;
			}
			throw e;
		}
		if (fit.failure !== null) {
			failedFolds++;
			continue;
		}
		const predictions = test.map((s) => modelShot(s.setup, s.observations, fit.params, false, s.flightCache));
		if (predictions.some((m) => m === null)) {
			failedFolds++;
			continue;
		}
		test.forEach((s, i) =>
			s.observations.forEach((o, q) => errors[o.kind].push(o.measured - predictions[i]!.values[q]))
		);
	}
	return {
		method: bySession ? 'leave-one-session-out' : 'k-fold',
		folds: k,
		failedFolds,
		rmsByKind: { muzzleSpeed: rms(errors.muzzleSpeed), downrangeSpeed: rms(errors.downrangeSpeed), impactHeight: rms(errors.impactHeight) }
	};
}
