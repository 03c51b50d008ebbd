// Reading the synthetic calibration campaigns of shared/reference/campaigns (their README): the
// end-to-end check of a calibration. Shared by the physics spec, the server's integration test
// and the benchmark; pure (the caller reads the file).

import { airDensity } from '../air';
import type { CalibrationShot, MeasurementSds } from './fit';
import type { LauncherRig, Projectile, RangeConditions } from './model';

export interface CampaignFile {
	campaign: string;
	rig: LauncherRig & { ratedGaugePa: number };
	projectile: Projectile & { shape: string };
	session: {
		targetDistanceM: number;
		elevationDeg: number;
		launchHeightM: number;
		aimHeightM: number;
		downrangeChronoM?: number | null;
		temperatureC: number;
		pressurePa: number;
		relativeHumidity: number;
		windXMps: number;
		windZMps: number;
	};
	airDensityKgM3: number;
	noise: { chronoMps: number; impactM: number; elevationDeg: number; gaugePa: number };
	noiseFloor: { muzzleSpeedMps: number; impactYM: number };
	shots: {
		sequence: number;
		fillGaugePa: number;
		muzzleSpeedMps: number | null;
		downrangeSpeedMps?: number | null;
		impactXM: number | null;
		impactYM: number | null;
		miss: boolean;
	}[];
}

export const CAMPAIGN_FILES = ['pub-ice35.json', 'pub-ice45.json', 'pub-nylon40.json', 'pub-steel20.json'] as const;

export function campaignConditions(c: CampaignFile): RangeConditions {
	const s = c.session;
	return {
		sessionId: c.campaign,
		targetDistanceM: s.targetDistanceM,
		elevationDeg: s.elevationDeg,
		launchHeightM: s.launchHeightM,
		aimHeightM: s.aimHeightM,
		airDensityKgM3: airDensity({ temperatureC: s.temperatureC, pressurePa: s.pressurePa, relativeHumidity: s.relativeHumidity }),
		ambientPa: s.pressurePa,
		temperatureC: s.temperatureC,
		wind: { xMps: s.windXMps, zMps: s.windZMps }
	};
}

/** The campaign's shots as calibration shots (misses keep their speeds, lose their impact). */
export function campaignShots(c: CampaignFile): (CalibrationShot & { sequence: number })[] {
	const session = campaignConditions(c);
	const rig: LauncherRig = {
		reservoirM3: c.rig.reservoirM3,
		deadM3: c.rig.deadM3,
		boreDiameterM: c.rig.boreDiameterM,
		travelM: c.rig.travelM
	};
	const projectile: Projectile = { massKg: c.projectile.massKg, diameterM: c.projectile.diameterM };
	return c.shots.map((s) => ({
		id: String(s.sequence),
		sequence: s.sequence,
		rig,
		projectile,
		session,
		fillGaugePa: s.fillGaugePa,
		muzzleSpeedMps: s.muzzleSpeedMps ?? undefined,
		downrange:
			s.downrangeSpeedMps != null && c.session.downrangeChronoM
				? { distanceM: c.session.downrangeChronoM, speedMps: s.downrangeSpeedMps }
				: undefined,
		impactHeightM: !s.miss && s.impactYM !== null ? s.impactYM : undefined
	}));
}

/**
 * The campaign's instrument noise as measurement SDs. The impact SD adds the elevation's
 * shot-to-shot scatter carried to the target plane (D·σθ, small angles) to the reading's own.
 */
export function campaignSds(c: CampaignFile): MeasurementSds {
	const elevationM = c.session.targetDistanceM * ((c.noise.elevationDeg * Math.PI) / 180);
	return { speedMps: c.noise.chronoMps, pressurePa: c.noise.gaugePa, impactM: Math.hypot(c.noise.impactM, elevationM) };
}
