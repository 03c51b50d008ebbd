import { describe, expect, it } from 'vitest';
import { PhysicsInputError } from './errors';
import {
	efficiencyAt,
	fillPressureForMuzzleSpeed,
	muzzleSpeed,
	polytropicWork,
	type LauncherInput,
	type MuzzleSpeedInput,
	type MuzzleSpeedResult
} from './internal';

/** |actual − expected| ≤ half a unit in the last quoted decimal (values quoted rounded). */
function expectRounded(actual: number, expected: number, decimals: number): void {
	expect(Math.abs(actual - expected)).toBeLessThanOrEqual(0.5 * 10 ** -decimals + 1e-12);
}

function speed(r: MuzzleSpeedResult): number {
	if (!r.ok) throw new Error(r.reason);
	return r.speedMps;
}

describe('polytropicWork — textbook examples (reference sheet §1)', () => {
	it('Moran & Shapiro, Fundamentals of Eng. Thermodynamics, Ex. 2.1 (from memory): 3 bar, 0.1 → 0.2 m³: n = 1.5 17.5736 kJ, n = 1 20.7944 kJ, n = 0 30.000 kJ', () => {
		expectRounded(polytropicWork(3e5, 0.1, 0.2, 1.5) / 1e3, 17.5736, 4);
		expectRounded(polytropicWork(3e5, 0.1, 0.2, 1) / 1e3, 20.7944, 4);
		expectRounded(polytropicWork(3e5, 0.1, 0.2, 0) / 1e3, 30.0, 4);
	});

	it('Çengel & Boles, Thermodynamics, Ex. 4-3 isothermal compression (from memory): 0.4 → 0.1 m³ at 100 kPa: −55.4518 kJ', () => {
		expectRounded(polytropicWork(100e3, 0.4, 0.1, 1) / 1e3, -55.4518, 4);
	});

	it('reversible adiabatic compression, 1.02 bar, 0.015 m³ → 6.8 bar, γ 1.4: V2 = 0.003869 m³, work on the gas 2.7521 kJ (reference §1)', () => {
		const v2 = 0.015 * (1.02 / 6.8) ** (1 / 1.4);
		expectRounded(v2, 0.003869, 6);
		expectRounded(-polytropicWork(1.02e5, 0.015, v2, 1.4) / 1e3, 2.7521, 4);
	});

	it('is continuous through n = 1 (no cancellation for n just above 1)', () => {
		const iso = polytropicWork(7e5, 1e-3, 1.5e-3, 1);
		expect(Math.abs(polytropicWork(7e5, 1e-3, 1.5e-3, 1 + 1e-12) / iso - 1)).toBeLessThan(1e-11);
	});
});

// Reference sheet §1 "Launcher example [computed]": 6 bar gauge (P0 = 701 325 Pa), V0 = 1.0 L,
// d = 25 mm, L = 1.0 m, m = 20 g.
const LAUNCHER: MuzzleSpeedInput = {
	fillGaugePa: 6e5,
	ambientPa: 101325,
	reservoirM3: 1e-3,
	deadM3: 0,
	boreDiameterM: 0.025,
	travelM: 1,
	massKg: 0.02,
	efficiency: 1
};

/** The launcher of LAUNCHER with changes, without a fill pressure (for the inverse). */
function launcherWith(patch: Partial<LauncherInput>): LauncherInput {
	const { fillGaugePa: _fill, ...launcher } = LAUNCHER;
	return { ...launcher, ...patch };
}

/** NaN and ±Infinity readable in a test title. */
const label = (v: unknown) =>
	JSON.stringify(v, (_k, x) => (typeof x === 'number' && !Number.isFinite(x) ? String(x) : x));

