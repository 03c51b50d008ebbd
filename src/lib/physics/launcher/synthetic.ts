// Synthetic calibration campaigns: shots generated through the same prediction path as the fit
// (predictShot: muzzleSpeed + flyToPlane) from known parameters, with seeded measurement noise.
// Used by the calibration tests and the fit benchmark, so both exercise the fit on data whose
// truth is known.

import { createRandom } from '../random';
import type { CalibrationShot, MeasurementSds } from './fit';
import {
	predictShot,
	type CalibrationParameters,
	type LauncherCalibration,
	type LauncherModel,
	type LauncherRig,
	type Projectile,
	type RangeConditions
} from './model';

export interface SyntheticCampaign {
	truth: CalibrationParameters;
	/** The model the truth is drawn from; default gas work with a constant C_D. */
	model?: LauncherModel;
	rig: LauncherRig;
	projectile: Projectile;
	sessions: RangeConditions[];
	/** Gauge readings cycled through, shot by shot, Pa. */
	fillPressuresPa: number[];
	shotsPerSession: number;
	/** True noise SDs: gauge reading error, chronograph and impact measurement. */
	noise: MeasurementSds;
	measure: { muzzleSpeed: boolean; downrangeDistanceM: number | null; impactHeight: boolean };
	seed: number;
}

/**
 * Shots of a campaign. The gauge reads the true fill pressure with an error N(0, σ_p); speeds
 * and impacts are predicted at the true pressure and read with their own errors.
 */
export function simulateCampaign(c: SyntheticCampaign): CalibrationShot[] {
	const random = createRandom(c.seed);
	const pressures = c.fillPressuresPa;
	const truth: LauncherCalibration = {
		model: c.model,
		parameters: c.truth,
		fitted: [],
		identifiable: [],
		covariance: [],
		fillPressureRangePa: { min: 0, max: Infinity }
	};
	const shots: CalibrationShot[] = [];
	c.sessions.forEach((session, si) => {
		for (let i = 0; i < c.shotsPerSession; i++) {
			const reading = pressures[(si * c.shotsPerSession + i) % pressures.length];
			const truePressure = reading + random.normal(0, c.noise.pressurePa);
			const predicted = predictShot(
				truth,
				{ rig: c.rig, projectile: c.projectile, session, fillGaugePa: truePressure },
				c.measure.downrangeDistanceM === null ? {} : { downrangeDistanceM: c.measure.downrangeDistanceM }
			);
			if (!predicted.ok) throw new Error(`synthetic shot does not leave the barrel: ${predicted.reason}`);
			const shot: CalibrationShot = {
				id: `${session.sessionId ?? 's'}-${i}`,
				rig: c.rig,
				projectile: c.projectile,
				session,
				fillGaugePa: reading
			};
			if (c.measure.muzzleSpeed) shot.muzzleSpeedMps = predicted.muzzleSpeedMps + random.normal(0, c.noise.speedMps);
			if (predicted.downrange)
				shot.downrange = {
					distanceM: predicted.downrange.distanceM,
					speedMps: predicted.downrange.speedMps + random.normal(0, c.noise.downrangeSpeedMps ?? c.noise.speedMps)
				};
			if (c.measure.impactHeight) {
				if (!predicted.impact.reached) throw new Error('synthetic shot does not reach the target plane');
				shot.impactHeightM = predicted.impact.heightM + random.normal(0, c.noise.impactM);
			}
			shots.push(shot);
		}
	});
	return shots;
}
