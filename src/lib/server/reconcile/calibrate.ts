// Calibrations of a (rig, projectile): fit a draft over chosen sessions (physics.md §5), then a
// lead approves it, which supersedes the pair's previous calibration and recomputes the residuals
// of every session of the pair — in one transaction, so no reader ever sees the new calibration
// with old residuals, or two approved calibrations for a pair.
import { and, asc, desc, eq, inArray } from 'drizzle-orm';
import { PhysicsInputError } from '$lib/physics/errors';
import {
	DRAG_LAWS,
	LAUNCHER_FAMILIES,
	PARAMETER_FIELD,
	compareModels,
	fitLauncher,
	type CalibrationShot,
	type DragLaw,
	type FitLauncherOptions,
	type LauncherFamily,
	type LauncherFitResult,
	type MeasurementSds,
	type ModelComparison,
	type ParameterName,
	type ParameterReport
} from '$lib/physics/launcher';
import { hasRole, type Role } from '$lib/roles';
import { recordAudit } from '../audit';
import {
	calibrationExclusions,
	calibrations,
	projectiles,
	rangeSessions,
	rigs,
	shots,
	type CalibrationParameters
} from '../db/schema';
import { ReconcileError } from './errors';
import {
	ConditionsCache,
	launcherProjectile,
	launcherRig,
	PARAMETER_NAMES,
	STORED_KEY,
	summaryOf,
	type CalibrationRow,
	type CalibrationSummary,
	type Executor,
	type StoredComparison,
	type PerKind,
	type StoredParameterKey
} from './model';
import { recomputePredictions, sessionIdsOfPair, type RecomputeResult } from './predict';

/**
 * Measurement SDs used when the caller gives none [practice, invented for this lab; stored with
 * each calibration so a fit can be reproduced]:
 * - speed 0.1 m/s: an optical chronograph's reading scatter at these speeds;
 * - pressure 1 kPa: a digital fill gauge read to 0.01 bar;
 * - impact 10 mm: a marked impact read off the target face, together with the rig's own
 *   shot-to-shot scatter, which the fit cannot model and must therefore weight as noise.
 * Their overall scale does not move the parameters' standard errors (s² rescales them,
 * physics.md §5); their ratios weight the kinds against each other.
 */
export const DEFAULT_MEASUREMENT_SDS: MeasurementSds = { speedMps: 0.1, pressurePa: 1000, impactM: 0.01 };
/** calibration_exclusions.reason is VARCHAR(500). */
export const EXCLUSION_REASON_MAX_LENGTH = 500;

export interface ExclusionInput {
	shotId: number;
	/** Why the shot is left out; kept with the calibration. Required, non-blank. */
	reason: string;
}

/**
 * Which model to fit: 'auto' fits every candidate the data support, compares their
 * cross-validated errors and keeps the proposed one (physics.md §5); or one named model.
 */
export type ModelChoice =
	| 'auto'
	| {
			family: LauncherFamily;
			drag?: DragLaw;
			/** Gas work: fit η1. */
			pressureSlope?: boolean;
			/** Gas work: fit the energy term E. */
			energyOffset?: boolean;
			/** Fit the drag parameter (default: when the shots carry flight data). */
			dragCoefficient?: boolean;
			/** Fit δθ (default: when the shots carry impact heights). */
			elevationBias?: boolean;
	  };

export interface FitCalibrationInput {
	rigId: number;
	projectileId: number;
	sessionIds: readonly number[];
	/**
	 * Gas-work parameters to fit (the efficiency η0 is always fitted, listed or not); used when
	 * `model` is absent. Neither given: 'auto'.
	 */
	parameters?: readonly ParameterName[];
	model?: ModelChoice;
	exclusions: readonly ExclusionInput[];
	/** Who runs the fit (calibrations.created_by, audit). */
	userId: number;
	notes?: string | null;
	/** Defaults: DEFAULT_MEASUREMENT_SDS. */
	measurementSds?: Partial<MeasurementSds>;
	/** As fitLauncher's option: 'auto' leaves one session out when there are several. */
	crossValidation?: FitLauncherOptions['crossValidation'];
}

