// Display of stored SI values in the user's units: the one formatting path of the UI.
import {
	DEFAULT_PREFERENCES,
	convert,
	isUnit,
	preferredUnit,
	unitSymbol,
	type Quantity,
	type UnitOf,
	type UnitPreferences
} from '$lib/physics/units';

export type Prefs = Required<UnitPreferences>;

/** The user's stored preferences merged over the lab defaults (unknown ids are ignored). */
export function prefsFor(stored: Record<string, string> | null | undefined): Prefs {
	const prefs: Record<string, string> = { ...DEFAULT_PREFERENCES };
	for (const [quantity, unit] of Object.entries(stored ?? {})) {
		if (quantity in DEFAULT_PREFERENCES && isUnit(quantity as Quantity, unit)) prefs[quantity] = unit;
	}
	return prefs as Prefs;
}

/**
 * The unit to show a quantity in. `small` lengths (bores, diameters, impact offsets) use mm
 * when the preference is m or cm, and in when it is ft.
 */
export function displayUnit<Q extends Quantity>(quantity: Q, prefs: UnitPreferences, small = false): UnitOf[Q] {
	const unit = preferredUnit(prefs, quantity);
	if (small && quantity === 'length') {
		if (unit === 'm' || unit === 'cm') return 'mm' as UnitOf[Q];
		if (unit === 'ft') return 'in' as UnitOf[Q];
	}
	return unit;
}

/** The unit the database keeps a quantity in: SI, except air temperature in °C. */
export function storedUnit<Q extends Quantity>(quantity: Q): UnitOf[Q] {
	const stored: { [K in Quantity]: UnitOf[K] } = {
		pressure: 'Pa',
		speed: 'm/s',
		length: 'm',
		mass: 'kg',
		temperature: 'degC',
		angle: 'deg',
		volume: 'm3',
		energy: 'J',
		force: 'N'
	};
	return stored[quantity];
}

/** Digits after the decimal point that suit a unit at the precision ranges work to. */
const DIGITS: Partial<Record<string, number>> = {
	Pa: 0, kPa: 1, bar: 3, psi: 1, 'm/s': 2, 'ft/s': 1, 'km/h': 1, m: 3, mm: 1, cm: 2, in: 2, ft: 2,
	kg: 4, g: 2, gr: 1, oz: 3, lb: 4, degC: 1, degF: 1, K: 1, deg: 2, rad: 4, mil: 1, m3: 6, L: 3, cm3: 1, in3: 1
};

export function toDisplay<Q extends Quantity>(quantity: Q, stored: number, unit: UnitOf[Q]): number {
	return convert(quantity, storedUnit(quantity), unit, stored);
}

export function fromDisplay<Q extends Quantity>(quantity: Q, shown: number, unit: UnitOf[Q]): number {
	return convert(quantity, unit, storedUnit(quantity), shown);
}

export function formatNumber(value: number, digits: number) {
	return value.toLocaleString('en-GB', { minimumFractionDigits: digits, maximumFractionDigits: digits });
}

/** "25.4 mm": a stored value in the user's unit with its symbol; "—" when absent. */
export function formatQuantity<Q extends Quantity>(
	quantity: Q,
	stored: number | null | undefined,
	prefs: UnitPreferences,
	options: { small?: boolean; digits?: number; signed?: boolean } = {}
): string {
	if (stored === null || stored === undefined || !Number.isFinite(stored)) return '—';
	const unit = displayUnit(quantity, prefs, options.small);
	const shown = toDisplay(quantity, stored, unit);
	const digits = options.digits ?? DIGITS[unit] ?? 2;
	const sign = options.signed && shown > 0 ? '+' : '';
	return `${sign}${formatNumber(shown, digits)} ${unitSymbol(quantity, unit)}`;
}

export function symbolFor<Q extends Quantity>(quantity: Q, prefs: UnitPreferences, small = false) {
	return unitSymbol(quantity, displayUnit(quantity, prefs, small));
}

export function digitsFor(unit: string) {
	return DIGITS[unit] ?? 2;
}

export const dateTimeFormat = new Intl.DateTimeFormat('en-GB', { dateStyle: 'medium', timeStyle: 'short', timeZone: 'UTC' });
export const dateFormat = new Intl.DateTimeFormat('en-GB', { dateStyle: 'medium', timeZone: 'UTC' });
