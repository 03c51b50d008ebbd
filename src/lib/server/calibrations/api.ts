// The calibrations API (/api/v1/calibrations, issue 13): list, read, fit and approve, with the
// same roles as the calibration pages (every signed-in user reads, analysts fit drafts, leads
// approve). The fitting and approving are the reconciliation engine's (reconcile/calibrate.ts);
// this module validates the request, maps stored rows onto the API's shape (plain functions, also
// used by the tests) and holds the zod schemas the OpenAPI document is generated from.
import type { RequestEvent } from '@sveltejs/kit';
import { and, asc, desc, eq, isNull, type SQL } from 'drizzle-orm';
import { z } from 'zod';
import { DEFAULT_MODEL, DRAG_LAWS, LAUNCHER_FAMILIES } from '$lib/physics/launcher';
import { endpoint, fail, idParam, issuesOf, ok, requestJson, type ApiIssue } from '../api';
import { db } from '../db';
import { CALIBRATION_STATUSES, calibrations, projectiles, rangeSessions, rigs } from '../db/schema';
import { requireRole, requireUser } from '../guards';
import {
	approveCalibration,
	calibrationExclusionsOf,
	fitCalibration,
	ReconcileError,
	summaryOf,
	type CalibrationRow,
	type Executor,
	type StoredParameterKey
} from '../reconcile';
import { EXCLUSION_REASON_MAX_LENGTH } from '../reconcile/calibrate';

// ---------------------------------------------------------------------------------------------
// Schemas: the request body, and what comes back (the OpenAPI document is generated from these).


const id = z.int().positive();

export const calibrationModelChoice = z
	.object({
		family: z.enum(LAUNCHER_FAMILIES, { error: 'Choose the model family: gas-work or valve-flow.' }),
		drag: z
			.enum(DRAG_LAWS, { error: 'Choose the drag law: constant or sphere.' })
			.optional()
			.meta({ description: 'constant: a constant C_D (default); sphere: a factor on the sphere correlation C_D(Re), spherical projectiles only.' }),
		pressureSlope: z.boolean().optional().meta({ description: 'Gas work: fit the efficiency slope η1.' }),
		energyOffset: z.boolean().optional().meta({ description: 'Gas work: fit the energy term E.' }),
		dragCoefficient: z.boolean().optional().meta({ description: 'Fit the drag parameter (default: when the shots carry flight data).' }),
		elevationBias: z.boolean().optional().meta({ description: 'Fit the elevation bias δθ (default: when the shots carry impact heights).' })
	})
	.strict();

export const calibrationFitInput = z
	.object({
		rigId: z.int({ error: 'Give the rig by its id (a whole number).' }).positive('Give the rig by its id (a whole number).'),
		projectileId: z.int({ error: 'Give the projectile by its id (a whole number).' }).positive('Give the projectile by its id (a whole number).'),
		sessionIds: z
			.array(id, { error: 'Give the range sessions as a list of ids.' })
			.min(1, 'Choose at least one range session to fit.')
			.max(500, 'Fit at most 500 sessions at once.')
			.optional()
			.meta({ description: 'Range sessions of the pair to fit; left out, every live session of the pair.' }),
		model: z
			.union([z.literal('auto'), calibrationModelChoice])
			.default('auto')
			.meta({
				description:
					'"auto": every candidate model the data support is fitted and cross-validated, and the proposed one is kept (this takes a few seconds); or one named model.'
			}),
		excludedShots: z
			.array(
				z.object({
					shotId: id,
					reason: z
						.string({ error: 'Give a reason for leaving this shot out.' })
						.trim()
						.min(1, 'Give a reason for leaving this shot out; it is kept with the calibration.')
						.max(EXCLUSION_REASON_MAX_LENGTH, `Keep the reason to ${EXCLUSION_REASON_MAX_LENGTH} characters.`)
				})
			)
			.max(5000, 'Exclude at most 5000 shots.')
			.default([]),
		notes: z.string().trim().max(4000, 'Notes are at most 4000 characters.').nullish()
	})
	.strict();
export type CalibrationFitBody = z.output<typeof calibrationFitInput>;

