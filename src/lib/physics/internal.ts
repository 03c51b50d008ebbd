// Internal ballistics: muzzle speed of a reservoir-fed pneumatic launcher from an energy balance
// (shared/design/physics.md §1; reference sheet §1-2). All SI: Pa, m³, m, kg, J, N, m/s.
//
//   P0 = p_g + p_a,  V0 = V_r + V_d,  Vf = V0 + A_b L,  A_b = π d_b² / 4
//   W_gas = P0 V0 /(n−1) · [1 − (V0/Vf)^(n−1)]     (polytropic pV^n = const; P0 V0 ln(Vf/V0) at n = 1)
//   W_atm = p_a A_b L                              (Rohrbach, Buresh & Madsen, Am. J. Phys. 80 (2012) 24, eq. 3)
//   ½ m v² = η W_gas − W_atm − F L                 (energy balance; η fitted per rig)
//
// The polytropic work is the standard textbook result (e.g. Moran & Shapiro, Fundamentals of
// Engineering Thermodynamics, §2.2; also Encyclopaedia Britannica 11th ed. (1911), "Ballistics",
// eq. 9); pressures must be absolute.

import { DRY_AIR_GAS_CONSTANT } from './air';
import {
	requireFinite,
	requireInRange,
	requireNonNegative,
	requirePositive
} from './errors';

/** Ratio of specific heats of dry air, κ = 1.4 (ISO 2533:1975 Table 1): adiabatic expansion. */
export const AIR_POLYTROPIC_INDEX = 1.4;
/**
 * Accepted polytropic indices: 1 (isothermal) up to 5/3 (adiabatic monatomic gas, e.g. helium),
 * with margin; anything else is a typo, not a gas.
 */
const POLYTROPIC_INDEX_RANGE = { min: 1, max: 2 } as const;
/**
 * Upper bounds far beyond any launcher (bird-strike air cannons included), so every product in
 * the energy balance stays finite; lower bounds are the physical ones of each field.
 */
const LAUNCHER_LIMITS = {
	pressurePa: 1e9,
	volumeM3: 100,
	lengthM: 100,
	massKg: 1000,
	forceN: 1e7
} as const;
/** Efficiency is a fraction of the ideal gas work: 0 < η ≤ 1 (physics.md §1). */
const EFFICIENCY_RANGE = { min: 0, max: 1, minExclusive: true } as const;

/** Lagrange gas-inertia correction (reference sheet §2): opt-in, an upper bound on the effect. */
export interface GasInertia {
	/** Temperature of the gas in the reservoir at fill, K. */
	gasTemperatureK: number;
	/** Specific gas constant, J/(kg·K); default dry air (DRY_AIR_GAS_CONSTANT). */
	gasConstantJKgK?: number;
}

export interface MuzzleSpeedInput {
	/** Fill pressure read on the gauge (relative to ambient), Pa. */
	fillGaugePa: number;
	/** Ambient (barometric) pressure, Pa. */
	ambientPa: number;
	/** Reservoir gas volume, m³. */
	reservoirM3: number;
	/** Dead volume between valve and projectile base, m³. */
	deadM3: number;
	boreDiameterM: number;
	/** Projectile travel in the barrel, m. */
	travelM: number;
	massKg: number;
	/** Fitted efficiency η, 0 < η ≤ 1 (use efficiencyAt for a pressure-dependent η). */
	efficiency: number;
	/**
	 * The energy term E spread over the travel, E/L, N; default 0. Either sign (physics.md §1):
	 * positive is friction-like loss, negative means the simple expansion under-states the work.
	 */
	lossN?: number;
	/** Polytropic index n; default 1.4 (adiabatic air), 1 = isothermal. */
	polytropicIndex?: number;
	/**
	 * Opt-in Lagrange correction: effective mass m + C/3 with C the gas mass (reference §2).
	 * Off by default; for a wide reservoir feeding a narrow barrel it overestimates the gas's
	 * kinetic energy, so it is an upper bound on the correction.
	 */
	gasInertia?: GasInertia;
}

/** The launcher without a fill pressure: what the inverse helpers and the solvers work on. */
export type LauncherInput = Omit<MuzzleSpeedInput, 'fillGaugePa'>;

export type MuzzleSpeedResult =
	| {
			ok: true;
			speedMps: number;
			/** Ideal polytropic work of the gas, before efficiency, J. */
			gasWorkJ: number;
			/** Work pushing the outside air out of the barrel, J. */
			atmosphereWorkJ: number;
			/** The energy term E = (E/L)·L, J (either sign). */
			lossWorkJ: number;
			kineticEnergyJ: number;
			/** m, or m + C/3 with the gas-inertia correction, kg. */
			effectiveMassKg: number;
	  }
	| { ok: false; code: 'does-not-leave-barrel'; reason: string };

