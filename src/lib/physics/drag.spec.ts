import { describe, expect, it } from 'vitest';
import {
	reynoldsNumber,
	SPHERE_CORRELATION_MAX_RE,
	sphereCorrelationInRange,
	sphereDragCoefficient,
	sphereDragTimesReynolds,
	sutherlandViscosity
} from './drag';
import { PhysicsInputError } from './errors';

/** |actual − expected| ≤ half a unit in the last quoted significant digit. */
function expectToDigits(actual: number, quoted: string): void {
	const expected = Number(quoted);
	const mantissa = quoted.replace(/e.*$/i, '');
	const decimals = mantissa.includes('.') ? mantissa.split('.')[1].length : 0;
	const exponent = /e/i.test(quoted) ? Number(quoted.replace(/^.*e/i, '')) : 0;
	expect(Math.abs(actual - expected)).toBeLessThanOrEqual(0.5 * 10 ** (exponent - decimals) * (1 + 1e-9));
}

// Reference sheet §4, "Morrison 2013/16" row of the table [computed]: F.A. Morrison, An Introduction
// to Fluid Mechanics (CUP 2013); note "Data Correlation for Drag Coefficient for Sphere" (Michigan
// Tech 2016), eq. 1.
const MORRISON_2013_16: [number, string][] = [
	[1, '24.673'],
	[10, '3.9676'],
	[100, '1.0381'],
	[1e3, '0.4838'],
	[1e4, '0.3926'],
	[1e5, '0.4257'],
	[2e5, '0.4159'],
	[3e5, '0.1734'],
	[5e5, '0.0924']
];

/** The correlation exactly as printed in reference sheet §4, term by term. */
function morrisonAsPrinted(re: number): number {
	return (
		24 / re +
		(2.6 * (re / 5)) / (1 + (re / 5) ** 1.52) +
		(0.411 * (re / 2.63e5) ** -7.94) / (1 + (re / 2.63e5) ** -8) +
		(0.25 * (re / 1e6)) / (1 + re / 1e6)
	);
}

describe('sphereDragCoefficient — Morrison 2013/16 (Morrison, Intro. Fluid Mech., CUP 2013; Michigan Tech note 2016 eq. 1; reference sheet §4 table)', () => {
	for (const [re, cd] of MORRISON_2013_16) {
		it(`Re = ${re}: C_D = ${cd} (reference sheet §4, Morrison 2013/16 row)`, () => {
			expectToDigits(sphereDragCoefficient(re), cd);
		});
	}

	it('is the 2013/16 form, not the 2010 one (reference sheet §4: 2010 gives 0.4120 at Re = 2e5, 0.0877 at 5e5)', () => {
		expect(Math.abs(sphereDragCoefficient(2e5) - 0.412)).toBeGreaterThan(0.003);
		expect(Math.abs(sphereDragCoefficient(5e5) - 0.0877)).toBeGreaterThan(0.004);
	});

	it('agrees with the formula as printed in reference sheet §4 to 1e-14 relative from Re = 1e-3 to 1e7', () => {
		for (let i = 0; i <= 1000; i++) {
			const re = 10 ** (-3 + (10 * i) / 1000);
			const printed = morrisonAsPrinted(re);
			expect(Math.abs(sphereDragCoefficient(re) - printed) / printed).toBeLessThan(1e-14);
		}
	});

	it('refuses Re ≤ 0 or not finite (C_D → ∞ as Re → 0)', () => {
		for (const re of [0, -1, Number.NaN, Number.POSITIVE_INFINITY]) {
			expect(() => sphereDragCoefficient(re)).toThrow(PhysicsInputError);
		}
	});

	it('beyond Re = 1e6 (Morrison: valid Re ≤ 1e6) it is still evaluated, finite and positive, but flagged out of range', () => {
		expect(SPHERE_CORRELATION_MAX_RE).toBe(1e6);
		expect(sphereCorrelationInRange(1e6)).toBe(true);
		expect(sphereCorrelationInRange(1.0001e6)).toBe(false);
		expect(sphereCorrelationInRange(0)).toBe(false);
		for (const re of [2e6, 1e8, 1e12]) {
			const cd = sphereDragCoefficient(re);
			expect(Number.isFinite(cd)).toBe(true);
			expect(cd).toBeGreaterThan(0);
		}
	});
});