/** One row of the parameter table of the fit report. */
export interface ParameterLine {
	name: ParameterName;
	key: StoredParameterKey;
	label: string;
	unit: string;
	identifiable: boolean;
	/** Null when not determined (the value is then held: see heldAt). */
	value: number | null;
	standardError: number | null;
	confidence95: { lower: number; upper: number } | null;
	/** Plain reason when not determined. */
	reason: string | null;
	/** Value used for predictions when not determined (nominal C_D, zero bias…). */
	heldAt: number | null;
	atBound: 'lower' | 'upper' | null;
}

export interface FitReport {
	converged: boolean;
	message: string;
	parameters: ParameterLine[];
	summary: CalibrationSummary;
	/**
	 * The fit whose values were stored: when a requested parameter could not be determined it is
	 * a second fit with that parameter held, so the stored values do not lean on a number the
	 * data do not support. Per-shot residuals carry the shot id as a string in `id`.
	 */
	fit: LauncherFitResult;
}

export interface FitCalibrationResult {
	calibration: CalibrationRow;
	report: FitReport;
}

export interface ApprovalResult {
	calibration: CalibrationRow;
	/** The pair's previously approved calibration, now superseded; null when there was none. */
	superseded: CalibrationRow | null;
	recomputed: RecomputeResult & { sessions: number };
}

/** Refuse blank or over-long reasons and duplicate shots, naming the field, before any read or write. */
function checkExclusions(exclusions: readonly ExclusionInput[]) {
	const seen = new Set<number>();
	exclusions.forEach((e, i) => {
		if (!Number.isInteger(e.shotId)) throw new ReconcileError(`exclusions[${i}].shotId`, 'Choose the shot to exclude.');
		if (typeof e.reason !== 'string' || e.reason.trim() === '')
			throw new ReconcileError(
				`exclusions[${i}].reason`,
				`Give a reason for leaving shot ${e.shotId} out of the calibration; it is kept with the calibration.`
			);
		if (e.reason.trim().length > EXCLUSION_REASON_MAX_LENGTH)
			throw new ReconcileError(
				`exclusions[${i}].reason`,
				`Keep the reason for excluding shot ${e.shotId} to ${EXCLUSION_REASON_MAX_LENGTH} characters.`
			);
		if (seen.has(e.shotId))
			throw new ReconcileError(`exclusions[${i}].shotId`, `Shot ${e.shotId} is excluded twice; give it one reason.`);
		seen.add(e.shotId);
	});
}

function checkParameters(parameters: readonly ParameterName[]) {
	parameters.forEach((name, i) => {
		if (!PARAMETER_NAMES.includes(name))
			throw new ReconcileError(`parameters[${i}]`, `Unknown parameter "${String(name)}".`);
	});
}


function checkModel(model: ModelChoice | undefined, sphere: boolean) {
	if (model === undefined || model === 'auto') return;
	if (!LAUNCHER_FAMILIES.includes(model.family))
		throw new ReconcileError('model.family', `Choose the model family: ${LAUNCHER_FAMILIES.join(' or ')}.`);
	if (model.drag !== undefined && !DRAG_LAWS.includes(model.drag))
		throw new ReconcileError('model.drag', `Choose the drag law: ${DRAG_LAWS.join(' or ')}.`);
	if (model.drag === 'sphere' && !sphere)
		throw new ReconcileError('model.drag', 'The sphere drag correlation applies to spherical projectiles only.');
}

function measurementSdsOf(given: Partial<MeasurementSds> | undefined): MeasurementSds {
	const sds = { ...DEFAULT_MEASUREMENT_SDS, ...given };
	for (const [key, value] of Object.entries(sds)) {
		if (value === undefined) continue;
		// A gauge SD of 0 is allowed (no pressure error propagated); the others divide residuals.
		const zeroAllowed = key === 'pressurePa';
		if (!(Number.isFinite(value) && (zeroAllowed ? value >= 0 : value > 0)))
			throw new ReconcileError(
				`measurementSds.${key}`,
				`The measurement SD ${key} must be a ${zeroAllowed ? 'non-negative' : 'positive'} number.`
			);
	}
	return sds;
}

const finiteOrNull = (v: number | null | undefined) => (v !== null && v !== undefined && Number.isFinite(v) ? v : null);
const perKind = (k: PerKind): PerKind => ({
	muzzleSpeed: finiteOrNull(k.muzzleSpeed),
	downrangeSpeed: finiteOrNull(k.downrangeSpeed),
	impactHeight: finiteOrNull(k.impactHeight)
});