const dateTime = z.iso.datetime();
const perKind = z.object({
	muzzleSpeed: z.number().nullable().meta({ unit: 'm/s' }),
	downrangeSpeed: z.number().nullable().meta({ unit: 'm/s' }),
	impactHeight: z.number().nullable().meta({ unit: 'm' })
});
const ratioPerKind = z.object({ muzzleSpeed: z.number().nullable(), downrangeSpeed: z.number().nullable(), impactHeight: z.number().nullable() });
const modelSchema = z.object({
	family: z.enum(LAUNCHER_FAMILIES),
	drag: z.enum(DRAG_LAWS).meta({ description: 'constant: dragCoefficient is C_D; sphere: it is a factor on the sphere correlation C_D(Re).' })
});
const STATUS = z.enum(CALIBRATION_STATUSES);

/** The stored parameter keys, their units and words (the OpenAPI document shows them). */
export const PARAMETER_UNITS: Record<StoredParameterKey, { unit: string | null; description: string }> = {
	eta0: { unit: null, description: 'Efficiency η0 (gas work), dimensionless.' },
	eta1: { unit: null, description: 'Efficiency slope η1 (gas work), dimensionless: change of η per relative change of fill pressure from pRefPa.' },
	energyOffsetJ: { unit: 'J', description: 'Energy term E (gas work), either sign.' },
	valveAreaM2: { unit: 'm²', description: 'Effective valve area C·A_v (valve flow).' },
	openingTimeS: { unit: 's', description: 'Valve opening time τ (valve flow).' },
	frictionN: { unit: 'N', description: 'Friction in the bore F (valve flow).' },
	dragCoefficient: { unit: null, description: 'C_D (constant drag law) or the factor on the sphere correlation (sphere drag law), dimensionless.' },
	elevationBiasDeg: { unit: '°', description: 'Elevation bias δθ, degrees.' }
};
const PARAMETER_KEYS = Object.keys(PARAMETER_UNITS) as StoredParameterKey[];

const parameterLine = (key: StoredParameterKey) => {
	const { unit, description } = PARAMETER_UNITS[key];
	const meta = unit ? { unit } : {};
	return z
		.object({
			status: z.enum(['fitted', 'held', 'not-determined']).meta({ description: 'fitted; held at a nominal value or zero (not fitted); or requested but not determined by the data (then held).' }),
			value: z.number().nullable().meta({ ...meta, description: 'The value predictions use.' }),
			standardError: z.number().nullable().meta({ ...meta, description: 'Null when not fitted.' }),
			confidence95: z
				.object({ lower: z.number().meta(meta), upper: z.number().meta(meta) })
				.nullable()
				.meta({ description: '95 % Student-t interval; null when not fitted.' }),
			unit: z.string().nullable().meta({ description: 'Unit of value, standard error and interval; null: dimensionless.' })
		})
		.optional()
		.meta({ description });
};

const candidate = z.object({
	key: z.string(),
	label: z.string(),
	model: modelSchema,
	terms: z.object({ pressureSlope: z.boolean(), energyOffset: z.boolean(), elevationBias: z.boolean(), drag: z.boolean() }),
	size: z.int().meta({ description: 'Number of fitted parameters.' }),
	converged: z.boolean(),
	message: z.string(),
	rmsByKind: perKind.meta({ description: 'In-sample RMS residual per kind.' }),
	heldOutRmsByKind: perKind.meta({ description: 'Cross-validated (held-out) RMS residual per kind.' }),
	heldOutRatioByKind: ratioPerKind.meta({ description: 'Held-out RMS ÷ noise floor per kind.' }),
	score: z.number().nullable().meta({ description: 'Pooled held-out score (1 = at the noise floor); null when it could not be computed.' }),
	failedFolds: z.int()
});
const comparison = z
	.object({
		method: z.enum(['leave-one-session-out', 'k-fold']).nullable(),
		folds: z.int(),
		noiseFloorByKind: perKind,
		candidates: z.array(candidate),
		proposed: z.string().nullable().meta({ description: 'Key of the proposed candidate.' }),
		reason: z.string().meta({ description: 'Why it was proposed, in plain words.' })
	})
	.nullable()
	.meta({ description: 'The candidate models compared by held-out error; null when one model was named.' });

