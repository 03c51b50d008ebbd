import { describe, expect, it } from 'vitest';
import { CURVE_MIN_SHOTS, MuzzleCurves } from './muzzle-curves';
import { calibratedMuzzleSpeed, neutralParameters, type ShotSetup } from './model';

// The rig and ball of the pub-ice35 campaign (shared/reference/campaigns), with valve-flow values
// of the size a fit finds for it.
const setup = (fillGaugePa: number): ShotSetup => ({
	rig: { reservoirM3: 0.003, deadM3: 5e-5, boreDiameterM: 0.0362, travelM: 1.5 },
	projectile: { massKg: 0.02059, diameterM: 0.035 },
	session: { targetDistanceM: 6, elevationDeg: 1.5, launchHeightM: 1.1, aimHeightM: 1.2, airDensityKgM3: 1.26, ambientPa: 100400, temperatureC: 4 },
	fillGaugePa
});
const model = { family: 'valve-flow' as const, drag: 'constant' as const };
const p = { ...neutralParameters(1e5), valveAreaM2: 2.2e-4, openingTimeS: 0.0168, frictionN: 2.4 };

describe('valve-flow muzzle curves (Chebyshev–Lobatto barycentric interpolation, Berrut & Trefethen 2004)', () => {
	const fills = Array.from({ length: CURVE_MIN_SHOTS + 20 }, (_, i) => 52e3 + (i * 148e3) / (CURVE_MIN_SHOTS + 19));
	const curves = new MuzzleCurves(model, fills.map(setup));

	it('read from the curve, every shot of a large session agrees with its own ODE solution to 1e-6 relative', () => {
		let worst = 0;
		for (const fill of [...fills, 60_123, 99_999, 187_654]) {
			const fromCurve = curves.speed(setup(fill), p, fill);
			const direct = calibratedMuzzleSpeed(model, p, setup(fill), fill);
			if (!direct.ok || typeof fromCurve !== 'number') throw new Error('expected both to leave the barrel');
			worst = Math.max(worst, Math.abs(fromCurve / direct.speedMps - 1));
		}
		expect(worst).toBeLessThan(1e-6);
	});

	it('pressures outside the session, and small sessions, are solved shot by shot', () => {
		expect(curves.speed(setup(30e3), p, 30e3)).toBeUndefined();
		const small = new MuzzleCurves(model, fills.slice(0, CURVE_MIN_SHOTS).map(setup));
		expect(small.speed(setup(fills[3]), p, fills[3])).toBeUndefined();
	});
});
