// Where a flight ends: the target plane x = D (crossed going downrange) or the ground y = 0
// (crossed going down). A step that crosses either is detected from its end points; the crossing
// itself is then found as a root of the step's order-7 dense-output interpolant, so the end state
// is as accurate as the steps themselves rather than limited by where a step happened to stop.

import { brentRoot } from '../roots';
import { X, Y } from './model';
import { interpolate } from './stepper';

/** Root tolerance in θ (fraction of the step): ~4 ulp of 1, i.e. to machine precision. */
const THETA_TOLERANCE = 1e-15;

export type FlightEvent = 'target' | 'ground';

export interface LocatedEvent {
	event: FlightEvent;
	/** Fraction of the step, 0 < θ ≤ 1, at which it happens. */
	theta: number;
}

/** Did the step from y (x < D) reach the target plane x = D? */
export function crossesPlane(yNew: Float64Array, targetX: number): boolean {
	return yNew[X] >= targetX;
}

/** Did the step from y (above ground) reach the ground y = 0? */
export function crossesGround(yNew: Float64Array): boolean {
	return yNew[Y] <= 0;
}

function crossing(F: Float64Array, n: number, y: Float64Array, component: number, level: number): number {
	const r = brentRoot((theta) => interpolate(F, n, y, theta, component) - level, 0, 1, {
		tolerance: THETA_TOLERANCE
	});
	return r.root;
}

/**
 * The first of the flagged events inside a step whose dense output is in F. If both happen in
 * the same step the earlier wins; a tie goes to the target (it was reached, at ground level).
 */
export function locateEvent(
	F: Float64Array,
	n: number,
	y: Float64Array,
	plane: boolean,
	ground: boolean,
	targetX: number
): LocatedEvent {
	const thetaPlane = plane ? crossing(F, n, y, X, targetX) : Infinity;
	const thetaGround = ground ? crossing(F, n, y, Y, 0) : Infinity;
	return thetaPlane <= thetaGround
		? { event: 'target', theta: thetaPlane }
		: { event: 'ground', theta: thetaGround };
}