export const calibrationListItem = z.object({
	id: z.int(),
	rigId: z.int(),
	projectileId: z.int(),
	status: STATUS,
	model: modelSchema,
	createdAt: dateTime,
	approvedAt: dateTime.nullable(),
	supersededAt: dateTime.nullable(),
	converged: z.boolean(),
	headline: z.object({
		eta0: z.number().nullable().meta({ description: 'η0 (gas work), dimensionless.' }),
		valveAreaM2: z.number().nullable().meta({ unit: 'm²', description: 'C·A_v (valve flow).' }),
		dragCoefficient: z.number().nullable(),
		muzzleSpeedRmsMps: z.number().nullable().meta({ unit: 'm/s', description: 'In-sample RMS of the muzzle speed residuals.' }),
		crossValidatedMuzzleSpeedRmsMps: z.number().nullable().meta({ unit: 'm/s' })
	})
});
export const calibrationList = z.object({ rows: z.array(calibrationListItem) });

export const calibrationDetail = z.object({
	id: z.int(),
	rigId: z.int(),
	projectileId: z.int(),
	status: STATUS,
	createdAt: dateTime,
	createdBy: z.int(),
	approvedAt: dateTime.nullable(),
	approvedBy: z.int().nullable(),
	supersededAt: dateTime.nullable(),
	notes: z.string().nullable(),
	model: modelSchema,
	fitted: z.array(z.enum(PARAMETER_KEYS as [StoredParameterKey, ...StoredParameterKey[]])).meta({ description: 'Parameters the fit was asked for (stored keys).' }),
	parameters: z.object(Object.fromEntries(PARAMETER_KEYS.map((k) => [k, parameterLine(k)])) as Record<StoredParameterKey, ReturnType<typeof parameterLine>>),
	correlation: z.object({
		parameters: z.array(z.string()).meta({ description: 'Fitted parameters (stored keys), in the order of the matrix.' }),
		matrix: z.array(z.array(z.number().nullable()))
	}),
	fillPressureRangePa: z.object({ min: z.number().meta({ unit: 'Pa' }), max: z.number().meta({ unit: 'Pa' }) }).meta({ description: 'Gauge fill pressures of the fitted shots.' }),
	pRefPa: z.number().meta({ unit: 'Pa', description: 'Reference pressure of the efficiency slope.' }),
	comparison,
	rmsByKind: perKind.meta({ description: 'In-sample RMS residual per kind.' }),
	crossValidation: z
		.object({ method: z.enum(['leave-one-session-out', 'k-fold']), folds: z.int(), failedFolds: z.int(), rmsByKind: perKind })
		.nullable()
		.meta({ description: 'Cross-validated RMS residual per kind; null when there were too few shots or sessions.' }),
	noiseFloorByKind: perKind.meta({ description: 'The scatter the measurements alone would give.' }),
	converged: z.boolean(),
	nUsed: z.object({ shots: z.int(), observations: z.int(), muzzleSpeed: z.int(), downrangeSpeed: z.int(), impactHeight: z.int() }),
	messages: z.object({
		message: z.string(),
		failure: z.string().nullable().meta({ description: 'When the solver stopped early: the cause.' }),
		notDetermined: z.array(z.object({ parameter: z.string(), reason: z.string(), heldAt: z.number() })),
		unused: z.array(z.object({ shotId: z.int(), reason: z.string() })).meta({ description: 'Shots the fit could not use, with the reason.' })
	}),
	sessionIds: z.array(z.int()),
	exclusions: z.array(z.object({ shotId: z.int(), reason: z.string() }))
});
export const approvedCalibration = calibrationDetail.extend({
	supersededCalibrationId: z.int().nullable().meta({ description: 'The pair’s previously approved calibration, now superseded.' }),
	recomputed: z.object({ sessions: z.int(), shots: z.int(), unpredictable: z.int() }).meta({ description: 'Residuals recomputed under this calibration.' })
});

export type CalibrationListItem = z.output<typeof calibrationListItem>;
export type CalibrationDetail = z.output<typeof calibrationDetail>;

// ---------------------------------------------------------------------------------------------
// Row → API shape.