function runFit(shots: CalibrationShot[], sds: MeasurementSds, options: FitLauncherOptions): LauncherFitResult {
	try {
		return fitLauncher(shots, sds, options);
	} catch (e) {
		if (e instanceof PhysicsInputError)
			throw new ReconcileError('sessionIds', `The fit cannot start on these shots: ${e.message}`);
		throw e;
	}
}

/** The option that switches a parameter on (the family's own parameters have none). */
const OPTION_OF: Partial<Record<ParameterName, keyof FitLauncherOptions>> = {
	pressureSlope: 'pressureSlope',
	energyOffset: 'energyOffset',
	dragCoefficient: 'dragCoefficient',
	elevationBias: 'elevationBias'
};

/** The older request shape: a list of gas-work parameters. */
function legacyChoice(parameters: readonly ParameterName[]): ModelChoice {
	return {
		family: 'gas-work',
		drag: 'constant',
		pressureSlope: parameters.includes('pressureSlope'),
		energyOffset: parameters.includes('energyOffset'),
		dragCoefficient: parameters.includes('dragCoefficient'),
		elevationBias: parameters.includes('elevationBias')
	};
}

function optionsOfChoice(choice: Exclude<ModelChoice, 'auto'>): FitLauncherOptions {
	return {
		model: { family: choice.family, drag: choice.drag ?? 'constant' },
		pressureSlope: choice.family === 'gas-work' && choice.pressureSlope === true,
		energyOffset: choice.family === 'gas-work' && choice.energyOffset === true,
		dragCoefficient: choice.dragCoefficient,
		elevationBias: choice.elevationBias
	};
}

function optionsOfFit(fit: LauncherFitResult): FitLauncherOptions {
	const fitted = fit.calibration.fitted;
	return {
		model: fit.model,
		pressureSlope: fitted.includes('pressureSlope'),
		energyOffset: fitted.includes('energyOffset'),
		dragCoefficient: fitted.includes('dragCoefficient'),
		elevationBias: fitted.includes('elevationBias')
	};
}

function runComparison(
	shots: CalibrationShot[],
	sds: MeasurementSds,
	options: { sphere: boolean; crossValidation: FitLauncherOptions['crossValidation'] }
): { comparison: ModelComparison; proposed: LauncherFitResult } {
	try {
		const cv = options.crossValidation;
		const r = compareModels(shots, sds, { sphere: options.sphere, crossValidation: cv === false || cv === undefined ? 'auto' : cv });
		if (!r.proposed) throw new ReconcileError('sessionIds', `No model could be fitted to these shots: ${r.comparison.reason}`);
		return { comparison: r.comparison, proposed: r.proposed };
	} catch (e) {
		if (e instanceof PhysicsInputError)
			throw new ReconcileError('sessionIds', `The fit cannot start on these shots: ${e.message}`);
		throw e;
	}
}

/** JSON keeps no Infinity: a score that could not be computed is stored as null. */
function storableComparison(c: ModelComparison): StoredComparison {
	return {
		...c,
		noiseFloorByKind: perKind(c.noiseFloorByKind),
		candidates: c.candidates.map((o) => ({
			...o,
			score: finiteOrNull(o.score),
			rmsByKind: perKind(o.rmsByKind),
			heldOutRmsByKind: perKind(o.heldOutRmsByKind),
			heldOutRatioByKind: perKind(o.heldOutRatioByKind)
		}))
	};
}

/** A drag parameter that is not fitted: the nominal C_D, or the bare correlation (factor 1). */
function heldDrag(law: DragLaw, nominalDragCoefficient: number): number {
	return law === 'sphere' ? 1 : nominalDragCoefficient;
}

/** Value a parameter is held at when it is not fitted: nominal C_D, zero for the optional terms. */
function heldValue(name: ParameterName, nominalDragCoefficient: number, fitEfficiency: number) {
	if (name === 'dragCoefficient') return nominalDragCoefficient;
	if (name === 'efficiency') return fitEfficiency;
	return 0;
}