describe('muzzleSpeed — launcher example (reference §1, computed)', () => {
	it('W_ad = 258.857 J, W_atm = 49.738 J, v_ad = 144.610 m/s', () => {
		const r = muzzleSpeed(LAUNCHER);
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expectRounded(r.gasWorkJ, 258.857, 3);
		expectRounded(r.atmosphereWorkJ, 49.738, 3);
		expectRounded(r.speedMps, 144.61, 3);
	});

	it('isothermal (n = 1): W_iso = 280.083 J, v_iso = 151.771 m/s', () => {
		const r = muzzleSpeed({ ...LAUNCHER, polytropicIndex: 1 });
		expect(r.ok && r.gasWorkJ).toBeTruthy();
		if (!r.ok) return;
		expectRounded(r.gasWorkJ, 280.083, 3);
		expectRounded(r.speedMps, 151.771, 3);
	});

	it('η = 0.6 (adiabatic): 102.750 m/s', () => {
		expectRounded(speed(muzzleSpeed({ ...LAUNCHER, efficiency: 0.6 })), 102.75, 3);
	});

	it('gauge pressure used as if absolute (the mistake the sheet warns of): 131.042 m/s', () => {
		expectRounded(speed(muzzleSpeed({ ...LAUNCHER, fillGaugePa: 6e5 - 101325 })), 131.042, 3);
	});

	it('a negative energy term (E/L < 0) adds |E| to the kinetic energy (physics.md §1: E has either sign)', () => {
		const base = muzzleSpeed(LAUNCHER);
		const r = muzzleSpeed({ ...LAUNCHER, lossN: -20 });
		if (!base.ok || !r.ok) throw new Error('expected both to leave the barrel');
		expect(r.kineticEnergyJ - base.kineticEnergyJ).toBeCloseTo(20 * LAUNCHER.travelM, 9);
	});

	it('friction: a loss force F takes F·L out of the kinetic energy', () => {
		const r = muzzleSpeed({ ...LAUNCHER, lossN: 20 });
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(r.lossWorkJ).toBe(20);
		expect(r.kineticEnergyJ).toBeCloseTo(258.85706122 - 49.73779307 - 20, 7);
	});
});

describe('muzzleSpeed — Lagrange gas-inertia correction (reference §2, computed; opt-in)', () => {
	it('air at 20 °C, R = 287.05: gas mass C = 8.334 g, v = 144.610 → 135.504 m/s with m + C/3', () => {
		const r = muzzleSpeed({ ...LAUNCHER, gasInertia: { gasTemperatureK: 293.15, gasConstantJKgK: 287.05 } });
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expectRounded(3 * (r.effectiveMassKg - LAUNCHER.massKg), 0.008334, 6);
		expectRounded(r.speedMps, 135.504, 3);
	});

	it('with the default gas constant (ISA dry air 287.05287) the answer rounds the same', () => {
		expectRounded(speed(muzzleSpeed({ ...LAUNCHER, gasInertia: { gasTemperatureK: 293.15 } })), 135.504, 3);
	});

	it('is off unless asked for', () => {
		const r = muzzleSpeed(LAUNCHER);
		expect(r.ok && r.effectiveMassKg).toBe(LAUNCHER.massKg);
	});
});

describe('muzzleSpeed — the projectile that stays in', () => {
	it('returns a typed failure, not NaN or a negative speed, when η W_gas ≤ W_atm + F L', () => {
		const r = muzzleSpeed({ ...LAUNCHER, fillGaugePa: 1e4 });
		expect(r).toMatchObject({ ok: false, code: 'does-not-leave-barrel' });
		expect(!r.ok && r.reason).toMatch(/does not leave the barrel/);
		expect(muzzleSpeed({ ...LAUNCHER, fillGaugePa: 0 }).ok).toBe(false);
		expect(muzzleSpeed({ ...LAUNCHER, lossN: 1e6 }).ok).toBe(false);
	});
});

