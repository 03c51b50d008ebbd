// A setup to predict (POST /api/v1/predictions): a rig and a projectile, each either from the
// registry by id or described inline, a fill pressure, and a session's geometry and conditions.
// Field names, units and bounds are those of the registry and session schemas, so a prediction
// accepts exactly what a session would.
import { z } from 'zod';
import { projectileInput, rangeSessionInput, rigInput } from './range';

/** The rig's part of the model: geometry, rating (the safety check) and nominal efficiency. */
export const rigGeometry = rigInput.pick({
	reservoirM3: true,
	deadM3: true,
	boreDiameterM: true,
	travelM: true,
	ratedPressurePa: true,
	nominalEfficiency: true
});

/** The projectile's part of the model. */
export const projectileProperties = projectileInput.pick({ massKg: true, diameterM: true, nominalDragCoefficient: true });

const session = rangeSessionInput.shape;

export const predictionInput = z
	.object({
		rigId: session.rigId.optional(),
		rig: rigGeometry.optional(),
		projectileId: session.projectileId.optional(),
		projectile: projectileProperties.optional(),
		fillGaugePa: z
			.number({ error: 'Fill pressure must be a number.' })
			.gte(0, 'Fill pressure must be at least 0 Pa.')
			.lte(50e6, 'Fill pressure must be at most 50000000 Pa.')
			.meta({ title: 'Fill pressure (gauge)', unit: 'Pa' }),
		targetDistanceM: session.targetDistanceM,
		elevationDeg: session.elevationDeg,
		azimuthDeg: session.azimuthDeg,
		launchHeightM: session.launchHeightM,
		aimHeightM: session.aimHeightM,
		downrangeChronoM: session.downrangeChronoM,
		temperatureC: session.temperatureC,
		pressurePa: session.pressurePa,
		relativeHumidity: session.relativeHumidity,
		windXMps: session.windXMps,
		windZMps: session.windZMps
	})
	.superRefine((s, ctx) => {
		if ((s.rigId == null) === (s.rig == null))
			ctx.addIssue({ code: 'custom', path: ['rigId'], message: 'Give exactly one of rigId (a rig of the registry) and rig (its geometry).' });
		if ((s.projectileId == null) === (s.projectile == null))
			ctx.addIssue({
				code: 'custom',
				path: ['projectileId'],
				message: 'Give exactly one of projectileId (a projectile of the registry) and projectile (its properties).'
			});
		if (s.downrangeChronoM != null && s.downrangeChronoM > s.targetDistanceM)
			ctx.addIssue({ code: 'custom', path: ['downrangeChronoM'], message: 'The downrange chronograph must stand between the muzzle and the target.' });
	});
export type PredictionInput = z.infer<typeof predictionInput>;