/**
 * Fit a draft calibration for (rig, projectile) over the shots of `sessionIds` (not deleted, not
 * excluded; misses give no impact height) and store it with its exclusions and an audit event.
 * A requested parameter the data cannot determine is reported with the reason and held at its
 * nominal value (C_D) or zero, and the others are fitted again without it. Validation errors
 * (ReconcileError, naming the field) come before anything is written.
 */
export async function fitCalibration(tx: Executor, input: FitCalibrationInput): Promise<FitCalibrationResult> {
	checkExclusions(input.exclusions);
	checkParameters(input.parameters ?? []);
	const sds = measurementSdsOf(input.measurementSds);
	const sessionIds = [...new Set(input.sessionIds)];
	if (sessionIds.length === 0) throw new ReconcileError('sessionIds', 'Choose at least one range session to fit.');

	const [[rig], [projectile], sessionRows] = await Promise.all([
		tx.select().from(rigs).where(eq(rigs.id, input.rigId)).limit(1),
		tx.select().from(projectiles).where(eq(projectiles.id, input.projectileId)).limit(1),
		tx.select().from(rangeSessions).where(inArray(rangeSessions.id, sessionIds))
	]);
	if (!rig) throw new ReconcileError('rigId', `No rig with id ${input.rigId}.`, 404);
	if (!projectile) throw new ReconcileError('projectileId', `No projectile with id ${input.projectileId}.`, 404);
	checkModel(input.model, projectile.shape === 'sphere');
	const sessionById = new Map(sessionRows.map((s) => [s.id, s]));
	for (const id of sessionIds) {
		const s = sessionById.get(id);
		if (!s || s.deletedAt) throw new ReconcileError('sessionIds', `No range session with id ${id}.`);
		if (s.rigId !== rig.id || s.projectileId !== projectile.id)
			throw new ReconcileError(
				'sessionIds',
				`Session "${s.title}" was fired with another rig or projectile; a calibration belongs to one pair.`
			);
	}

	const shotRows = await tx
		.select()
		.from(shots)
		.where(inArray(shots.sessionId, sessionIds))
		.orderBy(asc(shots.sessionId), asc(shots.sequence));
	const shotById = new Map(shotRows.map((s) => [s.id, s]));
	input.exclusions.forEach((e, i) => {
		if (!shotById.has(e.shotId))
			throw new ReconcileError(`exclusions[${i}].shotId`, `Shot ${e.shotId} is not in the chosen sessions.`);
	});
	const excluded = new Set(input.exclusions.map((e) => e.shotId));

	// CalibrationShot inputs, with each shot's own conditions when it has them.
	const left = { excluded: 0, deleted: 0, voided: 0, withoutMeasurement: 0, missesImpactDropped: 0 };
	const conditions = new ConditionsCache();
	const fitShots: CalibrationShot[] = [];
	const rigInput = launcherRig(rig);
	const projectileInput = launcherProjectile(projectile);
	for (const shot of shotRows) {
		if (shot.deletedAt) {
			left.deleted++;
			continue;
		}
		// Voided at the firing line (void and re-shoot): kept in the record, out of every fit.
		if (shot.voidedAt) {
			left.voided++;
			continue;
		}
		if (excluded.has(shot.id)) {
			left.excluded++;
			continue;
		}
		const session = sessionById.get(shot.sessionId)!;
		let shotConditions: ReturnType<ConditionsCache['of']>;
		try {
			shotConditions = conditions.of(session, shot);
		} catch (e) {
			if (!(e instanceof PhysicsInputError)) throw e;
			throw new ReconcileError(
				'sessionIds',
				`Shot ${shot.sequence} of session "${session.title}" has conditions the air-density model does not cover (${e.message}); exclude it or correct it.`
			);
		}
		const c: CalibrationShot = {
			id: String(shot.id),
			rig: rigInput,
			projectile: projectileInput,
			session: shotConditions,
			fillGaugePa: shot.fillGaugePa
		};
		if (shot.muzzleSpeedMps !== null && shot.muzzleSpeedMps > 0) c.muzzleSpeedMps = shot.muzzleSpeedMps;
		if (session.downrangeChronoM !== null && shot.downrangeSpeedMps !== null && shot.downrangeSpeedMps > 0)
			c.downrange = { distanceM: session.downrangeChronoM, speedMps: shot.downrangeSpeedMps };
		if (shot.miss) {
			if (shot.impactYM !== null) left.missesImpactDropped++;
		} else if (shot.impactYM !== null) c.impactHeightM = shot.impactYM;
		if (c.muzzleSpeedMps === undefined && c.downrange === undefined && c.impactHeightM === undefined) {
			left.withoutMeasurement++;
			continue;
		}
		fitShots.push(c);
	}
	if (fitShots.length === 0)
		throw new ReconcileError('sessionIds', 'The chosen sessions have no shots with a measured speed or impact to fit.');

	// Fit: 'auto' compares every candidate by held-out error and keeps the proposed one; a named
	// model is fitted as asked. When something requested is not determined, hold it and fit the
	// rest again.
	const sphere = projectile.shape === 'sphere';
	const crossValidation = input.crossValidation ?? 'auto';
	const choice: ModelChoice = input.model ?? (input.parameters ? legacyChoice(input.parameters) : 'auto');
	let comparison: ModelComparison | null = null;
	let first: LauncherFitResult;
	let requestedOptions: FitLauncherOptions;
	if (choice === 'auto') {
		const compared = runComparison(fitShots, sds, { sphere, crossValidation });
		comparison = compared.comparison;
		first = compared.proposed;
		requestedOptions = { ...optionsOfFit(first), crossValidation };
	} else {
		requestedOptions = { ...optionsOfChoice(choice), crossValidation };
		first = runFit(fitShots, sds, requestedOptions);
	}
	const requested = first.calibration.fitted;
	// Only the optional terms can be held; the family's own parameters stay fitted and reported.
	const firstUndetermined = first.parameters.filter((p) => !p.identifiable && OPTION_OF[p.name] !== undefined);
	const final =
		firstUndetermined.length > 0
			? runFit(fitShots, sds, {
					...requestedOptions,
					...Object.fromEntries(firstUndetermined.map((p) => [OPTION_OF[p.name]!, false])),
					start: { dragCoefficient: heldDrag(first.model.drag, projectile.nominalDragCoefficient) }
				})
			: first;

	const finalByName = new Map(final.parameters.map((p) => [p.name, p]));
	const reports = requested.map((name): ParameterReport => finalByName.get(name) ?? first.parameters.find((p) => p.name === name)!);
	const fitEfficiency = final.calibration.parameters.efficiency;
	const model = final.model;
	const lines: ParameterLine[] = reports.map((r) => {
		return {
			name: r.name,
			key: STORED_KEY[r.name],
			label: r.label,
			unit: r.unit,
			identifiable: r.identifiable,
			value: r.identifiable ? r.value : null,
			standardError: r.identifiable ? r.standardError : null,
			confidence95: r.identifiable ? r.confidence95 : null,
			reason: r.reason,
			heldAt: r.identifiable ? null : heldValue(r.name, projectile.nominalDragCoefficient, fitEfficiency),
			atBound: r.atBound
		};
	});

	// What the stored calibration predicts with: fitted values of the final fit, C_D nominal when
	// it was not fitted (so later changes of the projectile's nominal C_D do not alter it).
	const fp = final.calibration.parameters;
	const fittedFinal = final.calibration.fitted;
	const parameters: CalibrationParameters = { model, pRefPa: fp.pRefPa, dragCoefficient: fp.dragCoefficient };
	if (model.family === 'gas-work') parameters.eta0 = fp.efficiency;
	for (const name of fittedFinal) parameters[STORED_KEY[name]] = fp[PARAMETER_FIELD[name]];
	const standardErrors: Record<string, number | null> = Object.fromEntries(
		lines.map((l) => [l.key, finiteOrNull(l.standardError)])
	);
	const covariance = final.calibration.covariance.map((row) => row.map((v) => finiteOrNull(v))) as number[][];
	const confidence95: Record<string, { lower: number; upper: number }> = {};
	for (const l of lines) if (l.confidence95) confidence95[l.key] = l.confidence95;
	const held: Partial<Record<StoredParameterKey, number>> = {};
	if (!fittedFinal.includes('dragCoefficient')) held.dragCoefficient = fp.dragCoefficient;
	for (const l of lines) if (!l.identifiable && l.heldAt !== null && l.name !== 'efficiency') held[l.key] = l.heldAt;

	const converged = final.converged;
	const summary: CalibrationSummary = {
		model,
		comparison: comparison ? storableComparison(comparison) : null,
		failure: final.failure,
		unused: final.unused.map((u) => ({ shotId: Number(u.id), reason: u.reason })),
		converged,
		message: [final.message, ...firstUndetermined.map((p) => p.reason ?? '')].filter((m) => m !== '').join('; '),
		covarianceParameters: fittedFinal.map((n) => STORED_KEY[n]),
		correlation: final.correlation.map((row) => row.map((v) => finiteOrNull(v))),
		confidence95,
		notDetermined: lines
			.filter((l) => !l.identifiable)
			.map((l) => ({ parameter: l.key, reason: l.reason ?? 'not determined', heldAt: l.heldAt ?? 0 })),
		held,
		pRefPa: fp.pRefPa,
		fillPressureRangePa: final.calibration.fillPressureRangePa,
		nUsed: final.nUsed,
		left,
		rmsByKind: perKind(final.rmsByKind),
		noiseFloorByKind: perKind(final.noiseFloorByKind),
		crossValidation: final.crossValidation
			? { ...final.crossValidation, rmsByKind: perKind(final.crossValidation.rmsByKind) }
			: null,
		chiSquare: finiteOrNull(final.chiSquare),
		dof: final.dof,
		residualScale: finiteOrNull(final.residualScale),
		outliers: final.outliers.map((o) => ({ shotId: Number(o.id), kind: o.kind, standardized: o.standardized })),
		measurementSds: sds,
		iterations: first === final ? final.iterations : first.iterations + final.iterations
	};

	const calibration = await tx.transaction(async (inner) => {
		const [created] = await inner
			.insert(calibrations)
			.values({
				rigId: rig.id,
				projectileId: projectile.id,
				status: 'draft',
				fitted: requested.map((n) => STORED_KEY[n]),
				parameters,
				standardErrors,
				covariance,
				summary: summary as unknown as Record<string, unknown>,
				sessionIds,
				notes: input.notes ?? null,
				createdBy: input.userId
			})
			.$returningId();
		if (input.exclusions.length > 0)
			await inner.insert(calibrationExclusions).values(
				input.exclusions.map((e) => ({ calibrationId: created.id, shotId: e.shotId, reason: e.reason.trim() }))
			);
		const [row] = await inner.select().from(calibrations).where(eq(calibrations.id, created.id));
		await recordAudit(inner, {
			userId: input.userId,
			action: 'fit',
			entityType: 'calibration',
			entityId: created.id,
			after: {
				status: 'draft',
				rigId: rig.id,
				projectileId: projectile.id,
				sessionIds,
				fitted: row.fitted,
				parameters,
				standardErrors,
				converged,
				notDetermined: summary.notDetermined,
				exclusions: input.exclusions.map((e) => ({ shotId: e.shotId, reason: e.reason.trim() }))
			}
		});
		return row;
	});
	return { calibration, report: { converged, message: summary.message, parameters: lines, summary, fit: final } };
}

