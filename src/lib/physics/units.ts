// Unit conversion: the one place where Shotwright turns user units into SI and back. The physics
// works in SI throughout (shared/design/physics.md, opening paragraph); forms, CSV mapping and
// display convert at the edge through toSI / fromSI and nothing else.
//
// Every unit is affine: SI = (value + offset) · scale, so value = SI / scale − offset. Only the
// temperature scales have an offset. Defining constants are exact by definition unless noted;
// sources: NIST Special Publication 811 (2008 ed.), Appendix B.8/B.9 ("Factors for units listed
// alphabetically / by kind of quantity"), and the SI Brochure (BIPM, 9th ed. 2019) for the litre,
// the bar and the kelvin/degree Celsius relation. Formatting (digits, locale) is the UI's job.

import { PhysicsInputError, requireFinite } from './errors';

/** 1 in = 0.0254 m exactly (international inch, 1959; NIST SP 811 B.9). */
const INCH_M = 0.0254;
/** 1 ft = 0.3048 m exactly (NIST SP 811 B.9). */
const FOOT_M = 0.3048;
/** 1 lb (avoirdupois) = 0.453 592 37 kg exactly (NIST SP 811 B.9). */
const POUND_KG = 0.45359237;
/** 1 grain = 64.798 91 mg exactly (= 1/7000 lb; NIST SP 811 B.9). */
const GRAIN_KG = 64.79891e-6;
/** 1 oz (avoirdupois) = 28.349 523 125 g exactly (= lb/16; NIST SP 811 B.9). */
const OUNCE_KG = 28.349523125e-3;
/** 1 lbf = lb · g_n (standard gravity 9.806 65 m/s², 3rd CGPM 1901) = 4.448 221 615 260 5 N exactly (NIST SP 811 B.9). */
const POUND_FORCE_N = 4.4482216152605;
/**
 * 1 psi = 1 lbf/in² = 0.453 592 37 · 9.806 65 / 0.0254² Pa = 6894.757 293 168 361 3… Pa
 * (NIST SP 811 B.9 lists the rounded 6.894 757 E+03); the literal is that exact value to
 * double precision.
 */
const PSI_PA = 6894.757293168361;
/** 1 ft·lbf = 0.3048 · 4.448 221 615 260 5 J = 1.355 817 948 331 400 4 J exactly (NIST SP 811 B.9). */
const FOOT_POUND_FORCE_J = 1.3558179483314004;
/** 1 bar = 10⁵ Pa exactly (SI Brochure, Table 8; NIST SP 811 B.9). */
const BAR_PA = 1e5;
/** 0 °C = 273.15 K exactly (SI Brochure §2.3.1). */
const CELSIUS_OFFSET_K = 273.15;
/** T/K = (t/°F + 459.67) · 5/9 exactly (NIST SP 811 B.9, "degree Fahrenheit"). */
const FAHRENHEIT_OFFSET = 459.67;
/**
 * NATO mil: 6400 mils to the full turn (the convention of NATO artillery and optics, from memory;
 * the Warsaw Pact 6000 and Swedish 6300 mils differ, and the milliradian is 1000/rad ≈ 6283/turn).
 */
const MILS_PER_TURN = 6400;

export type Quantity =
	| 'pressure'
	| 'speed'
	| 'length'
	| 'mass'
	| 'temperature'
	| 'angle'
	| 'volume'
	| 'energy'
	| 'force';

export type PressureUnit = 'Pa' | 'kPa' | 'bar' | 'psi';
export type SpeedUnit = 'm/s' | 'ft/s' | 'km/h';
export type LengthUnit = 'm' | 'mm' | 'cm' | 'in' | 'ft';
export type MassUnit = 'kg' | 'g' | 'gr' | 'oz' | 'lb';
export type TemperatureUnit = 'degC' | 'degF' | 'K';
export type AngleUnit = 'deg' | 'rad' | 'mil';
export type VolumeUnit = 'm3' | 'L' | 'cm3' | 'in3';
export type EnergyUnit = 'J' | 'ftlbf';
export type ForceUnit = 'N' | 'lbf';

