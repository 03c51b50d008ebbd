import { describe, expect, it } from 'vitest';
import { airDensity, cipm2007, dryAirDensityIdeal, saturationVapourPressure, STANDARD_ATMOSPHERE } from './air';
import { PhysicsInputError } from './errors';

/** |actual − expected| ≤ half a unit in the last quoted decimal. */
function expectRounded(actual: number, expected: number, decimals: number): void {
	expect(Math.abs(actual - expected)).toBeLessThanOrEqual(0.5 * 10 ** -decimals + 1e-12);
}

// Reference sheet §3, "CIPM-2007 check [computed]" table (Picard, Davis, Gläser & Fujii,
// Metrologia 45 (2008) 149; x_CO2 = 0.0004). Columns p_sv / Pa, f, x_v, Z, ρ / (kg/m³) as printed.
const CIPM_TABLE = [
	{ t: 20, p: 101325, h: 0.5, psv: 2339.163, f: 1.004026, xv: 0.0115893, Z: 0.9996148, rho: 1.199314 },
	{ t: 20, p: 101325, h: 0, psv: 2339.163, f: 1.004026, xv: 0, Z: 0.9996431, rho: 1.204557 },
	{ t: 15, p: 101325, h: 0, psv: 1705.669, f: 1.003928, xv: 0, Z: 0.9995922, rho: 1.225521 },
	{ t: 25, p: 95000, h: 0.8, psv: 3169.757, f: 1.003953, xv: 0.0267982, Z: 0.9996328, rho: 1.099188 }
];

describe('airDensity — CIPM-2007 (Picard et al., Metrologia 45 (2008) 149; reference §3 table)', () => {
	for (const row of CIPM_TABLE) {
		it(`${row.t} °C, ${row.p} Pa, h = ${row.h}: ρ = ${row.rho} kg/m³`, () => {
			const a = { temperatureC: row.t, pressurePa: row.p, relativeHumidity: row.h };
			const terms = cipm2007(a);
			expectRounded(terms.saturationVapourPressurePa, row.psv, 3);
			expectRounded(terms.enhancementFactor, row.f, 6);
			expectRounded(terms.vapourMoleFraction, row.xv, 7);
			expectRounded(terms.compressibility, row.Z, 7);
			expectRounded(airDensity(a), row.rho, 6);
		});
	}

	it('molar mass of dry air 28.96546 g/mol at x_CO2 = 0.0004, rising 12.011 g/mol per unit CO2 fraction', () => {
		const base = { temperatureC: 20, pressurePa: 101325, relativeHumidity: 0 };
		expect(cipm2007(base).dryAirMolarMassKgMol).toBeCloseTo(0.02896546, 12);
		expect(cipm2007({ ...base, co2MoleFraction: 0.0005 }).dryAirMolarMassKgMol).toBeCloseTo(0.02896546 + 12.011e-7, 12);
	});

	it('saturation vapour pressure at 0 °C is 611.21 Pa (reference §3, CIPM column)', () => {
		expectRounded(saturationVapourPressure(273.15), 611.21, 2);
	});

	it('humid air is lighter than dry air (water 18 g/mol < air 29 g/mol)', () => {
		const dry = airDensity({ temperatureC: 25, pressurePa: 100000, relativeHumidity: 0 });
		const wet = airDensity({ temperatureC: 25, pressurePa: 100000, relativeHumidity: 1 });
		expect(wet).toBeLessThan(dry);
	});

	it('refuses relative humidity outside [0, 1], NaN and impossible temperatures, naming the field', () => {
		const ok = { temperatureC: 20, pressurePa: 101325, relativeHumidity: 0.5 };
		const bad: [string, object][] = [
			['relativeHumidity', { relativeHumidity: -0.01 }],
			['relativeHumidity', { relativeHumidity: 1.01 }],
			['relativeHumidity', { relativeHumidity: 50 }],
			['temperatureC', { temperatureC: Number.NaN }],
			['temperatureC', { temperatureC: -300 }],
			['pressurePa', { pressurePa: 0 }],
			['pressurePa', { pressurePa: Number.POSITIVE_INFINITY }]
		];
		for (const [field, patch] of bad) {
			expect(() => airDensity({ ...ok, ...patch }), field).toThrow(PhysicsInputError);
			try {
				airDensity({ ...ok, ...patch });
			} catch (e) {
				expect((e as PhysicsInputError).field).toBe(field);
			}
		}
	});
});

describe('dryAirDensityIdeal — ρ = p/(R_d T)', () => {
	it('ISA sea level (ISO 2533:1975, ICAO Doc 7488/3): 101 325 Pa, 288.15 K → 1.225 kg/m³ (reference §3: 1.225000)', () => {
		expectRounded(dryAirDensityIdeal(STANDARD_ATMOSPHERE.pressurePa, STANDARD_ATMOSPHERE.temperatureK), 1.225, 6);
	});

	it('refuses zero or negative pressure and temperature', () => {
		expect(() => dryAirDensityIdeal(0, 288)).toThrow(PhysicsInputError);
		expect(() => dryAirDensityIdeal(101325, -1)).toThrow(PhysicsInputError);
	});
});