describe('sphereDragTimesReynolds — the force form C_D·Re (Stokes limit 24 as Re → 0)', () => {
	it('is 24 at Re = 0 (Stokes 1851: C_D = 24/Re) and continuous into Re > 0', () => {
		expect(sphereDragTimesReynolds(0)).toBe(24);
		expect(Math.abs(sphereDragTimesReynolds(1e-12) - 24)).toBeLessThan(1e-9);
		expect(Math.abs(sphereDragTimesReynolds(1e-300) - 24)).toBe(0);
	});

	it('equals C_D(Re)·Re (reference sheet §4 correlation) and stays finite far beyond the flight range', () => {
		for (const [re] of MORRISON_2013_16) {
			expect(Math.abs(sphereDragTimesReynolds(re) - sphereDragCoefficient(re) * re)).toBeLessThan(1e-12 * re + 1e-12);
		}
		for (const re of [1e-30, 1e-8, 1e9, 1e15, 1e40]) expect(Number.isFinite(sphereDragTimesReynolds(re))).toBe(true);
	});
});

// Reference sheet §4, Sutherland's law (ICAO Doc 7488 / ISO 2533 form) check values [computed].
describe("sutherlandViscosity — Sutherland's law, ICAO Doc 7488 / ISO 2533 (β_s = 1.458e-6, S = 110.4 K; reference sheet §4)", () => {
	const checks: [number, string][] = [
		[273.15, '1.71608e-5'],
		[288.15, '1.78938e-5'],
		[293.15, '1.81341e-5']
	];
	for (const [t, mu] of checks) {
		it(`μ(${t} K) = ${mu} Pa·s (reference sheet §4 check, ICAO Doc 7488 / ISO 2533 form)`, () => {
			expectToDigits(sutherlandViscosity(t), mu);
		});
	}

	it('μ(288.15 K) matches the ICAO standard-atmosphere table value 1.7894e-5 Pa·s (ICAO Doc 7488 table, as recalled in reference sheet §4)', () => {
		expectToDigits(sutherlandViscosity(288.15), '1.7894e-5');
	});

	it('equals the equivalent form 1.716e-5 (T/273.15)^1.5 (273.15 + 110.4)/(T + 110.4) to its 4 digits (White, Viscous Fluid Flow; reference sheet §4)', () => {
		for (const t of [220, 260, 300, 330]) {
			const white = 1.716e-5 * (t / 273.15) ** 1.5 * ((273.15 + 110.4) / (t + 110.4));
			expect(Math.abs(sutherlandViscosity(t) / white - 1)).toBeLessThan(1e-4);
		}
	});

	it('refuses a temperature ≤ 0 K', () => {
		expect(() => sutherlandViscosity(0)).toThrow(PhysicsInputError);
		expect(() => sutherlandViscosity(Number.NaN)).toThrow(PhysicsInputError);
	});
});

describe('reynoldsNumber — Re = ρ|v|d/μ (reference sheet §4)', () => {
	it('ISA sea level: ν = μ(288.15 K)/1.225 = 1.46072e-5 m²/s (reference sheet §4 check)', () => {
		expectToDigits(1 / reynoldsNumber(1.225, 1, 1, sutherlandViscosity(288.15)), '1.46072e-5');
	});

	it('20 °C, 50 % RH, ρ = 1.199314: ν = 1.51204e-5 m²/s; d = 10 mm at 20 m/s → 1.32e4, 60 mm at 120 m/s → 4.76e5 (reference sheet §4 app range warning)', () => {
		const mu = sutherlandViscosity(293.15);
		expectToDigits(1 / reynoldsNumber(1.199314, 1, 1, mu), '1.51204e-5');
		expectToDigits(reynoldsNumber(1.199314, 20, 0.01, mu), '1.32e4');
		expectToDigits(reynoldsNumber(1.199314, 120, 0.06, mu), '4.76e5');
	});

	it('uses the magnitude of the speed and names a bad field', () => {
		expect(reynoldsNumber(1.2, -30, 0.04, 1.8e-5)).toBe(reynoldsNumber(1.2, 30, 0.04, 1.8e-5));
		try {
			reynoldsNumber(1.2, 30, 0.04, 0);
			expect.unreachable();
		} catch (e) {
			expect((e as PhysicsInputError).field).toBe('viscosityPaS');
		}
	});
});