/** The unit ids of each quantity. */
export interface UnitOf {
	pressure: PressureUnit;
	speed: SpeedUnit;
	length: LengthUnit;
	mass: MassUnit;
	temperature: TemperatureUnit;
	angle: AngleUnit;
	volume: VolumeUnit;
	energy: EnergyUnit;
	force: ForceUnit;
}

/** The SI (coherent) unit each quantity is stored in. */
export const SI_UNIT: { readonly [Q in Quantity]: UnitOf[Q] } = {
	pressure: 'Pa',
	speed: 'm/s',
	length: 'm',
	mass: 'kg',
	temperature: 'K',
	angle: 'rad',
	volume: 'm3',
	energy: 'J',
	force: 'N'
};

export interface UnitDefinition<Q extends Quantity = Quantity> {
	readonly id: UnitOf[Q];
	readonly quantity: Q;
	/** Short symbol for labels and table headers, e.g. "°C", "m/s". */
	readonly symbol: string;
	/** Name in words, e.g. "degree Celsius". */
	readonly label: string;
	/** SI = (value + offset) · scale. */
	readonly scale: number;
	readonly offset: number;
}

type UnitTable = { readonly [Q in Quantity]: { readonly [U in UnitOf[Q]]: UnitDefinition<Q> } };

function unit<Q extends Quantity>(
	quantity: Q,
	id: UnitOf[Q],
	symbol: string,
	label: string,
	scale: number,
	offset = 0
): UnitDefinition<Q> {
	return { id, quantity, symbol, label, scale, offset };
}

/** Every unit the app offers, per quantity, in the order forms list them. */
export const UNITS: UnitTable = {
	pressure: {
		Pa: unit('pressure', 'Pa', 'Pa', 'pascal', 1),
		kPa: unit('pressure', 'kPa', 'kPa', 'kilopascal', 1e3),
		bar: unit('pressure', 'bar', 'bar', 'bar', BAR_PA),
		psi: unit('pressure', 'psi', 'psi', 'pound-force per square inch', PSI_PA)
	},
	speed: {
		'm/s': unit('speed', 'm/s', 'm/s', 'metre per second', 1),
		'ft/s': unit('speed', 'ft/s', 'ft/s', 'foot per second', FOOT_M),
		'km/h': unit('speed', 'km/h', 'km/h', 'kilometre per hour', 1000 / 3600)
	},
	length: {
		m: unit('length', 'm', 'm', 'metre', 1),
		mm: unit('length', 'mm', 'mm', 'millimetre', 1e-3),
		cm: unit('length', 'cm', 'cm', 'centimetre', 1e-2),
		in: unit('length', 'in', 'in', 'inch', INCH_M),
		ft: unit('length', 'ft', 'ft', 'foot', FOOT_M)
	},
	mass: {
		kg: unit('mass', 'kg', 'kg', 'kilogram', 1),
		g: unit('mass', 'g', 'g', 'gram', 1e-3),
		gr: unit('mass', 'gr', 'gr', 'grain', GRAIN_KG),
		oz: unit('mass', 'oz', 'oz', 'ounce (avoirdupois)', OUNCE_KG),
		lb: unit('mass', 'lb', 'lb', 'pound (avoirdupois)', POUND_KG)
	},
	temperature: {
		degC: unit('temperature', 'degC', '°C', 'degree Celsius', 1, CELSIUS_OFFSET_K),
		degF: unit('temperature', 'degF', '°F', 'degree Fahrenheit', 5 / 9, FAHRENHEIT_OFFSET),
		K: unit('temperature', 'K', 'K', 'kelvin', 1)
	},
	angle: {
		deg: unit('angle', 'deg', '°', 'degree', Math.PI / 180),
		rad: unit('angle', 'rad', 'rad', 'radian', 1),
		mil: unit('angle', 'mil', 'mil', 'mil (NATO, 6400 per turn)', (2 * Math.PI) / MILS_PER_TURN)
	},
	volume: {
		m3: unit('volume', 'm3', 'm³', 'cubic metre', 1),
		L: unit('volume', 'L', 'L', 'litre', 1e-3),
		cm3: unit('volume', 'cm3', 'cm³', 'cubic centimetre', 1e-6),
		in3: unit('volume', 'in3', 'in³', 'cubic inch', INCH_M * INCH_M * INCH_M)
	},
	energy: {
		J: unit('energy', 'J', 'J', 'joule', 1),
		ftlbf: unit('energy', 'ftlbf', 'ft·lbf', 'foot pound-force', FOOT_POUND_FORCE_J)
	},
	force: {
		N: unit('force', 'N', 'N', 'newton', 1),
		lbf: unit('force', 'lbf', 'lbf', 'pound-force', POUND_FORCE_N)
	}
};

