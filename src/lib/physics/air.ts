// Density of the air the projectile flies through (shared/design/physics.md §2; reference sheet §3).
//
// Moist air: the CIPM-2007 formula, A. Picard, R.S. Davis, M. Gläser, K. Fujii, "Revised formula
// for the density of moist air (CIPM-2007)", Metrologia 45 (2008) 149-155,
// doi:10.1088/0026-1394/45/2/004. Constants as listed in reference sheet §3. The paper states the
// formula for 600-1100 hPa and 15-27 °C; outside that it is an extrapolation, still far better
// than dry air for an outdoor range, so a wider band is accepted here (AIR_LIMITS).

import { requireInRange, requirePositive } from './errors';

/** Molar gas constant used by CIPM-2007, J/(mol·K) (Picard et al. 2008, eq. 2 and Table). */
const CIPM_GAS_CONSTANT = 8.314472;
/** Molar mass of water, kg/mol (CIPM-2007). */
const WATER_MOLAR_MASS = 18.01528e-3;
/** Reference CO₂ mole fraction of CIPM-2007's M_a formula, mol/mol. */
const CIPM_REFERENCE_CO2 = 0.0004;
/** CO₂ mole fraction used by Shotwright (outdoor air, as the design fixes it), mol/mol. */
export const DEFAULT_CO2_MOLE_FRACTION = 0.0004;
const ZERO_CELSIUS_K = 273.15;

/** Saturation vapour pressure coefficients, p_sv = exp(A T² + B T + C + D/T) Pa (CIPM-2007). */
const PSV_A = 1.2378847e-5; // K⁻²
const PSV_B = -1.9121316e-2; // K⁻¹
const PSV_C = 33.93711047;
const PSV_D = -6.3431645e3; // K

/** Enhancement factor f = α + β p + γ t² (p in Pa, t in °C) (CIPM-2007). */
const ENH_ALPHA = 1.00062;
const ENH_BETA = 3.14e-8; // Pa⁻¹
const ENH_GAMMA = 5.6e-7; // °C⁻²

/** Compressibility factor coefficients (CIPM-2007). */
const Z_A0 = 1.58123e-6; // K/Pa
const Z_A1 = -2.9331e-8; // 1/Pa
const Z_A2 = 1.1043e-10; // 1/(K·Pa)
const Z_B0 = 5.707e-6; // K/Pa
const Z_B1 = -2.051e-8; // 1/Pa
const Z_C0 = 1.9898e-4; // K/Pa
const Z_C1 = -2.376e-6; // 1/Pa
const Z_D = 1.83e-11; // K²/Pa²
const Z_E = -0.765e-8; // K²/Pa²

/**
 * Specific gas constant of dry air R = R_star / M = 8314.32 / 28.964 420 J/(kg·K) (ISO 2533:1975
 * Table 1, as reproduced in reference sheet §3), which makes the ISA sea-level density 1.225.
 */
export const DRY_AIR_GAS_CONSTANT = 287.05287;

/** ISA / ICAO standard sea-level atmosphere (ISO 2533:1975, ICAO Doc 7488/3; reference §3). */
export const STANDARD_ATMOSPHERE = {
	pressurePa: 101325,
	temperatureK: 288.15,
	densityKgM3: 1.225
} as const;

/** Inputs accepted by airDensity: outdoor conditions a range can meet, Pa and °C. */
export const AIR_LIMITS = {
	temperatureC: { min: -40, max: 50 },
	pressurePa: { min: 50_000, max: 110_000 }
} as const;

export interface AirConditions {
	temperatureC: number;
	pressurePa: number;
	/** 0..1 (not percent). */
	relativeHumidity: number;
	/** CO₂ mole fraction, mol/mol; default DEFAULT_CO2_MOLE_FRACTION. */
	co2MoleFraction?: number;
}

/** The intermediate quantities of CIPM-2007, for checks against its published examples. */
export interface Cipm2007Terms {
	saturationVapourPressurePa: number;
	enhancementFactor: number;
	vapourMoleFraction: number;
	compressibility: number;
	dryAirMolarMassKgMol: number;
	densityKgM3: number;
}

/** Saturation vapour pressure over liquid water at temperatureK, Pa (CIPM-2007). */
export function saturationVapourPressure(temperatureK: number): number {
	const T = temperatureK;
	return Math.exp(PSV_A * T * T + PSV_B * T + PSV_C + PSV_D / T);
}

/** All terms of the CIPM-2007 moist-air density (Picard et al. 2008, eqs. 1-4 and appendix A). */
export function cipm2007(a: AirConditions): Cipm2007Terms {
	const t = requireInRange(a.temperatureC, 'temperatureC', AIR_LIMITS.temperatureC);
	const p = requireInRange(a.pressurePa, 'pressurePa', AIR_LIMITS.pressurePa);
	const h = requireInRange(a.relativeHumidity, 'relativeHumidity', { min: 0, max: 1 });
	const xCo2 = requireInRange(a.co2MoleFraction ?? DEFAULT_CO2_MOLE_FRACTION, 'co2MoleFraction', {
		min: 0,
		max: 0.01
	});
	const T = t + ZERO_CELSIUS_K;
	const Ma = (28.96546 + 12.011 * (xCo2 - CIPM_REFERENCE_CO2)) * 1e-3;
	const psv = saturationVapourPressure(T);
	const f = ENH_ALPHA + ENH_BETA * p + ENH_GAMMA * t * t;
	const xv = (h * f * psv) / p;
	const pT = p / T;
	const Z =
		1 -
		pT * (Z_A0 + Z_A1 * t + Z_A2 * t * t + (Z_B0 + Z_B1 * t) * xv + (Z_C0 + Z_C1 * t) * xv * xv) +
		pT * pT * (Z_D + Z_E * xv * xv);
	const rho = ((p * Ma) / (Z * CIPM_GAS_CONSTANT * T)) * (1 - xv * (1 - WATER_MOLAR_MASS / Ma));
	return {
		saturationVapourPressurePa: psv,
		enhancementFactor: f,
		vapourMoleFraction: xv,
		compressibility: Z,
		dryAirMolarMassKgMol: Ma,
		densityKgM3: rho
	};
}

/** Moist-air density, kg/m³, by CIPM-2007 with x_CO2 = 0.0004 unless given. */
export function airDensity(a: AirConditions): number {
	return cipm2007(a).densityKgM3;
}

/**
 * Dry air as an ideal gas, ρ = p / (R_d T), kg/m³, with R_d = DRY_AIR_GAS_CONSTANT
 * (ISA: 101 325 Pa, 288.15 K → 1.225 kg/m³).
 */
export function dryAirDensityIdeal(pressurePa: number, temperatureK: number): number {
	const p = requirePositive(pressurePa, 'pressurePa');
	const T = requirePositive(temperatureK, 'temperatureK');
	return p / (DRY_AIR_GAS_CONSTANT * T);
}
