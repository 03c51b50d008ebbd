import { describe, expect, it } from 'vitest';
import { PhysicsInputError } from './errors';
import {
	convert,
	DEFAULT_PREFERENCES,
	fromSI,
	isUnit,
	preferredUnit,
	SI_PREFERENCES,
	SI_UNIT,
	toSI,
	unitsOf,
	unitSymbol,
	UNITS,
	type Quantity,
	type UnitOf
} from './units';

const QUANTITIES = Object.keys(UNITS) as Quantity[];

/** Relative error, measured against the affine offset too (a temperature of 0 °C is not "exact 0"). */
function roundTripError(q: Quantity, unit: string, v: number): number {
	const u = unitsOf(q).find((d) => d.id === unit) as { offset: number };
	const back = fromSI(q, unit as never, toSI(q, unit as never, v));
	return Math.abs(back - v) / Math.max(Math.abs(v), Math.abs(u.offset), Number.MIN_VALUE);
}

describe('unit table', () => {
	it('keys every unit by its own id and quantity, and has the SI unit with scale 1', () => {
		for (const q of QUANTITIES) {
			for (const [id, u] of Object.entries(UNITS[q])) {
				expect(u.id).toBe(id);
				expect(u.quantity).toBe(q);
				expect(u.symbol.length).toBeGreaterThan(0);
			}
			const si = UNITS[q][SI_UNIT[q] as never] as { scale: number; offset: number };
			expect([si.scale, si.offset]).toEqual([1, 0]);
		}
	});

	it('lists units per quantity in table order', () => {
		expect(unitsOf('pressure').map((u) => u.id)).toEqual(['Pa', 'kPa', 'bar', 'psi']);
		expect(unitsOf('angle').map((u) => u.id)).toEqual(['deg', 'rad', 'mil']);
	});

	it('preferences name units that exist', () => {
		for (const prefs of [DEFAULT_PREFERENCES, SI_PREFERENCES]) {
			for (const q of QUANTITIES) expect(isUnit(q, prefs[q])).toBe(true);
		}
		expect(DEFAULT_PREFERENCES).toMatchObject({ pressure: 'bar', speed: 'm/s', length: 'm', mass: 'g', temperature: 'degC', angle: 'deg' });
		expect(preferredUnit({ ...SI_PREFERENCES, volume: undefined }, 'volume')).toBe('L');
		expect(preferredUnit(SI_PREFERENCES, 'volume')).toBe('m3');
	});
});

