// Drag of a sphere as a function of its Reynolds number, and the viscosity of air that sets it
// (shared/design/physics.md §3; reference sheet §4). A constant C_D fitted at one range of speeds
// does not carry to another: across the range of a pneumatic launcher (Re ≈ 10⁴ to 5·10⁵) a
// smooth sphere passes through the drag crisis, where C_D falls from ≈ 0.45 to ≈ 0.1.
//
// Sphere drag: the correlation of F.A. Morrison, "An Introduction to Fluid Mechanics", Cambridge
// University Press 2013, in the form of his note "Data Correlation for Drag Coefficient for
// Sphere" (Michigan Technological University, 2016, eq. 1), reference sheet §4. The older 2010
// note ends with + Re^0.80/461 000 instead of the last term here; the two differ by up to 5 % at
// Re = 5·10⁵ (reference sheet §4 table), so the form matters.
//
// Viscosity: Sutherland's law in the form of ICAO Doc 7488 / ISO 2533 (reference sheet §4).

import { requireFinite, requireNonNegative, requirePositive } from './errors';

/** Sutherland's constant β_s of ICAO Doc 7488 / ISO 2533, kg/(m·s·K^½). */
export const SUTHERLAND_BETA = 1.458e-6;
/** Sutherland's temperature S of ICAO Doc 7488 / ISO 2533, K. */
export const SUTHERLAND_TEMPERATURE_K = 110.4;

/**
 * Largest Reynolds number Morrison states the correlation for (10⁶). Beyond it the formula is
 * still evaluated (it stays finite and positive, tending to 0.25 + a vanishing remainder) but it
 * is an extrapolation: use `sphereCorrelationInRange` to flag it to the user.
 */
export const SPHERE_CORRELATION_MAX_RE = 1e6;

/** Reynolds scales of the terms of Morrison's correlation (2013/16 form). */
const MORRISON_LOW_RE = 5;
const MORRISON_CRISIS_RE = 2.63e5;
const MORRISON_HIGH_RE = 1e6;
const LOG_LOW_RE = Math.log(MORRISON_LOW_RE);
const LOG_CRISIS_RE = Math.log(MORRISON_CRISIS_RE);
/** Exponent of the low-Re term, (Re/5)^1.52. */
const LOW_EXPONENT = 1.52;
/** −7.94 + 8: the crisis term r^−7.94/(1 + r^−8) rewritten as r^0.06/(1 + r^8). */
const CRISIS_EXPONENT = 0.06;
/** Stokes' law: C_D · Re → 24 as Re → 0 (G.G. Stokes 1851; the first term of the correlation). */
const STOKES_CD_RE = 24;

/**
 * Dynamic viscosity of air by Sutherland's law, μ = β_s T^1.5 / (T + S), Pa·s
 * (ICAO Doc 7488 / ISO 2533 form, β_s = 1.458e-6 kg/(m·s·K^½), S = 110.4 K; reference sheet §4).
 * Check: μ(288.15 K) = 1.78938e-5 Pa·s.
 */
export function sutherlandViscosity(temperatureK: number): number {
	const t = requirePositive(temperatureK, 'temperatureK');
	return (SUTHERLAND_BETA * t * Math.sqrt(t)) / (t + SUTHERLAND_TEMPERATURE_K);
}

/** Reynolds number Re = ρ |v| d / μ (dimensionless) of a body of diameter d moving at |v| through the air. */
export function reynoldsNumber(densityKgM3: number, speedMps: number, diameterM: number, viscosityPaS: number): number {
	return (
		(requireNonNegative(densityKgM3, 'densityKgM3') *
			Math.abs(requireFinite(speedMps, 'speedMps')) *
			requirePositive(diameterM, 'diameterM')) /
		requirePositive(viscosityPaS, 'viscosityPaS')
	);
}

/** Is Re inside the range Morrison's correlation is stated for (0 < Re ≤ 10⁶)? */
export function sphereCorrelationInRange(reynolds: number): boolean {
	return reynolds > 0 && reynolds <= SPHERE_CORRELATION_MAX_RE;
}

/**
 * C_D · Re of Morrison's correlation: the force form, finite for every Re ≥ 0 and equal to 24
 * (Stokes) at Re = 0. The drag F = ½ ρ C_D A |v|² equals (π/8) μ d |v| · (C_D Re), so a flight
 * that slows to rest relative to the air meets Stokes drag, not a division by zero.
 *
 * The crisis term 0.411 r^−7.94 / (1 + r^−8), r = Re/2.63e5, is evaluated as r^0.06 / (1 + r^8),
 * the same quantity without the overflow of r^−8 at small Re; the two fractional powers come from
 * one logarithm (log + 2 exp costs under half of 2 Math.pow, and the flight calls this at every
 * stage; the results agree with the literal formula to ~1e-15 relative). Not validated (the
 * flight's inner loop calls it): pass a finite Re ≥ 0.
 */
export function sphereDragTimesReynolds(reynolds: number): number {
	const logRe = Math.log(reynolds); // −∞ at Re = 0: both powers below are then 0
	const low = reynolds / MORRISON_LOW_RE;
	const lowPow = Math.exp(LOW_EXPONENT * (logRe - LOG_LOW_RE)); // (Re/5)^1.52
	const crisis = reynolds / MORRISON_CRISIS_RE;
	const crisis2 = crisis * crisis;
	const crisis4 = crisis2 * crisis2;
	const crisisPow = Math.exp(CRISIS_EXPONENT * (logRe - LOG_CRISIS_RE)); // (Re/2.63e5)^0.06
	const high = reynolds / MORRISON_HIGH_RE;
	const rest =
		(2.6 * low) / (1 + lowPow) + (0.411 * crisisPow) / (1 + crisis4 * crisis4) + (0.25 * high) / (1 + high);
	return STOKES_CD_RE + reynolds * rest;
}

/**
 * Drag coefficient of a smooth sphere by Morrison's correlation (2013/16 form; reference sheet §4):
 * C_D = 24/Re + 2.6(Re/5)/(1 + (Re/5)^1.52) + 0.411(Re/2.63e5)^−7.94/(1 + (Re/2.63e5)^−8)
 *       + 0.25(Re/10⁶)/(1 + Re/10⁶).
 * Stated for Re ≤ 10⁶ (SPHERE_CORRELATION_MAX_RE); beyond it the value is an extrapolation.
 * Re must be > 0 (C_D → ∞ as Re → 0; use sphereDragTimesReynolds for the force).
 */
export function sphereDragCoefficient(reynolds: number): number {
	const re = requirePositive(reynolds, 'reynolds');
	return sphereDragTimesReynolds(re) / re;
}