/** A calibration's exclusions with their reasons. */
export async function calibrationExclusionsOf(tx: Executor, calibrationId: number) {
	return tx
		.select({ shotId: calibrationExclusions.shotId, reason: calibrationExclusions.reason })
		.from(calibrationExclusions)
		.where(eq(calibrationExclusions.calibrationId, calibrationId))
		.orderBy(asc(calibrationExclusions.shotId));
}

/** Why a draft cannot be approved, or null when it can. */
function approvalBlocker(row: CalibrationRow): string | null {
	const summary = summaryOf(row);
	if (summary.converged === false) return 'This fit did not converge; fit again before approving.';
	// The family's own parameters must be determined: a muzzle speed resting on an undetermined
	// number would mean nothing. (Optional terms that were not determined were held, not fitted.)
	const core: { key: StoredParameterKey; label: string }[] =
		row.parameters.model?.family === 'valve-flow'
			? [
					{ key: 'valveAreaM2', label: 'valve area' },
					{ key: 'openingTimeS', label: 'valve opening time' }
				]
			: [{ key: 'eta0', label: 'efficiency' }];
	for (const { key, label } of core)
		if (row.standardErrors[key] === null || row.standardErrors[key] === undefined)
			return `The ${label} is not determined by this fit; it cannot be approved.`;
	return null;
}