/** Validated launcher geometry and losses (everything except the fill pressure). */
interface Launcher {
	ambientPa: number;
	startVolumeM3: number;
	finalVolumeM3: number;
	atmosphereWorkJ: number;
	lossWorkJ: number;
	massKg: number;
	efficiency: number;
	n: number;
	gasInertia: Required<GasInertia> | null;
}

function launcher(i: LauncherInput): Launcher {
	const ambientPa = positiveUpTo(i.ambientPa, 'ambientPa', LAUNCHER_LIMITS.pressurePa);
	const reservoir = positiveUpTo(i.reservoirM3, 'reservoirM3', LAUNCHER_LIMITS.volumeM3);
	const dead = requireInRange(i.deadM3, 'deadM3', { min: 0, max: LAUNCHER_LIMITS.volumeM3 });
	const bore = positiveUpTo(i.boreDiameterM, 'boreDiameterM', LAUNCHER_LIMITS.lengthM);
	const travel = positiveUpTo(i.travelM, 'travelM', LAUNCHER_LIMITS.lengthM);
	const massKg = positiveUpTo(i.massKg, 'massKg', LAUNCHER_LIMITS.massKg);
	const efficiency = requireInRange(i.efficiency, 'efficiency', EFFICIENCY_RANGE);
	const lossN = requireInRange(i.lossN ?? 0, 'lossN', { min: -LAUNCHER_LIMITS.forceN, max: LAUNCHER_LIMITS.forceN });
	const n = requireInRange(i.polytropicIndex ?? AIR_POLYTROPIC_INDEX, 'polytropicIndex', POLYTROPIC_INDEX_RANGE);
	const sweptM3 = ((Math.PI * bore * bore) / 4) * travel;
	const startVolumeM3 = reservoir + dead;
	return {
		ambientPa,
		startVolumeM3,
		finalVolumeM3: startVolumeM3 + sweptM3,
		atmosphereWorkJ: ambientPa * sweptM3,
		lossWorkJ: lossN * travel,
		massKg,
		efficiency,
		n,
		gasInertia: i.gasInertia ? validGasInertia(i.gasInertia) : null
	};
}

function positiveUpTo(value: number, field: string, max: number): number {
	requirePositive(value, field);
	return requireInRange(value, field, { min: 0, max });
}

function validGasInertia(g: GasInertia): Required<GasInertia> {
	return {
		gasTemperatureK: requirePositive(g.gasTemperatureK, 'gasInertia.gasTemperatureK'),
		gasConstantJKgK: requirePositive(g.gasConstantJKgK ?? DRY_AIR_GAS_CONSTANT, 'gasInertia.gasConstantJKgK')
	};
}

/**
 * Work per unit start pressure, W/P0 = V0 · [1 − (V0/Vf)^(n−1)]/(n−1), m³ (V0 ln(Vf/V0) at n = 1).
 * Written with expm1/log so that n close to 1 keeps full precision instead of cancelling.
 */
function workPerPascal(v0: number, vf: number, n: number): number {
	const logRatio = Math.log(vf / v0);
	if (n === 1) return v0 * logRatio;
	return (v0 * -Math.expm1(-(n - 1) * logRatio)) / (n - 1);
}

/**
 * Work done by a gas expanding (or, negative, compressed) polytropically pV^n = const from
 * (p0, V0) to Vf, J. Any n ≥ 0 (n = 0 isobaric, n = 1 isothermal, n = γ adiabatic).
 */
export function polytropicWork(p0Pa: number, v0M3: number, vfM3: number, n: number): number {
	requirePositive(p0Pa, 'p0Pa');
	requirePositive(v0M3, 'v0M3');
	requirePositive(vfM3, 'vfM3');
	requireNonNegative(n, 'polytropicIndex');
	return p0Pa * workPerPascal(v0M3, vfM3, n);
}

/** Gas mass in the reservoir and dead volume at start, C = P0 V0 /(R T), kg (reference §2). */
function gasMassKg(L: Launcher, absolutePa: number): number {
	if (!L.gasInertia) return 0;
	return (absolutePa * L.startVolumeM3) / (L.gasInertia.gasConstantJKgK * L.gasInertia.gasTemperatureK);
}