const num = (v: unknown): number | null => (typeof v === 'number' && Number.isFinite(v) ? v : null);
const noKinds = { muzzleSpeed: null, downrangeSpeed: null, impactHeight: null };

function modelOfRow(row: CalibrationRow) {
	const m = row.parameters.model ?? summaryOf(row).model ?? DEFAULT_MODEL;
	return { family: m.family, drag: m.drag };
}

export function listItemOf(row: CalibrationRow): CalibrationListItem {
	const s = summaryOf(row);
	const p = row.parameters;
	return {
		id: row.id,
		rigId: row.rigId,
		projectileId: row.projectileId,
		status: row.status,
		model: modelOfRow(row),
		createdAt: row.createdAt.toISOString(),
		approvedAt: row.approvedAt?.toISOString() ?? null,
		supersededAt: row.supersededAt?.toISOString() ?? null,
		converged: s.converged !== false,
		headline: {
			eta0: num(p.eta0),
			valveAreaM2: num(p.valveAreaM2),
			dragCoefficient: num(p.dragCoefficient ?? s.held?.dragCoefficient),
			muzzleSpeedRmsMps: num(s.rmsByKind?.muzzleSpeed),
			crossValidatedMuzzleSpeedRmsMps: num(s.crossValidation?.rmsByKind?.muzzleSpeed)
		}
	};
}

export function detailOf(row: CalibrationRow, exclusions: { shotId: number; reason: string }[]): CalibrationDetail {
	const s = summaryOf(row);
	const p = row.parameters as Record<string, unknown>;
	const fittedKeys = new Set<string>(s.covarianceParameters ?? []);
	const notDetermined = new Map((s.notDetermined ?? []).map((n) => [n.parameter as string, n]));
	const parameters: Partial<CalibrationDetail['parameters']> = {};
	for (const key of PARAMETER_KEYS) {
		const stored = num(p[key]);
		const held = num(s.held?.[key]);
		const nd = notDetermined.get(key);
		if (stored === null && held === null && !nd) continue;
		const status = nd ? 'not-determined' : fittedKeys.has(key) ? 'fitted' : 'held';
		const ci = s.confidence95?.[key];
		parameters[key] = {
			status,
			value: stored ?? held ?? num(nd?.heldAt),
			standardError: status === 'fitted' ? num(row.standardErrors[key]) : null,
			confidence95: status === 'fitted' && ci && num(ci.lower) !== null && num(ci.upper) !== null ? { lower: ci.lower, upper: ci.upper } : null,
			unit: PARAMETER_UNITS[key].unit
		};
	}
	const c = s.comparison ?? null;
	return {
		id: row.id,
		rigId: row.rigId,
		projectileId: row.projectileId,
		status: row.status,
		createdAt: row.createdAt.toISOString(),
		createdBy: row.createdBy,
		approvedAt: row.approvedAt?.toISOString() ?? null,
		approvedBy: row.approvedBy ?? null,
		supersededAt: row.supersededAt?.toISOString() ?? null,
		notes: row.notes ?? null,
		model: modelOfRow(row),
		fitted: (row.fitted ?? []).filter((k): k is StoredParameterKey => (PARAMETER_KEYS as string[]).includes(k)),
		parameters: parameters as CalibrationDetail['parameters'],
		correlation: { parameters: [...(s.covarianceParameters ?? [])], matrix: (s.correlation ?? []).map((r) => r.map(num)) },
		fillPressureRangePa: { min: num(s.fillPressureRangePa?.min) ?? 0, max: num(s.fillPressureRangePa?.max) ?? 0 },
		pRefPa: num(p.pRefPa) ?? num(s.pRefPa) ?? 0,
		comparison: c
			? {
					method: c.method,
					folds: c.folds,
					noiseFloorByKind: c.noiseFloorByKind ?? noKinds,
					candidates: c.candidates.map((o) => ({
						key: o.key,
						label: o.label,
						model: { family: o.model.family, drag: o.model.drag },
						terms: o.terms,
						size: o.size,
						converged: o.converged,
						message: o.message,
						rmsByKind: o.rmsByKind,
						heldOutRmsByKind: o.heldOutRmsByKind,
						heldOutRatioByKind: o.heldOutRatioByKind,
						score: num(o.score),
						failedFolds: o.failedFolds
					})),
					proposed: c.proposed,
					reason: c.reason
				}
			: null,
		rmsByKind: s.rmsByKind ?? noKinds,
		crossValidation: s.crossValidation
			? { method: s.crossValidation.method, folds: s.crossValidation.folds, failedFolds: s.crossValidation.failedFolds, rmsByKind: s.crossValidation.rmsByKind }
			: null,
		noiseFloorByKind: s.noiseFloorByKind ?? noKinds,
		converged: s.converged !== false,
		nUsed: s.nUsed ?? { shots: 0, observations: 0, muzzleSpeed: 0, downrangeSpeed: 0, impactHeight: 0 },
		messages: {
			message: s.message ?? '',
			failure: s.failure ?? null,
			notDetermined: (s.notDetermined ?? []).map((n) => ({ parameter: n.parameter, reason: n.reason, heldAt: n.heldAt })),
			unused: s.unused ?? []
		},
		sessionIds: row.sessionIds ?? [],
		exclusions: exclusions.map((e) => ({ shotId: e.shotId, reason: e.reason }))
	};
}