/**
 * Approve a draft calibration (lead or higher; the role is checked here as well as by the
 * caller). In one transaction: the pair's approved calibration becomes superseded, this one
 * approved, the residuals of every session of the pair are recomputed under it, and an audit
 * event records before and after. Throws ReconcileError: 403 role, 404 unknown, 409 not a draft
 * or not approvable.
 */
export async function approveCalibration(
	tx: Executor,
	calibrationId: number,
	user: { id: number; role: Role }
): Promise<ApprovalResult> {
	if (!hasRole(user.role, 'lead'))
		throw new ReconcileError(null, 'Approving a calibration needs the Lead role or higher.', 403);
	// Which pair: read before the transaction opens (on the pool when `tx` is the client), so that
	// inside it only locking reads come before the sessions are locked — InnoDB takes a
	// transaction's snapshot at its first plain read, and the recomputation must see every shot
	// committed until then. A caller's own transaction has its snapshot already: call this first.
	const [target] = await tx
		.select({ rigId: calibrations.rigId, projectileId: calibrations.projectileId })
		.from(calibrations)
		.where(eq(calibrations.id, calibrationId))
		.limit(1);
	if (!target) throw new ReconcileError('calibrationId', `No calibration with id ${calibrationId}.`, 404);
	return tx.transaction(async (inner) => {
		// Lock the pair's sessions first, then every calibration of the pair, both in id order —
		// the order a shot being logged takes them in (its session for update, then the pair's
		// calibrations shared, shots.ts): a shot logged meanwhile either finishes first (and this
		// recomputation, reading after the locks, includes it) or waits and reads the new
		// calibration once this commits. Never a prediction under the old calibration written after
		// this recomputation; never a deadlock between the two, nor between two approvals.
		const sessionIds = await sessionIdsOfPair(inner, target.rigId, target.projectileId, { lock: true });
		const pair = await inner
			.select()
			.from(calibrations)
			.where(and(eq(calibrations.rigId, target.rigId), eq(calibrations.projectileId, target.projectileId)))
			.orderBy(asc(calibrations.id))
			.for('update');
		const current = pair.find((c) => c.id === calibrationId)!;
		if (current.status !== 'draft')
			throw new ReconcileError('calibrationId', `Only a draft can be approved; this calibration is ${current.status}.`, 409);
		const blocker = approvalBlocker(current);
		if (blocker) throw new ReconcileError('calibrationId', blocker, 409);

		const now = new Date();
		const previous = pair.find((c) => c.status === 'approved') ?? null;
		if (previous)
			await inner
				.update(calibrations)
				.set({ status: 'superseded', supersededAt: now })
				.where(and(eq(calibrations.rigId, target.rigId), eq(calibrations.projectileId, target.projectileId), eq(calibrations.status, 'approved')));
		await inner
			.update(calibrations)
			.set({ status: 'approved', approvedBy: user.id, approvedAt: now })
			.where(eq(calibrations.id, calibrationId));

		const recomputed = await recomputePredictions(inner, { sessionIds });

		const [calibration] = await inner.select().from(calibrations).where(eq(calibrations.id, calibrationId));
		const superseded = previous
			? ((await inner.select().from(calibrations).where(eq(calibrations.id, previous.id)))[0] ?? null)
			: null;
		await recordAudit(inner, {
			userId: user.id,
			action: 'approve',
			entityType: 'calibration',
			entityId: calibrationId,
			before: { status: current.status, approvedCalibrationId: previous?.id ?? null },
			after: {
				status: 'approved',
				approvedBy: user.id,
				approvedAt: now.toISOString(),
				supersededCalibrationId: previous?.id ?? null,
				recomputed: { sessions: sessionIds.length, shots: recomputed.shots, unpredictable: recomputed.unpredictable }
			}
		});
		return { calibration, superseded, recomputed: { ...recomputed, sessions: sessionIds.length } };
	});
}

/** Calibrations of a pair, newest first (for the calibration pages). */
export async function listCalibrations(tx: Executor, rigId: number, projectileId?: number) {
	return tx
		.select()
		.from(calibrations)
		.where(and(eq(calibrations.rigId, rigId), projectileId === undefined ? undefined : eq(calibrations.projectileId, projectileId)))
		.orderBy(desc(calibrations.createdAt), desc(calibrations.id));
}
