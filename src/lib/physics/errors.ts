// Typed input errors for the physics library. Every public function validates its inputs up
// front, so a bad value fails loudly with the name of the offending field instead of travelling
// through the formulas and coming out as NaN (shared/design/physics.md §1: "never NaN").

/** Why a value was refused. */
export type InputErrorReason =
	| 'not-finite' // NaN, ±Infinity, or not a number at all
	| 'not-positive' // must be > 0
	| 'negative' // must be >= 0
	| 'out-of-range' // outside a stated interval
	| 'unknown-unit'; // a unit id the conversion table does not have

export class PhysicsInputError extends Error {
	readonly field: string;
	readonly reason: InputErrorReason;

	constructor(field: string, reason: InputErrorReason, message: string) {
		super(message);
		this.name = 'PhysicsInputError';
		this.field = field;
		this.reason = reason;
	}
}

/** The value if it is a finite number, else a PhysicsInputError naming `field`. */
export function requireFinite(value: number, field: string): number {
	if (typeof value !== 'number' || !Number.isFinite(value)) {
		throw new PhysicsInputError(field, 'not-finite', `${field} must be a finite number (got ${String(value)})`);
	}
	return value;
}

/** A finite value > 0 (masses, diameters, volumes, lengths, distances). */
export function requirePositive(value: number, field: string): number {
	requireFinite(value, field);
	if (value <= 0) {
		throw new PhysicsInputError(field, 'not-positive', `${field} must be greater than 0 (got ${value})`);
	}
	return value;
}

/** A finite value >= 0 (dead volume, loss force, launch height, drag coefficient). */
export function requireNonNegative(value: number, field: string): number {
	requireFinite(value, field);
	if (value < 0) {
		throw new PhysicsInputError(field, 'negative', `${field} must not be negative (got ${value})`);
	}
	return value;
}

export interface Interval {
	min: number;
	max: number;
	/** Exclude the lower bound (e.g. efficiency in (0, 1]). */
	minExclusive?: boolean;
	/** Exclude the upper bound. */
	maxExclusive?: boolean;
}

/** A finite value inside `range`; the message states the interval in the usual bracket notation. */
export function requireInRange(value: number, field: string, range: Interval): number {
	requireFinite(value, field);
	const belowMin = range.minExclusive ? value <= range.min : value < range.min;
	const aboveMax = range.maxExclusive ? value >= range.max : value > range.max;
	if (belowMin || aboveMax) {
		const open = range.minExclusive ? '(' : '[';
		const close = range.maxExclusive ? ')' : ']';
		throw new PhysicsInputError(
			field,
			'out-of-range',
			`${field} must be in ${open}${range.min}, ${range.max}${close} (got ${value})`
		);
	}
	return value;
}
