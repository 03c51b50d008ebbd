// What the model says for a setup (POST /api/v1/predictions): muzzle speed, the flight to the
// target plane and the air density, through the physics module's predictShot — the same path
// that predicts logged shots — under the calibration in force for a registry pair, or the
// nominal efficiency and drag coefficient otherwise, clearly marked uncalibrated.
import { airDensity } from '$lib/physics/air';
import {
	modelOf,
	predictShot,
	type CalibrationParameters,
	type LauncherCalibration,
	type LauncherModel,
	type LauncherRig,
	type Projectile
} from '$lib/physics/launcher';
import type { PredictionInput } from '$lib/schemas/prediction';
import { db } from './db';
import { calibrationInForce } from './reconcile';
import { nominalModel } from './reconcile/model';
import { projectiles, type Projectile as ProjectileRow } from './projectiles';
import { rigs, type Rig } from './rigs';

/** A refusal of the setup, naming the field at fault; the API answers it with `status`. */
export class PredictionError extends Error {
	constructor(
		public readonly field: string,
		message: string,
		public readonly status: 400 | 404 | 422 = 400
	) {
		super(message);
	}
}

type ModelRig = LauncherRig & { ratedPressurePa: number; nominalEfficiency: number };
type ModelProjectile = Projectile & { nominalDragCoefficient: number };

export type CalibrationUsed = {
	/** "calibrated": the pair's approved calibration; "uncalibrated": nominal values. */
	status: 'calibrated' | 'uncalibrated';
	calibrationId: number | null;
	approvedAt: Date | null;
	/** Family and drag law of the model used. */
	model: LauncherModel;
	parameters: CalibrationParameters;
	note: string;
};

export type SetupPrediction = {
	rig: { id: number | null; name: string | null };
	projectile: { id: number | null; name: string | null };
	calibration: CalibrationUsed;
	airDensityKgM3: number;
	/** Efficiency at this fill pressure (gas-work family; null for valve flow). */
	efficiency: number | null;
	muzzleSpeedMps: number;
	/** At the downrange chronograph, when the setup names one and the projectile reaches it. */
	downrange: { distanceM: number; speedMps: number } | null;
	/** At the target plane (heightM from the aim point, + up; lateralM + to the right). */
	target: { reached: boolean; timeS: number; heightM: number; heightAboveGroundM: number; lateralM: number; speedMps: number; downrangeM: number };
	outsideCalibratedPressures: boolean;
	warnings: string[];
};

async function registryRow<T extends { deletedAt: Date | null }>(find: Promise<T | null>, field: string, what: string, id: number) {
	const row = await find;
	if (!row) throw new PredictionError(field, `No ${what} with id ${id}.`, 404);
	if (row.deletedAt) throw new PredictionError(field, `The ${what} with id ${id} is deleted; restore it or describe it inline.`);
	return row;
}

const UNCALIBRATED_NOTE = 'Uncalibrated: the rig’s nominal efficiency and the projectile’s nominal drag coefficient.';

export async function predictSetup(input: PredictionInput): Promise<SetupPrediction> {
	const rigRow: Rig | null = input.rigId != null ? await registryRow(rigs.get(input.rigId), 'rigId', 'rig', input.rigId) : null;
	const projectileRow: ProjectileRow | null =
		input.projectileId != null ? await registryRow(projectiles.get(input.projectileId), 'projectileId', 'projectile', input.projectileId) : null;
	const rig: ModelRig = rigRow ?? input.rig!;
	const projectile: ModelProjectile = projectileRow ?? input.projectile!;

	// The app refuses a setup above the rig's rated working pressure (product brief, Safety).
	if (input.fillGaugePa > rig.ratedPressurePa)
		throw new PredictionError(
			'fillGaugePa',
			`The fill pressure ${input.fillGaugePa} Pa is above the rig’s rated working pressure of ${rig.ratedPressurePa} Pa; this setup is refused.`
		);

	let calibration: CalibrationUsed;
	let model: LauncherCalibration;
	if (rigRow && projectileRow) {
		const inForce = await calibrationInForce(db, rigRow.id, projectileRow.id);
		model = inForce.model;
		calibration = {
			status: inForce.uncalibrated ? 'uncalibrated' : 'calibrated',
			calibrationId: inForce.calibrationId,
			approvedAt: inForce.approvedAt,
			model: modelOf(model),
			parameters: { ...model.parameters },
			note: inForce.uncalibrated ? `${UNCALIBRATED_NOTE} No calibration of this pair is approved yet.` : `Calibration ${inForce.calibrationId}, approved for this rig and projectile.`
		};
	} else {
		model = nominalModel(rig, projectile);
		calibration = {
			status: 'uncalibrated',
			calibrationId: null,
			approvedAt: null,
			model: modelOf(model),
			parameters: { ...model.parameters },
			note: `${UNCALIBRATED_NOTE} Calibrations belong to a registry pair; give rigId and projectileId to use one.`
		};
	}

	const airDensityKgM3 = airDensity({ temperatureC: input.temperatureC, pressurePa: input.pressurePa, relativeHumidity: input.relativeHumidity });
	const result = predictShot(
		model,
		{
			rig: { reservoirM3: rig.reservoirM3, deadM3: rig.deadM3, boreDiameterM: rig.boreDiameterM, travelM: rig.travelM },
			projectile: { massKg: projectile.massKg, diameterM: projectile.diameterM },
			session: {
				targetDistanceM: input.targetDistanceM,
				elevationDeg: input.elevationDeg,
				azimuthDeg: input.azimuthDeg,
				launchHeightM: input.launchHeightM,
				aimHeightM: input.aimHeightM,
				airDensityKgM3,
				ambientPa: input.pressurePa,
				temperatureC: input.temperatureC,
				wind: { xMps: input.windXMps, zMps: input.windZMps }
			},
			fillGaugePa: input.fillGaugePa
		},
		input.downrangeChronoM != null ? { downrangeDistanceM: input.downrangeChronoM } : {}
	);
	if (!result.ok) throw new PredictionError('fillGaugePa', `The model cannot predict this setup: ${result.reason}`, 422);

	return {
		rig: { id: rigRow?.id ?? null, name: rigRow?.name ?? null },
		projectile: { id: projectileRow?.id ?? null, name: projectileRow?.name ?? null },
		calibration,
		airDensityKgM3,
		efficiency: result.efficiency,
		muzzleSpeedMps: result.muzzleSpeedMps,
		downrange: result.downrange,
		target: result.impact,
		outsideCalibratedPressures: result.outsideCalibratedPressures,
		warnings: result.warnings
	};
}