/** The units of one quantity as a list, e.g. for a select box. */
export function unitsOf<Q extends Quantity>(quantity: Q): UnitDefinition<Q>[] {
	return Object.values(UNITS[quantity]) as UnitDefinition<Q>[];
}

/** Type guard for ids coming from forms, CSV mappings or stored preferences. */
export function isUnit<Q extends Quantity>(quantity: Q, id: string): id is UnitOf[Q] {
	return Object.prototype.hasOwnProperty.call(UNITS[quantity], id);
}

function definition<Q extends Quantity>(quantity: Q, id: UnitOf[Q]): UnitDefinition<Q> {
	if (!Object.prototype.hasOwnProperty.call(UNITS, quantity) || !isUnit(quantity, id)) {
		throw new PhysicsInputError('unit', 'unknown-unit', `unknown ${String(quantity)} unit "${String(id)}"`);
	}
	return (UNITS[quantity] as Record<string, UnitDefinition<Q>>)[id];
}

/** `value` in `unit` expressed in the SI unit of `quantity` (see SI_UNIT). */
export function toSI<Q extends Quantity>(quantity: Q, unit: UnitOf[Q], value: number, field = 'value'): number {
	requireFinite(value, field);
	const u = definition(quantity, unit);
	return (value + u.offset) * u.scale;
}

/** An SI value of `quantity` expressed in `unit`. */
export function fromSI<Q extends Quantity>(quantity: Q, unit: UnitOf[Q], valueSI: number, field = 'value'): number {
	requireFinite(valueSI, field);
	const u = definition(quantity, unit);
	return valueSI / u.scale - u.offset;
}

/** Convert between two units of the same quantity (through SI). */
export function convert<Q extends Quantity>(quantity: Q, from: UnitOf[Q], to: UnitOf[Q], value: number): number {
	return from === to ? requireFinite(value, 'value') : fromSI(quantity, to, toSI(quantity, from, value));
}

/** The display symbol of a unit ("°C", "m/s", "ft·lbf"). */
export function unitSymbol<Q extends Quantity>(quantity: Q, unit: UnitOf[Q]): string {
	return definition(quantity, unit).symbol;
}

/**
 * A person's display units. The first six are always chosen; volume, energy and force fall back
 * to DEFAULT_PREFERENCES when absent (see preferredUnit).
 */
export interface UnitPreferences {
	pressure: PressureUnit;
	speed: SpeedUnit;
	length: LengthUnit;
	mass: MassUnit;
	temperature: TemperatureUnit;
	angle: AngleUnit;
	volume?: VolumeUnit;
	energy?: EnergyUnit;
	force?: ForceUnit;
}

export const SI_PREFERENCES: Required<UnitPreferences> = { ...SI_UNIT };

/** What a range in Europe reads on its gauges and chronographs. */
export const DEFAULT_PREFERENCES: Required<UnitPreferences> = {
	pressure: 'bar',
	speed: 'm/s',
	length: 'm',
	mass: 'g',
	temperature: 'degC',
	angle: 'deg',
	volume: 'L',
	energy: 'J',
	force: 'N'
};

/** The unit a person prefers for `quantity`, falling back to DEFAULT_PREFERENCES. */
export function preferredUnit<Q extends Quantity>(prefs: UnitPreferences, quantity: Q): UnitOf[Q] {
	const chosen = prefs[quantity] as UnitOf[Q] | undefined;
	return chosen ?? (DEFAULT_PREFERENCES[quantity] as UnitOf[Q]);
}
