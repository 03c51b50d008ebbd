// The launcher models a calibration fits and predicts with (shared/design/physics.md §1, §3, §5):
// what is fitted (the parameters), and the one prediction path the fit, the server, the setup
// solver and the Monte Carlo all take — muzzle speed from the fill pressure under the chosen
// internal-ballistics family, then the flight under the chosen drag law.
//
// Internal ballistics, two families:
// - gas work (closed form): ½ m v² = η(p_g)·W_gas − W_atm − E, η(p_g) = η0 + η1 (p_g − p_ref)/p_ref,
//   E a free energy term in J (either sign: positive is friction-like loss, negative means the
//   simple expansion under-states the work at low pressure). muzzleSpeed (../internal.ts) with
//   lossN = E/L.
// - valve flow (time-resolved, Rohrbach, Buresh & Madsen, Am. J. Phys. 80 (2012) 24): effective
//   valve area C·A_v, opening time τ, friction F; ./valve-flow.ts.
// Flight, two drag laws: a constant C_D, or a factor on the Morrison sphere correlation C_D(Re)
// with μ from Sutherland's law (../drag.ts; reference sheet §4).

import { requireNonNegative, requirePositive } from '../errors';
import { flyToPlane, type FlightInput, type FlightResult } from '../flight/driver';
import { muzzleSpeed, type GasInertia } from '../internal';
import { sutherlandViscosity } from '../drag';
import { valveFlowMuzzleSpeed } from './valve-flow';

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
	/**
	 * Air temperature, °C: the gas's start temperature in the valve-flow family and the air's
	 * viscosity for the sphere drag law. Default DEFAULT_AIR_TEMPERATURE_C.
	 */
	temperatureC?: number;
	wind?: { xMps: number; zMps: number };
	gravityMps2?: number;
}

/** ISO 2533 sea-level temperature, °C: used when a range gives none. */
export const DEFAULT_AIR_TEMPERATURE_C = 15;
const KELVIN = 273.15;

export { DRAG_LAWS, LAUNCHER_FAMILIES, type DragLaw, type LauncherFamily } from './families';
import type { DragLaw, LauncherFamily } from './families';

/** Which model a calibration is: its family and its drag law. */
export interface LauncherModel {
	family: LauncherFamily;
	drag: DragLaw;
}

export const DEFAULT_MODEL: LauncherModel = { family: 'gas-work', drag: 'constant' };

export type ParameterName =
	| 'efficiency'
	| 'pressureSlope'
	| 'energyOffset'
	| 'valveArea'
	| 'openingTime'
	| 'friction'
	| 'dragCoefficient'
	| 'elevationBias';
export type ObservationKind = 'muzzleSpeed' | 'downrangeSpeed' | 'impactHeight';
export const OBSERVATION_KINDS: readonly ObservationKind[] = ['muzzleSpeed', 'downrangeSpeed', 'impactHeight'];

/** Everything a prediction needs; a parameter that was not fitted holds its given value. */
export interface CalibrationParameters {
	/** η0 (gas work). */
	efficiency: number;
	/** η1, dimensionless (0 when not fitted). */
	pressureSlope: number;
	/** p_ref of the pressure slope: mean fill gauge pressure of the fitted shots, Pa. */
	pRefPa: number;
	/** E, J (gas work; either sign). */
	energyOffsetJ: number;
	/** C·A_v, m² (valve flow). */
	valveAreaM2: number;
	/** τ, s (valve flow). */
	openingTimeS: number;
	/** F, N (valve flow). */
	frictionN: number;
	/** C_D for the constant law; the factor on the sphere correlation for the sphere law. */
	dragCoefficient: number;
	/** δθ, degrees, added to the set elevation. */
	elevationBiasDeg: number;
}

/** Where each fittable parameter lives in CalibrationParameters. */
export const PARAMETER_FIELD: Record<ParameterName, Exclude<keyof CalibrationParameters, 'pRefPa'>> = {
	efficiency: 'efficiency',
	pressureSlope: 'pressureSlope',
	energyOffset: 'energyOffsetJ',
	valveArea: 'valveAreaM2',
	openingTime: 'openingTimeS',
	friction: 'frictionN',
	dragCoefficient: 'dragCoefficient',
	elevationBias: 'elevationBiasDeg'
};

/** The parameters of each family's muzzle speed (the rest are flight parameters). */
export const FAMILY_PARAMETERS: Record<LauncherFamily, readonly ParameterName[]> = {
	'gas-work': ['efficiency', 'pressureSlope', 'energyOffset'],
	'valve-flow': ['valveArea', 'openingTime', 'friction']
};

