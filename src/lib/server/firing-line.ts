// The fill-pressure trim the log page suggests after a shot: the speed still missing (the plan's
// required speed − the speed judged), divided by the approved calibration's slope dv0/dp_g at the
// shot's fill pressure (physics/launcher muzzleWithDerivatives, with the calibration in force as
// predictions use it: reconcile/predict.ts). For a plan judged at the target the missing speed is
// carried back to the muzzle in proportion (v_target/v_muzzle is nearly constant over a trim).
import { PhysicsInputError } from '$lib/physics/errors';
import { modelOf, muzzleWithDerivatives } from '$lib/physics/launcher';
import { db } from './db';
import type { testPlans, rangeSessions } from './db/schema';
import { calibrationInForce, ConditionsCache, launcherProjectile, launcherRig } from './reconcile/model';
import type { ShotWithPrediction } from './shots';

export type FillTrim =
	| { ok: true; fromShot: number; fillGaugePa: number; deltaPa: number; suggestedPa: number; slopeMpsPerPa: number; aboveRating: boolean; calibrationId: number }
	| { ok: false; reason: string };

export async function fillTrim(
	session: typeof rangeSessions.$inferSelect,
	plan: typeof testPlans.$inferSelect | null,
	allShots: ShotWithPrediction[]
): Promise<FillTrim | null> {
	const last = allShots.filter((s) => s.voidedAt === null && s.prediction?.judgedSpeedMps != null && s.muzzleSpeedMps !== null).at(-1);
	if (!plan || !last) return null;
	const inForce = await calibrationInForce(db, session.rigId, session.projectileId);
	if (inForce.uncalibrated || inForce.calibrationId === null) return { ok: false, reason: 'No approved calibration for this rig and projectile: no trim is suggested.' };
	try {
		const derived = muzzleWithDerivatives(modelOf(inForce.model), inForce.model.parameters, {
			rig: launcherRig(inForce.rig),
			projectile: launcherProjectile(inForce.projectile),
			session: new ConditionsCache().of(session, last),
			fillGaugePa: last.fillGaugePa
		});
		if (!derived || !(derived.perPressure > 0)) return { ok: false, reason: 'The calibration gives no usable slope at this fill pressure.' };
		const judged = last.prediction!.judgedSpeedMps!;
		const missingAtMuzzle = (plan.requiredSpeedMps - judged) * (last.muzzleSpeedMps! / judged);
		const deltaPa = missingAtMuzzle / derived.perPressure;
		const suggestedPa = last.fillGaugePa + deltaPa;
		return {
			ok: true,
			fromShot: last.sequence,
			fillGaugePa: last.fillGaugePa,
			deltaPa,
			suggestedPa,
			slopeMpsPerPa: derived.perPressure,
			aboveRating: suggestedPa > inForce.rig.ratedPressurePa,
			calibrationId: inForce.calibrationId
		};
	} catch (err) {
		if (err instanceof PhysicsInputError) return { ok: false, reason: err.message };
		throw err;
	}
}
