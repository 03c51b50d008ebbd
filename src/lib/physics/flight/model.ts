// The equations of motion of the flight (shared/design/physics.md §3; reference sheet §5):
// a point mass with quadratic drag on its velocity relative to the air, in constant gravity.
//
//   dr/dt = v
//   dv/dt = −k |v − w| (v − w) − g ŷ,   k = ρ C_D A / (2m),  A = π d²/4   [k in 1/m]
//
// Frame: x downrange, y up from the ground, z to the right looking downrange; wind w = (w_x, 0, w_z),
// w_x > 0 a tail wind. The drag law is the drag equation F_D = ½ ρ C_D A |v_rel|² along −v_rel
// (reference sheet §4).
//
// Two drag laws, one class each so the constant law keeps its short inner loop:
//   FlightModel            a constant C_D, i.e. a constant k;
//   SphereDragFlightModel  C_D = factor · C_D,sphere(Re), Re = ρ |v − w| d / μ, C_D,sphere the
//                          Morrison correlation (../drag; reference sheet §4).

import { sphereDragTimesReynolds } from '../drag';

/** Standard gravity g_n, m/s² (3rd CGPM 1901; ISO 2533). */
export const STANDARD_GRAVITY_MPS2 = 9.80665;

/** State layout: position x, y, z (m) then velocity vx, vy, vz (m/s). */
export const STATE_SIZE = 6;
export const X = 0;
export const Y = 1;
export const Z = 2;
export const VX = 3;
export const VY = 4;
export const VZ = 5;

/** An autonomous first-order system y' = f(y), written into `out` from `outOffset` on. */
export interface OdeSystem {
	readonly dimension: number;
	derivative(y: Float64Array, out: Float64Array, outOffset: number): void;
}

/** The equations of motion of a flight: the driver also needs the tail wind to detect a stall. */
export interface FlightSystem extends OdeSystem {
	/** Tail-wind component w_x, m/s. */
	readonly windX: number;
}

/** Drag factor k = ρ C_D (π d²/4) / (2m), 1/m. */
export function dragFactor(airDensityKgM3: number, dragCoefficient: number, diameterM: number, massKg: number): number {
	return (airDensityKgM3 * dragCoefficient * Math.PI * diameterM * diameterM) / (8 * massKg);
}

export class FlightModel implements FlightSystem {
	readonly dimension = STATE_SIZE;

	constructor(
		/** Drag factor k, 1/m. */
		readonly k: number,
		/** Tail-wind component w_x, m/s. */
		readonly windX: number,
		/** Cross-wind component w_z, m/s. */
		readonly windZ: number,
		/** Gravity, m/s². */
		readonly gravity: number
	) {}

	derivative(y: Float64Array, out: Float64Array, o: number): void {
		const vx = y[VX];
		const vy = y[VY];
		const vz = y[VZ];
		const rx = vx - this.windX;
		const rz = vz - this.windZ;
		const kv = this.k * Math.sqrt(rx * rx + vy * vy + rz * rz);
		out[o + X] = vx;
		out[o + Y] = vy;
		out[o + Z] = vz;
		out[o + VX] = -kv * rx;
		out[o + VY] = -kv * vy - this.gravity;
		out[o + VZ] = -kv * rz;
	}
}

/**
 * Coefficient c of the Stokes-form drag of a sphere, 1/s: the drag deceleration is
 * c · (C_D Re) · (v − w), since ½ ρ C_D A |v_rel|² / m = (π d μ /(8m)) · (C_D Re) · |v_rel|
 * with Re = ρ |v_rel| d / μ and A = π d²/4. `factor` multiplies the correlation's C_D.
 */
export function stokesDragRate(factor: number, dynamicViscosityPaS: number, diameterM: number, massKg: number): number {
	return (factor * Math.PI * diameterM * dynamicViscosityPaS) / (8 * massKg);
}

/**
 * The flight with a Reynolds-dependent drag coefficient, C_D = factor · C_D,sphere(Re):
 *
 *   dv/dt = −c · (C_D,sphere Re)(Re) · (v − w) − g ŷ,   Re = (ρ d/μ) |v − w|,   c = factor π d μ /(8m)
 *
 * which is the drag equation of FlightModel with k = ρ · factor · C_D,sphere(Re) · A/(2m), written
 * in the force form C_D·Re so that it stays finite (Stokes drag, C_D·Re → 24) as |v − w| → 0.
 */
export class SphereDragFlightModel implements FlightSystem {
	readonly dimension = STATE_SIZE;

	constructor(
		/** c = factor π d μ /(8m), 1/s (stokesDragRate). */
		readonly stokesRate: number,
		/** Re per unit relative speed, ρ d / μ, s/m. */
		readonly reynoldsPerSpeed: number,
		/** Tail-wind component w_x, m/s. */
		readonly windX: number,
		/** Cross-wind component w_z, m/s. */
		readonly windZ: number,
		/** Gravity, m/s². */
		readonly gravity: number
	) {}

	derivative(y: Float64Array, out: Float64Array, o: number): void {
		const vx = y[VX];
		const vy = y[VY];
		const vz = y[VZ];
		const rx = vx - this.windX;
		const rz = vz - this.windZ;
		const reynolds = this.reynoldsPerSpeed * Math.sqrt(rx * rx + vy * vy + rz * rz);
		const kv = this.stokesRate * sphereDragTimesReynolds(reynolds);
		out[o + X] = vx;
		out[o + Y] = vy;
		out[o + Z] = vz;
		out[o + VX] = -kv * rx;
		out[o + VY] = -kv * vy - this.gravity;
		out[o + VZ] = -kv * rz;
	}
}