describe('toSI / fromSI — exact defining constants (NIST SP 811 (2008) Appendix B; SI Brochure 2019)', () => {
	it('1 in = 0.0254 m, 1 ft = 0.3048 m, 1 mm = 0.001 m exactly', () => {
		expect(toSI('length', 'in', 1)).toBe(0.0254);
		expect(toSI('length', 'ft', 1)).toBe(0.3048);
		expect(Math.abs(toSI('length', 'in', 12) / toSI('length', 'ft', 1) - 1)).toBeLessThanOrEqual(Number.EPSILON);
		expect(toSI('length', 'mm', 25)).toBe(0.025);
	});

	it('1 lb = 0.45359237 kg, 1 grain = 64.79891 mg, 1 oz = 28.349523125 g = lb/16, 7000 gr = 1 lb', () => {
		expect(toSI('mass', 'lb', 1)).toBe(0.45359237);
		expect(toSI('mass', 'gr', 1)).toBe(64.79891e-6);
		expect(toSI('mass', 'oz', 1)).toBe(0.028349523125);
		expect(Math.abs(toSI('mass', 'oz', 16) / 0.45359237 - 1)).toBeLessThan(1e-15);
		expect(Math.abs(toSI('mass', 'gr', 7000) / 0.45359237 - 1)).toBeLessThan(1e-15);
	});

	it('1 psi = 1 lbf/in² = 0.45359237 · 9.80665 / 0.0254² Pa = 6894.757293168361 Pa; 1 bar = 10⁵ Pa', () => {
		expect(Math.abs(toSI('pressure', 'psi', 1) / ((0.45359237 * 9.80665) / 0.0254 ** 2) - 1)).toBeLessThan(2e-16);
		expect(toSI('pressure', 'psi', 1)).toBe(6894.757293168361);
		expect(toSI('pressure', 'bar', 6)).toBe(6e5);
		expect(toSI('pressure', 'kPa', 101.325)).toBeCloseTo(101325, 9);
	});

	it('1 ft/s = 0.3048 m/s, 3.6 km/h = 1 m/s', () => {
		expect(toSI('speed', 'ft/s', 1)).toBe(0.3048);
		expect(toSI('speed', 'km/h', 3.6)).toBeCloseTo(1, 15);
	});

	it('temperature is affine: 0 °C = 273.15 K, 32 °F = 273.15 K, 212 °F = 373.15 K, −40 °F = −40 °C', () => {
		expect(toSI('temperature', 'degC', 0)).toBe(273.15);
		expect(toSI('temperature', 'degF', 32)).toBeCloseTo(273.15, 12);
		expect(toSI('temperature', 'degF', 212)).toBeCloseTo(373.15, 12);
		expect(convert('temperature', 'degF', 'degC', -40)).toBeCloseTo(-40, 12);
		expect(toSI('temperature', 'K', 300)).toBe(300);
	});

	it('angles: 180° = π rad; NATO mil, 6400 to the turn: 1600 mil = 90°', () => {
		expect(toSI('angle', 'deg', 180)).toBe(Math.PI);
		expect(toSI('angle', 'mil', 6400)).toBeCloseTo(2 * Math.PI, 14);
		expect(convert('angle', 'mil', 'deg', 1600)).toBeCloseTo(90, 12);
	});

	it('volume, energy, force: 1 L = 10⁻³ m³, 1 in³ = 16.387064 cm³, 1 ft·lbf = 1.3558179483314004 J, 1 lbf = 4.4482216152605 N', () => {
		expect(toSI('volume', 'L', 1)).toBe(1e-3);
		expect(convert('volume', 'in3', 'cm3', 1)).toBeCloseTo(16.387064, 12);
		expect(Math.abs(toSI('energy', 'ftlbf', 1) / (0.3048 * 0.45359237 * 9.80665) - 1)).toBeLessThan(2e-16);
		expect(toSI('force', 'lbf', 1)).toBe(4.4482216152605);
	});
});

describe('round trips fromSI(toSI(v)) === v to 1e-12 relative, every unit', () => {
	const values = [-1234.5678, -1, -1e-9, 0, 1e-12, 0.001, 1, 3.14159, 101.325, 6.5e5, 9.87e12];
	for (const q of QUANTITIES) {
		it(q, () => {
			for (const unit of Object.keys(UNITS[q])) {
				for (const v of values) expect(roundTripError(q, unit, v), `${v} ${unit}`).toBeLessThan(1e-12);
			}
		});
	}

	it('and convert between any two units of a quantity and back', () => {
		for (const q of QUANTITIES) {
			const ids = Object.keys(UNITS[q]) as UnitOf[typeof q][];
			for (const a of ids) {
				for (const b of ids) {
					const back = convert(q, b as never, a as never, convert(q, a as never, b as never, 42.125));
					expect(Math.abs(back - 42.125) / 42.125).toBeLessThan(1e-12);
				}
			}
		}
	});
});

describe('unit errors and symbols', () => {
	it('refuses unknown units and non-finite values with a PhysicsInputError', () => {
		expect(() => toSI('pressure', 'atm' as never, 1)).toThrow(PhysicsInputError);
		expect(() => toSI('length', 'm', Number.NaN)).toThrow(PhysicsInputError);
		expect(() => fromSI('mass', 'g', Number.POSITIVE_INFINITY, 'massKg')).toThrow(/massKg/);
		expect(isUnit('speed', 'mph')).toBe(false);
		expect(isUnit('speed', 'km/h')).toBe(true);
	});

	it('gives display symbols', () => {
		expect(unitSymbol('temperature', 'degC')).toBe('°C');
		expect(unitSymbol('energy', 'ftlbf')).toBe('ft·lbf');
		expect(unitSymbol('volume', 'm3')).toBe('m³');
	});
});