// ---------------------------------------------------------------------------------------------
// Reads and writes.

export interface CalibrationFilters {
	rigId?: number | null;
	projectileId?: number | null;
	status?: (typeof CALIBRATION_STATUSES)[number] | null;
}

/** Calibrations matching the filters, newest first. */
export async function listCalibrationItems(tx: Executor, filters: CalibrationFilters): Promise<CalibrationListItem[]> {
	const where: SQL[] = [];
	if (filters.rigId) where.push(eq(calibrations.rigId, filters.rigId));
	if (filters.projectileId) where.push(eq(calibrations.projectileId, filters.projectileId));
	if (filters.status) where.push(eq(calibrations.status, filters.status));
	const rows = await tx
		.select()
		.from(calibrations)
		.where(and(...where))
		.orderBy(desc(calibrations.createdAt), desc(calibrations.id));
	return rows.map(listItemOf);
}

/** One calibration in the API's shape, or null when there is none with that id. */
export async function calibrationDetailOf(tx: Executor, calibrationId: number): Promise<CalibrationDetail | null> {
	const [row] = await tx.select().from(calibrations).where(eq(calibrations.id, calibrationId)).limit(1);
	if (!row) return null;
	return detailOf(row, await calibrationExclusionsOf(tx, calibrationId));
}

/** reconcile names exclusions "exclusions[2].reason"; the API's field is excludedShots.2.reason. */
function apiField(field: string | null) {
	if (!field) return field;
	return field.replace(/^exclusions\[(\d+)\]/, 'excludedShots.$1');
}

/** Fit a draft (validated body) for the user; answers the stored draft in the API's shape. */
export async function fitFromApi(tx: Executor, input: CalibrationFitBody, userId: number): Promise<CalibrationDetail> {
	const [[rig], [projectile]] = await Promise.all([
		tx.select({ id: rigs.id }).from(rigs).where(eq(rigs.id, input.rigId)).limit(1),
		tx.select({ id: projectiles.id }).from(projectiles).where(eq(projectiles.id, input.projectileId)).limit(1)
	]);
	if (!rig) throw new ReconcileError('rigId', `No rig with id ${input.rigId}.`, 404);
	if (!projectile) throw new ReconcileError('projectileId', `No projectile with id ${input.projectileId}.`, 404);
	const sessionIds =
		input.sessionIds ??
		(
			await tx
				.select({ id: rangeSessions.id })
				.from(rangeSessions)
				.where(and(eq(rangeSessions.rigId, input.rigId), eq(rangeSessions.projectileId, input.projectileId), isNull(rangeSessions.deletedAt)))
				.orderBy(asc(rangeSessions.id))
		).map((s) => s.id);
	if (sessionIds.length === 0) throw new ReconcileError('sessionIds', 'This rig and projectile have no range sessions to fit.');
	try {
		const { calibration } = await fitCalibration(tx, {
			rigId: input.rigId,
			projectileId: input.projectileId,
			sessionIds,
			model: input.model,
			exclusions: input.excludedShots,
			userId,
			notes: input.notes ?? null
		});
		return detailOf(calibration, await calibrationExclusionsOf(tx, calibration.id));
	} catch (e) {
		if (e instanceof ReconcileError) throw new ReconcileError(apiField(e.field), e.message, e.status);
		throw e;
	}
}