/** Muzzle speed from the energy balance of physics.md §1, or a typed failure if it stays in. */
export function muzzleSpeed(i: MuzzleSpeedInput): MuzzleSpeedResult {
	const L = launcher(i);
	const fillGaugePa = requireInRange(i.fillGaugePa, 'fillGaugePa', { min: 0, max: LAUNCHER_LIMITS.pressurePa });
	const absolutePa = fillGaugePa + L.ambientPa;
	const gasWorkJ = absolutePa * workPerPascal(L.startVolumeM3, L.finalVolumeM3, L.n);
	const kineticEnergyJ = L.efficiency * gasWorkJ - L.atmosphereWorkJ - L.lossWorkJ;
	if (!(kineticEnergyJ > 0)) {
		return {
			ok: false,
			code: 'does-not-leave-barrel',
			reason:
				`The projectile does not leave the barrel: η·W_gas = ${(L.efficiency * gasWorkJ).toFixed(3)} J ` +
				`does not exceed the work against the outside air (${L.atmosphereWorkJ.toFixed(3)} J)` +
				` and the energy term (${L.lossWorkJ.toFixed(3)} J).`
		};
	}
	const effectiveMassKg = L.massKg + gasMassKg(L, absolutePa) / 3;
	return {
		ok: true,
		speedMps: Math.sqrt((2 * kineticEnergyJ) / effectiveMassKg),
		gasWorkJ,
		atmosphereWorkJ: L.atmosphereWorkJ,
		lossWorkJ: L.lossWorkJ,
		kineticEnergyJ,
		effectiveMassKg
	};
}

/**
 * A calibration's efficiency, optionally with a pressure slope (physics.md §1):
 * η(p_g) = η0 + η1 (p_g − p_ref)/p_ref, with p_ref the mean fill pressure of the fitted shots.
 */
export interface EfficiencyModel {
	eta0: number;
	/** Slope per relative pressure change; default 0 (constant η). */
	eta1?: number;
	/** Reference gauge pressure of the slope, Pa; required when eta1 is non-zero. */
	pRefPa?: number;
}

/** η at fill gauge pressure p_g. The caller's muzzleSpeed refuses a result outside (0, 1]. */
export function efficiencyAt(fillGaugePa: number, model: EfficiencyModel): number {
	requireNonNegative(fillGaugePa, 'fillGaugePa');
	const eta0 = requireInRange(model.eta0, 'eta0', EFFICIENCY_RANGE);
	const eta1 = requireFinite(model.eta1 ?? 0, 'eta1');
	if (eta1 === 0) return eta0;
	const pRef = requirePositive(model.pRefPa ?? Number.NaN, 'pRefPa');
	return eta0 + (eta1 * (fillGaugePa - pRef)) / pRef;
}

export type FillPressureForSpeed =
	| { ok: true; fillGaugePa: number }
	| { ok: false; code: 'gas-inertia-limit'; reason: string };

/**
 * Inverse of muzzleSpeed for a constant η: the gauge fill pressure that gives `speedMps`, Pa.
 * W_gas is proportional to P0, so ½ m_eff v² + W_atm + F L = η P0 (W/P0) solves in closed form;
 * with the gas-inertia term m_eff = m + P0 V0/(3RT) it stays linear in P0, and has no solution
 * at or above v² = 6 R T η (W/P0)/V0 (the gas cannot outrun itself). speedMps = 0 gives the
 * pressure at which the projectile just leaves the barrel.
 */
export function fillPressureForMuzzleSpeed(i: LauncherInput, speedMps: number): FillPressureForSpeed {
	const L = launcher(i);
	const v = requireNonNegative(speedMps, 'speedMps');
	const perPascal = L.efficiency * workPerPascal(L.startVolumeM3, L.finalVolumeM3, L.n);
	const inertiaPerPascal = L.gasInertia
		? (L.startVolumeM3 * v * v) / (6 * L.gasInertia.gasConstantJKgK * L.gasInertia.gasTemperatureK)
		: 0;
	const denominator = perPascal - inertiaPerPascal;
	if (!(denominator > 0)) {
		return {
			ok: false,
			code: 'gas-inertia-limit',
			reason: `With the gas-inertia correction no fill pressure reaches ${v} m/s: the gas itself would have to move faster.`
		};
	}
	const absolutePa = (0.5 * L.massKg * v * v + L.atmosphereWorkJ + L.lossWorkJ) / denominator;
	return { ok: true, fillGaugePa: Math.max(0, absolutePa - L.ambientPa) };
}

/** Rejects a launcher description early (used by solvers before they start iterating). */
export function validateLauncher(i: LauncherInput): void {
	launcher(i);
}