describe('efficiencyAt — pressure slope η(p) = η0 + η1 (p − p_ref)/p_ref (physics.md §1)', () => {
	it('is η0 at p_ref and moves by η1 per relative pressure change', () => {
		const model = { eta0: 0.62, eta1: -0.04, pRefPa: 4e5 };
		expect(efficiencyAt(4e5, model)).toBe(0.62);
		expect(efficiencyAt(6e5, model)).toBeCloseTo(0.6, 15);
		expect(efficiencyAt(2e5, model)).toBeCloseTo(0.64, 15);
	});

	it('is constant without a slope, and needs p_ref with one', () => {
		expect(efficiencyAt(9e5, { eta0: 0.5 })).toBe(0.5);
		expect(() => efficiencyAt(1e5, { eta0: 0.5, eta1: 0.1 })).toThrow(PhysicsInputError);
	});
});

describe('fillPressureForMuzzleSpeed — closed-form inverse of muzzleSpeed for constant η', () => {
	it('gives back 6 bar for the 102.750 m/s of the η = 0.6 example, and round-trips exactly', () => {
		const launcher = launcherWith({ efficiency: 0.6 });
		const v = speed(muzzleSpeed({ ...launcher, fillGaugePa: 6e5 }));
		const p = fillPressureForMuzzleSpeed(launcher, v);
		expect(p.ok && Math.abs(p.fillGaugePa - 6e5)).toBeLessThan(1e-6);
	});

	it('round-trips with loss force, isothermal index and the gas-inertia correction', () => {
		const launcher = launcherWith({ efficiency: 0.7, lossN: 5, polytropicIndex: 1.2, gasInertia: { gasTemperatureK: 288 } });
		for (const v of [20, 80, 120]) {
			const p = fillPressureForMuzzleSpeed(launcher, v);
			expect(p.ok).toBe(true);
			if (!p.ok) return;
			expect(Math.abs(speed(muzzleSpeed({ ...launcher, fillGaugePa: p.fillGaugePa })) - v)).toBeLessThan(1e-9);
		}
	});

	it('says when the gas-inertia correction makes a speed unreachable at any pressure', () => {
		const launcher = launcherWith({ gasInertia: { gasTemperatureK: 293.15 } });
		expect(fillPressureForMuzzleSpeed(launcher, 2000)).toMatchObject({ ok: false, code: 'gas-inertia-limit' });
	});
});

describe('muzzleSpeed — bad input is a PhysicsInputError naming the field', () => {
	const cases: [string, Partial<MuzzleSpeedInput>][] = [
		['massKg', { massKg: 0 }],
		['massKg', { massKg: -0.02 }],
		['boreDiameterM', { boreDiameterM: 0 }],
		['reservoirM3', { reservoirM3: 0 }],
		['reservoirM3', { reservoirM3: -1e-3 }],
		['deadM3', { deadM3: -1e-6 }],
		['travelM', { travelM: 0 }],
		['efficiency', { efficiency: 0 }],
		['efficiency', { efficiency: 1.01 }],
		['efficiency', { efficiency: Number.NaN }],
		['fillGaugePa', { fillGaugePa: Number.NaN }],
		['fillGaugePa', { fillGaugePa: Number.POSITIVE_INFINITY }],
		['fillGaugePa', { fillGaugePa: -1 }],
		['ambientPa', { ambientPa: 0 }],
		['lossN', { lossN: Number.NaN }],
		['lossN', { lossN: -2e7 }],
		['polytropicIndex', { polytropicIndex: 0.9 }],
		['gasInertia.gasTemperatureK', { gasInertia: { gasTemperatureK: -10 } }]
	];
	for (const [field, patch] of cases) {
		it(`${field}: ${label(Object.values(patch)[0])}`, () => {
			try {
				muzzleSpeed({ ...LAUNCHER, ...patch });
				expect.unreachable();
			} catch (e) {
				expect(e).toBeInstanceOf(PhysicsInputError);
				expect((e as PhysicsInputError).field).toBe(field);
			}
		});
	}
});