/** Labels and units for reports and pages (η1 is dimensionless: a fraction per fraction of p_ref). */
export const PARAMETER_LABELS: Record<ParameterName, { label: string; unit: string }> = {
	efficiency: { label: 'efficiency η0', unit: '' },
	pressureSlope: { label: 'pressure slope η1', unit: '' },
	energyOffset: { label: 'energy term E', unit: 'J' },
	valveArea: { label: 'valve area C·A_v', unit: 'm²' },
	openingTime: { label: 'valve opening time τ', unit: 's' },
	friction: { label: 'friction F', unit: 'N' },
	dragCoefficient: { label: 'drag coefficient C_D', unit: '' },
	elevationBias: { label: 'elevation bias δθ', unit: '°' }
};

/** Label of the drag parameter under a law. */
export function dragLabel(law: DragLaw): string {
	return law === 'sphere' ? 'drag factor on the sphere correlation' : 'drag coefficient C_D';
}

/** The parameters with one of them replaced (for finite differences and sampling). */
export function withParameter(p: CalibrationParameters, name: ParameterName, value: number): CalibrationParameters {
	return { ...p, [PARAMETER_FIELD[name]]: value };
}

export function parameterValue(p: CalibrationParameters, name: ParameterName): number {
	return p[PARAMETER_FIELD[name]];
}

/** Neutral values of every parameter: a full set that a partial one is laid over. */
export function neutralParameters(pRefPa: number): CalibrationParameters {
	return {
		efficiency: 0.6,
		pressureSlope: 0,
		pRefPa,
		energyOffsetJ: 0,
		valveAreaM2: 1e-4,
		openingTimeS: 0.01,
		frictionN: 0,
		dragCoefficient: 0.5,
		elevationBiasDeg: 0
	};
}

