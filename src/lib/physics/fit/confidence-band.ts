// Confidence band of a calibrated model curve (shared/design/physics.md §5, issue 8): how far the
// predicted muzzle speed at a fill pressure may move because the fitted parameters are uncertain.
//
// Delta method: for a smooth function f of the estimate θ̂ with covariance Σ,
//   Var f(θ̂) ≈ gᵀ Σ g,  g = ∂f/∂θ at θ̂
// (first-order propagation of the linearised sampling distribution; Bates & Watts, Nonlinear
// Regression Analysis and Its Applications, 1988, §2.3, and Seber & Wild, Nonlinear Regression,
// 1989, §5.1, from memory). The band at each point is f ± t(0.975; n − p)·SE, the same Student-t
// quantile as the parameters' own 95 % intervals. The gradient is taken numerically by central
// differences, so the band follows the model exactly as predictShot computes it (either family), without a second hand-derived formula that could drift from it.
import {
	DEFAULT_MODEL,
	calibratedMuzzleSpeed,
	modelOf,
	parameterValue,
	withParameter,
	type CalibrationParameters,
	type LauncherCalibration,
	type LauncherModel,
	type LauncherRig,
	type ParameterName,
	type Projectile,
	type ShotSetup
} from '../launcher/model';

/**
 * Central-difference step per parameter as a fraction of its standard error. The band only needs
 * the slope over the scale the parameter is uncertain on; a thousandth of an SE keeps the
 * truncation error (∝ h²) negligible while staying far above rounding (f is smooth to ~1e-15).
 */
const STEP_PER_STANDARD_ERROR = 1e-3;
/** Step for a parameter whose SE is zero or tiny: relative to the value, with an absolute floor. */
const STEP_RELATIVE_FALLBACK = 1e-6;
const STEP_ABSOLUTE_FLOOR = 1e-9;

export interface DeltaMethodResult {
	value: number;
	/** √(gᵀ Σ g) over the parameters that entered; 0 when none did. */
	standardError: number;
	/** ∂f/∂θ_j per parameter (0 for the ones left out). */
	gradient: number[];
}

const finite = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v);

/**
 * f(θ̂) and its standard error by the delta method. `covariance` may carry null or non-finite
 * entries (a parameter the data did not determine, as stored calibrations keep them): such a
 * parameter is left out of the propagation and listed in `omitted`. Returns null when f cannot be
 * evaluated at θ̂ or at a step (e.g. the projectile stays in the barrel).
 */
export function deltaMethod(
	f: (theta: number[]) => number | null,
	theta: readonly number[],
	covariance: readonly (readonly (number | null)[])[]
): (DeltaMethodResult & { omitted: number[] }) | null {
	const value = f([...theta]);
	if (value === null || !Number.isFinite(value)) return null;
	const used = theta.map((_, j) => finite(covariance[j]?.[j]) && (covariance[j][j] as number) >= 0);
	const gradient = theta.map(() => 0);
	for (let j = 0; j < theta.length; j++) {
		if (!used[j]) continue;
		const se = Math.sqrt(covariance[j][j] as number);
		const h = se > 0 ? STEP_PER_STANDARD_ERROR * se : Math.max(STEP_RELATIVE_FALLBACK * Math.abs(theta[j]), STEP_ABSOLUTE_FLOOR);
		const up = [...theta];
		const down = [...theta];
		up[j] += h;
		down[j] -= h;
		const fUp = f(up);
		const fDown = f(down);
		if (fUp === null || fDown === null || !Number.isFinite(fUp) || !Number.isFinite(fDown)) return null;
		gradient[j] = (fUp - fDown) / (2 * h);
	}
	let variance = 0;
	for (let a = 0; a < theta.length; a++) {
		if (!used[a]) continue;
		for (let b = 0; b < theta.length; b++) {
			if (!used[b]) continue;
			const c = covariance[a][b];
			if (finite(c)) variance += gradient[a] * c * gradient[b];
		}
	}
	return {
		value,
		// A covariance that is not quite positive semidefinite (rounding) could give −0; clamp.
		standardError: Math.sqrt(Math.max(0, variance)),
		gradient,
		omitted: theta.flatMap((_, j) => (used[j] ? [] : [j]))
	};
}

/** The launcher a curve is drawn for: one rig, one projectile, one ambient pressure. */
export interface CurveLauncher {
	rig: LauncherRig;
	projectile: Projectile;
	/** Barometric pressure the gauge reads against, Pa. */
	ambientPa: number;
	/** Air temperature, °C (the valve-flow family's gas temperature). */
	temperatureC?: number;
}

/** Muzzle speed under calibration parameters, as predictShot computes it; null if it stays in. */
export function modelMuzzleSpeed(
	p: CalibrationParameters,
	launcher: CurveLauncher,
	fillGaugePa: number,
	model: LauncherModel = DEFAULT_MODEL
): number | null {
	const r = calibratedMuzzleSpeed(model, p, curveSetup(launcher, fillGaugePa), fillGaugePa);
	return r.ok ? r.speedMps : null;
}

/** A setup for the muzzle speed alone (no flight: the range fields are not read). */
function curveSetup(launcher: CurveLauncher, fillGaugePa: number): ShotSetup {
	return {
		rig: launcher.rig,
		projectile: launcher.projectile,
		fillGaugePa,
		session: {
			targetDistanceM: 1,
			elevationDeg: 0,
			launchHeightM: 0,
			aimHeightM: 0,
			airDensityKgM3: 1.2,
			ambientPa: launcher.ambientPa,
			temperatureC: launcher.temperatureC
		}
	};
}

export interface BandPoint {
	fillGaugePa: number;
	speedMps: number;
	standardError: number;
	lower: number;
	upper: number;
}

export interface MuzzleSpeedBand {
	points: BandPoint[];
	/** Fitted parameters whose variance was not available and so add nothing to the band. */
	omitted: ParameterName[];
}

/**
 * The model's muzzle speed against fill pressure with its confidence band, f ± quantile·SE by the
 * delta method over the calibration's fitted parameters (those that do not act on the muzzle
 * speed — C_D, δθ — have a zero gradient and add nothing). Pressures at which the model predicts
 * no shot are left out.
 */
export function muzzleSpeedBand(
	calibration: LauncherCalibration,
	launcher: CurveLauncher,
	pressuresPa: readonly number[],
	quantile: number
): MuzzleSpeedBand {
	const names = calibration.fitted;
	const theta = names.map((n) => parameterValue(calibration.parameters, n));
	const omitted = new Set<ParameterName>();
	const points: BandPoint[] = [];
	for (const fillGaugePa of pressuresPa) {
		const f = (x: number[]) => {
			let p = calibration.parameters;
			names.forEach((n, j) => (p = withParameter(p, n, x[j])));
			return modelMuzzleSpeed(p, launcher, fillGaugePa, modelOf(calibration));
		};
		const r = deltaMethod(f, theta, calibration.covariance);
		if (!r) continue;
		r.omitted.forEach((j) => omitted.add(names[j]));
		const half = quantile * r.standardError;
		points.push({ fillGaugePa, speedMps: r.value, standardError: r.standardError, lower: r.value - half, upper: r.value + half });
	}
	return { points, omitted: [...omitted] };
}

/** `count` evenly spaced values from `from` to `to`, both included. */
export function evenlySpaced(from: number, to: number, count: number): number[] {
	if (count < 2 || from === to) return [from];
	return Array.from({ length: count }, (_, i) => from + ((to - from) * i) / (count - 1));
}