// ---------------------------------------------------------------------------------------------
// Request handling.

/**
 * Issues of a failed parse. A union ("auto" or a model object) fails as a whole in zod; when the
 * value had the shape of one branch (an object), its own issues name the field (model.family).
 */
function issuesOfFit(error: z.ZodError): ApiIssue[] {
	const out: ApiIssue[] = [];
	for (const issue of error.issues) {
		if (issue.code === 'invalid_union') {
			const branch = issue.errors.find((errs) => errs.length > 0 && errs.every((e) => e.path.length > 0));
			if (branch) {
				for (const e of branch) out.push({ path: [...issue.path, ...e.path].map(String).join('.'), message: e.message });
				continue;
			}
			out.push({ path: issue.path.map(String).join('.'), message: 'Give "auto" or a model object { family, drag?, … }.' });
			continue;
		}
		out.push(...issuesOf(new z.ZodError([issue])));
	}
	return out;
}

export async function parseFitBody(request: Request): Promise<CalibrationFitBody> {
	const body = await requestJson(request);
	const parsed = calibrationFitInput.safeParse(body);
	if (!parsed.success) {
		const issues = issuesOfFit(parsed.error);
		const fields = [...new Set(issues.map((i) => i.path || 'body'))];
		fail(400, `Some fields are missing or wrong: ${fields.join(', ')}.`, issues);
	}
	return parsed.data;
}

function queryInt(url: URL, name: string): number | null {
	const raw = url.searchParams.get(name)?.trim() ?? '';
	if (raw === '') return null;
	const n = Number(raw);
	if (!/^\d+$/.test(raw) || !Number.isSafeInteger(n) || n < 1) {
		const message = `URL parameter "${name}" must be a whole number from 1 to ${Number.MAX_SAFE_INTEGER}; got "${raw}".`;
		fail(400, message, [{ path: name, message }]);
	}
	return n;
}

function queryStatus(url: URL) {
	const raw = url.searchParams.get('status')?.trim() ?? '';
	if (raw === '') return null;
	if (!(CALIBRATION_STATUSES as readonly string[]).includes(raw)) {
		const message = `URL parameter "status" must be one of ${CALIBRATION_STATUSES.join(', ')}; got "${raw}".`;
		fail(400, message, [{ path: 'status', message }]);
	}
	return raw as (typeof CALIBRATION_STATUSES)[number];
}

const calibrationId = (event: RequestEvent) => idParam(event.params.id, 'calibration');

export const calibrationApi = {
	list: endpoint(async (event) => {
		await requireUser(event);
		const filters = { rigId: queryInt(event.url, 'rigId'), projectileId: queryInt(event.url, 'projectileId'), status: queryStatus(event.url) };
		return ok({ rows: await listCalibrationItems(db, filters) });
	}),
	get: endpoint(async (event) => {
		await requireUser(event);
		const id = calibrationId(event);
		const detail = await calibrationDetailOf(db, id);
		if (!detail) fail(404, `No calibration with id ${id}.`);
		return ok(detail);
	}),
	/** Fit a draft; with model "auto" this fits and cross-validates every candidate (seconds). */
	create: endpoint(async (event) => {
		const user = await requireRole(event, 'analyst');
		const input = await parseFitBody(event.request);
		return ok(await fitFromApi(db, input, user.id), 201);
	}),
	/** Approve a draft: supersedes the pair's approved calibration and recomputes its residuals. */
	approve: endpoint(async (event) => {
		const user = await requireRole(event, 'lead');
		const id = calibrationId(event);
		const result = await approveCalibration(db, id, user);
		const exclusions = await calibrationExclusionsOf(db, id);
		return ok({
			...detailOf(result.calibration, exclusions),
			supersededCalibrationId: result.superseded?.id ?? null,
			recomputed: result.recomputed
		});
	})
};