/** A stored calibration: model, values, which of them were fitted, and their covariance. */
export interface LauncherCalibration {
	/** Default: gas work with a constant C_D. */
	model?: LauncherModel;
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

/** A shot's launcher and range, without anything fitted. */
export interface ShotSetup {
	rig: LauncherRig;
	projectile: Projectile;
	session: RangeConditions;
	fillGaugePa: number;
}

export function temperatureKOf(session: RangeConditions): number {
	return (session.temperatureC ?? DEFAULT_AIR_TEMPERATURE_C) + KELVIN;
}

// ---------------------------------------------------------------------------------------------
// Muzzle speed.

/** η at a fill pressure (gas work). */
export function efficiencyAtPressure(p: CalibrationParameters, fillGaugePa: number): number {
	return p.pressureSlope === 0 ? p.efficiency : p.efficiency + (p.pressureSlope * (fillGaugePa - p.pRefPa)) / p.pRefPa;
}

export interface MuzzleOutcome {
	speedMps: number;
	/** η at the fill pressure (gas work), or null (valve flow). */
	efficiency: number | null;
}

export type MuzzleResult = ({ ok: true } & MuzzleOutcome) | { ok: false; reason: string };

function gasWorkInput(setup: ShotSetup, fillGaugePa: number, efficiency: number, energyOffsetJ: number) {
	return {
		fillGaugePa,
		ambientPa: setup.session.ambientPa,
		reservoirM3: setup.rig.reservoirM3,
		deadM3: setup.rig.deadM3,
		boreDiameterM: setup.rig.boreDiameterM,
		travelM: setup.rig.travelM,
		massKg: setup.projectile.massKg,
		efficiency,
		lossN: energyOffsetJ / setup.rig.travelM,
		polytropicIndex: setup.rig.polytropicIndex,
		gasInertia: setup.rig.gasInertia
	};
}

function valveFlowInput(setup: ShotSetup, fillGaugePa: number, p: CalibrationParameters) {
	return {
		fillGaugePa,
		ambientPa: setup.session.ambientPa,
		temperatureK: temperatureKOf(setup.session),
		reservoirM3: setup.rig.reservoirM3,
		deadM3: setup.rig.deadM3,
		boreDiameterM: setup.rig.boreDiameterM,
		travelM: setup.rig.travelM,
		massKg: setup.projectile.massKg,
		valveAreaM2: p.valveAreaM2,
		openingTimeS: p.openingTimeS,
		frictionN: p.frictionN,
		polytropicIndex: setup.rig.polytropicIndex
	};
}

/** The gas-work energy balance with all of the gas work (η = 1, E = 0): W_gas, W_atm, m_eff. */
export function idealGasWork(setup: ShotSetup) {
	return muzzleSpeed(gasWorkInput(setup, setup.fillGaugePa, 1, 0));
}

/**
 * Muzzle speed of a setup at a fill pressure under a model and parameters; a typed failure when
 * the projectile stays in the barrel or the efficiency leaves (0, 1]. Invalid input throws
 * PhysicsInputError.
 */
export function calibratedMuzzleSpeed(
	model: LauncherModel,
	p: CalibrationParameters,
	setup: ShotSetup,
	fillGaugePa: number
): MuzzleResult {
	if (model.family === 'valve-flow') {
		if (!(p.valveAreaM2 > 0) || !(p.openingTimeS > 0))
			return { ok: false, reason: 'The valve area and opening time must be positive.' };
		const r = valveFlowMuzzleSpeed(valveFlowInput(setup, fillGaugePa, p), VALVE_FLOW_TOLERANCES);
		return r.ok ? { ok: true, speedMps: r.speedMps, efficiency: null } : { ok: false, reason: r.reason };
	}
	const efficiency = efficiencyAtPressure(p, fillGaugePa);
	if (!(efficiency > 0 && efficiency <= 1))
		return {
			ok: false,
			reason: `The calibrated efficiency at ${fillGaugePa} Pa is ${efficiency.toFixed(4)}, outside (0, 1]: this fill pressure is too far from the calibrated range.`
		};
	const r = muzzleSpeed(gasWorkInput(setup, fillGaugePa, efficiency, p.energyOffsetJ));
	return r.ok ? { ok: true, speedMps: r.speedMps, efficiency } : { ok: false, reason: r.reason };
}

/**
 * Integration tolerances of the valve-flow ODE inside fits and predictions: 1e-8 keeps the exit
 * speed within ~1e-8 relative of a 1e-10 integration and its forward-difference derivatives
 * (steps of 1e-5 relative) unchanged to six digits, at half the cost (about 90 µs a shot on this
 * project's machine, measured with the valve-flow spec's rig).
 */
const VALVE_FLOW_TOLERANCES = { relativeTolerance: 1e-8, absoluteTolerance: 1e-8 };
/** Relative forward-difference steps for the valve-flow parameters and the fill pressure. */
const VALVE_STEP_RELATIVE = 1e-5;
const FRICTION_STEP_N = 1e-4;
const PRESSURE_STEP_RELATIVE = 1e-5;
const PRESSURE_STEP_FLOOR_PA = 1;

export interface MuzzleDerivatives {
	/** ∂v0/∂(parameter) for the family's parameters. */
	perParameter: Partial<Record<ParameterName, number>>;
	/** ∂v0/∂p_g, m/s per Pa. */
	perPressure: number;
}

/**
 * The muzzle speed and its derivatives in the family's parameters and the fill pressure:
 * analytic for gas work, forward differences of the ODE for valve flow. Null when the speed
 * (or a shifted one) cannot be computed.
 */
export function muzzleWithDerivatives(
	model: LauncherModel,
	p: CalibrationParameters,
	setup: ShotSetup,
	/** Valve flow: the speed at (parameters, fill pressure), e.g. from a shared curve; default the ODE. */
	speedOf?: (q: CalibrationParameters, fillGaugePa: number) => number | null
): (MuzzleOutcome & MuzzleDerivatives) | null {
	const fill = setup.fillGaugePa;
	if (model.family === 'gas-work') {
		const efficiency = efficiencyAtPressure(p, fill);
		if (!(efficiency > 0 && efficiency <= 1)) return null;
		const ms = muzzleSpeed(gasWorkInput(setup, fill, efficiency, p.energyOffsetJ));
		if (!ms.ok) return null;
		const v0 = ms.speedMps;
		const mv = ms.effectiveMassKg * v0;
		// ½ m_eff v² = η(p)·W(p) − W_atm − E with W ∝ P0 = p + p_a and, with the gas-inertia option,
		// m_eff = m + P0·V0/(3RT); differentiating in p gives ∂v0/∂p below.
		const absolutePa = fill + setup.session.ambientPa;
		const slope = p.pressureSlope / p.pRefPa;
		const gasMassShare = ms.effectiveMassKg - setup.projectile.massKg;
		const energyPerPa = slope * ms.gasWorkJ + (efficiency * ms.gasWorkJ) / absolutePa;
		const perEfficiency = ms.gasWorkJ / mv;
		return {
			speedMps: v0,
			efficiency,
			perParameter: {
				efficiency: perEfficiency,
				pressureSlope: (perEfficiency * (fill - p.pRefPa)) / p.pRefPa,
				energyOffset: -1 / mv
			},
			perPressure: (energyPerPa - (0.5 * v0 * v0 * gasMassShare) / absolutePa) / mv
		};
	}
	const speed =
		speedOf ??
		((q: CalibrationParameters, pressure: number) => {
			const r = calibratedMuzzleSpeed(model, q, setup, pressure);
			return r.ok ? r.speedMps : null;
		});
	const v0 = speed(p, fill);
	if (v0 === null) return null;
	const hArea = VALVE_STEP_RELATIVE * p.valveAreaM2;
	const hTime = VALVE_STEP_RELATIVE * p.openingTimeS;
	const hPressure = Math.max(PRESSURE_STEP_FLOOR_PA, PRESSURE_STEP_RELATIVE * (fill + setup.session.ambientPa));
	const shifted = [
		speed({ ...p, valveAreaM2: p.valveAreaM2 + hArea }, fill),
		speed({ ...p, openingTimeS: p.openingTimeS + hTime }, fill),
		speed({ ...p, frictionN: p.frictionN + FRICTION_STEP_N }, fill),
		speed(p, fill + hPressure)
	];
	if (shifted.some((v) => v === null)) return null;
	const [va, vt, vf, vp] = shifted as number[];
	return {
		speedMps: v0,
		efficiency: null,
		perParameter: {
			valveArea: (va - v0) / hArea,
			openingTime: (vt - v0) / hTime,
			friction: (vf - v0) / FRICTION_STEP_N
		},
		perPressure: (vp - v0) / hPressure
	};
}

// ---------------------------------------------------------------------------------------------
// Flight.

/** Fly a setup's projectile to a plane under a drag law. */
export function flyUnder(
	law: DragLaw,
	setup: ShotSetup,
	speedMps: number,
	dragCoefficient: number,
	elevationDeg: number,
	distanceM: number
): FlightResult {
	const s = setup.session;
	const input: FlightInput = {
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
	};
	if (law === 'sphere') input.dragLaw = { kind: 'sphere', dynamicViscosityPaS: sutherlandViscosity(temperatureKOf(s)) };
	return flyToPlane(input);
}

// ---------------------------------------------------------------------------------------------
// Predicting a planned shot.

export interface ShotPrediction {
	ok: true;
	/** η at this fill pressure (gas work), null for valve flow. */
	efficiency: number | null;
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

export function modelOf(calibration: LauncherCalibration): LauncherModel {
	return calibration.model ?? DEFAULT_MODEL;
}

/**
 * Predicted muzzle speed, downrange speed and impact for a planned shot under a calibration: the
 * family's muzzle speed at the fill pressure, then the flight under the drag law with elevation
 * + δθ. The server, the setup solver, the chance estimate and the fit all predict through these
 * same steps.
 */
export function predictShot(
	calibration: LauncherCalibration,
	setup: ShotSetup,
	options: PredictShotOptions = {}
): ShotPredictionResult {
	const p = calibration.parameters;
	const model = modelOf(calibration);
	const fill = requireNonNegative(setup.fillGaugePa, 'fillGaugePa');
	let speedMps: number;
	let efficiency: number | null = model.family === 'gas-work' ? efficiencyAtPressure(p, fill) : null;
	if (options.muzzleSpeedMps !== undefined) {
		speedMps = requirePositive(options.muzzleSpeedMps, 'muzzleSpeedMps');
	} else {
		const ms = calibratedMuzzleSpeed(model, p, setup, fill);
		if (!ms.ok) return { ok: false, reason: ms.reason };
		speedMps = ms.speedMps;
		efficiency = ms.efficiency;
	}
	const elevation = setup.session.elevationDeg + p.elevationBiasDeg;
	const target = flyUnder(model.drag, setup, speedMps, p.dragCoefficient, elevation, setup.session.targetDistanceM);
	let downrange: ShotPrediction['downrange'] = null;
	const warnings: string[] = [];
	if (options.downrangeDistanceM !== undefined) {
		const d = requirePositive(options.downrangeDistanceM, 'downrangeDistanceM');
		const f = flyUnder(model.drag, setup, speedMps, p.dragCoefficient, elevation, d);
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
