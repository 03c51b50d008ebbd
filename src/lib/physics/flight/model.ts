// The equations of motion of the flight (shared/design/physics.md §3; reference sheet §5):
// a point mass with quadratic drag on its velocity relative to the air, in constant gravity.
//
//   dr/dt = v
//   dv/dt = −k |v − w| (v − w) − g ŷ,   k = ρ C_D A / (2m),  A = π d²/4   [k in 1/m]
//
// Frame: x downrange, y up from the ground, z to the right looking downrange; wind w = (w_x, 0, w_z),
// w_x > 0 a tail wind. The drag law is the drag equation F_D = ½ ρ C_D A |v_rel|² along −v_rel
// (reference sheet §4).

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

/** Drag factor k = ρ C_D (π d²/4) / (2m), 1/m. */
export function dragFactor(airDensityKgM3: number, dragCoefficient: number, diameterM: number, massKg: number): number {
	return (airDensityKgM3 * dragCoefficient * Math.PI * diameterM * diameterM) / (8 * massKg);
}

export class FlightModel implements OdeSystem {
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
