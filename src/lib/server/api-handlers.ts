// The handlers of the REST API (/api/v1): each checks the caller's role itself, validates with
// the shared zod schemas, calls one domain function and answers JSON. Route files only pick
// handlers from here. Who may write mirrors the pages: registries of rigs and projectiles
// analyst+, test plans lead+, sessions and shot logging range officer+, shot edits analyst+
// (closed sessions: lead, enforced in sessions.ts); every read needs a signed-in viewer.
import type { RequestEvent } from '@sveltejs/kit';
import { z } from 'zod';
import { airDensity } from '$lib/physics/air';
import type { Role } from '$lib/roles';
import { predictionInput } from '$lib/schemas/prediction';
import { EARLIEST_DATETIME, LATEST_DATETIME, projectileInput, rangeSessionInput, rigInput, shotInput, shotUpdate, shotVoid, testPlanInput } from '$lib/schemas/range';
import { endpoint, fail, idParam, ok, parseBody, requestJson } from './api';
import { requireRole, requireUser } from './guards';
import { boundedInt, MAX_PAGE, MAX_PAGE_SIZE, parseListParams, type ListParams, type Page } from './listing';
import { plans } from './plans';
import { predictSetup } from './predictions';
import { projectiles } from './projectiles';
import { rigs } from './rigs';
import { queueSessionReport } from './session-view';
import * as sessions from './sessions';
import * as shots from './shots';

/** The body as a JSON object (what a PATCH merges over the stored record). */
async function patchBody(request: Request): Promise<Record<string, unknown>> {
	const body = await requestJson(request);
	if (typeof body !== 'object' || body === null || Array.isArray(body))
		fail(400, 'The body must be a JSON object of the fields to change.', [{ path: '', message: 'Expected a JSON object.' }]);
	return body as Record<string, unknown>;
}

/**
 * PATCH semantics: the fields sent replace the stored ones, and the result is validated whole
 * with the create schema, so rules across fields (a chronograph before the target) still hold
 * and a field left out keeps its value rather than falling back to a default.
 */
function merged<S extends z.ZodObject>(schema: S, stored: Record<string, unknown>, patch: Record<string, unknown>): z.output<S> {
	const current = Object.fromEntries(Object.keys(schema.shape).map((key) => [key, stored[key]]));
	const parsed = schema.safeParse({ ...current, ...patch });
	// endpoint() answers a ZodError with 400 and the fields at fault.
	if (!parsed.success) throw parsed.error;
	return parsed.data;
}

// ---------------------------------------------------------------------------------------------
// Query parameters: 400 naming the parameter, like listing.ts does for paging and sorting.

function queryParam(url: URL, name: string) {
	const raw = url.searchParams.get(name);
	return raw === null || raw.trim() === '' ? null : raw.trim();
}

function queryInt(url: URL, name: string, min: number, max: number): number | null {
	return boundedInt(url, name, null, min, max);
}

function queryDate(url: URL, name: string): Date | null {
	const raw = queryParam(url, name);
	if (raw === null) return null;
	const date = new Date(raw);
	if (Number.isNaN(date.getTime()) || date < EARLIEST_DATETIME || date > LATEST_DATETIME) {
		const message = `URL parameter "${name}" must be a date or date and time (ISO 8601) in the years 1000 to 9999; got "${raw.slice(0, 40)}".`;
		fail(400, message, [{ path: name, message }]);
	}
	return date;
}

function queryChoice<T extends string>(url: URL, name: string, choices: readonly T[]): T | null {
	const raw = queryParam(url, name);
	if (raw === null) return null;
	if (!(choices as readonly string[]).includes(raw)) {
		const message = `URL parameter "${name}" must be one of ${choices.join(', ')}; got "${raw}".`;
		fail(400, message, [{ path: name, message }]);
	}
	return raw as T;
}

function queryFlag(url: URL, name: string): boolean {
	const value = queryChoice(url, name, ['1', '0', 'true', 'false'] as const);
	return value === '1' || value === 'true';
}

// ---------------------------------------------------------------------------------------------
// Registries: rigs, projectiles, test plans.

/** What the API needs of a registry (registry.ts). */
type Registry<Row> = {
	sortKeys: string[];
	defaultSort: string;
	list(params: ListParams<string>): Promise<Page<Row>>;
	getOr404(id: number): Promise<Row>;
	create(input: never, userId: number): Promise<Row>;
	update(id: number, input: never, userId: number): Promise<Row>;
	remove(id: number, userId: number): Promise<Row>;
};

function registryApi<Row>(options: { registry: Registry<Row>; schema: z.ZodObject; editRole: Role; noun: string }) {
	const { registry: r, schema, editRole, noun } = options;
	const id = (event: RequestEvent) => idParam(event.params.id, noun);
	return {
		list: endpoint(async (event) => {
			await requireUser(event);
			return ok(await r.list(parseListParams(event.url, r.sortKeys, r.defaultSort)));
		}),
		create: endpoint(async (event) => {
			const user = await requireRole(event, editRole);
			const input = await parseBody(event.request, schema);
			return ok(await r.create(input as never, user.id), 201);
		}),
		get: endpoint(async (event) => {
			await requireUser(event);
			return ok(await r.getOr404(id(event)));
		}),
		update: endpoint(async (event) => {
			const user = await requireRole(event, editRole);
			const rowId = id(event);
			const patch = await patchBody(event.request);
			const stored = (await r.getOr404(rowId)) as Record<string, unknown>;
			return ok(await r.update(rowId, merged(schema, stored, patch) as never, user.id));
		}),
		remove: endpoint(async (event) => {
			const user = await requireRole(event, editRole);
			return ok(await r.remove(id(event), user.id));
		})
	};
}

export const rigApi = registryApi({ registry: rigs, schema: rigInput, editRole: 'analyst', noun: 'rig' });
export const projectileApi = registryApi({ registry: projectiles, schema: projectileInput, editRole: 'analyst', noun: 'projectile' });
/** Leads own test plans (product brief). */
export const planApi = registryApi({ registry: plans, schema: testPlanInput, editRole: 'lead', noun: 'test plan' });

// ---------------------------------------------------------------------------------------------
// Range sessions.

const sessionId = (event: RequestEvent) => idParam(event.params.id, 'range session');

/** A live session (deleted ones are gone for writers), or 404. */
async function liveSession(id: number) {
	const view = await sessions.get(id);
	if (!view || view.session.deletedAt) fail(404, `No range session with id ${id}.`);
	return view;
}

function densityOf(session: sessions.RangeSession) {
	try {
		return airDensity({ temperatureC: session.temperatureC, pressurePa: session.pressurePa, relativeHumidity: session.relativeHumidity });
	} catch {
		// Stored conditions outside the air model's range (it stops at −40 °C) have no density.
		return null;
	}
}

export const sessionApi = {
	list: endpoint(async (event) => {
		await requireUser(event);
		const params = parseListParams(event.url, sessions.SESSION_SORTS, 'startedAt', 'desc');
		const filters: sessions.SessionFilters = {
			rigId: queryInt(event.url, 'rigId', 1, Number.MAX_SAFE_INTEGER),
			status: queryChoice(event.url, 'status', ['open', 'closed'] as const),
			from: queryDate(event.url, 'from'),
			to: queryDate(event.url, 'to')
		};
		return ok(await sessions.list(params, filters));
	}),
	create: endpoint(async (event) => {
		const user = await requireRole(event, 'range_officer');
		const input = await parseBody(event.request, rangeSessionInput);
		return ok(await sessions.create(input, user), 201);
	}),
	get: endpoint(async (event) => {
		await requireUser(event);
		const { session, rig, projectile, plan } = await sessions.getOr404(sessionId(event));
		return ok({ ...session, airDensityKgM3: densityOf(session), rig, projectile, plan });
	}),
	update: endpoint(async (event) => {
		const user = await requireRole(event, 'range_officer');
		const id = sessionId(event);
		const patch = await patchBody(event.request);
		const { session } = await liveSession(id);
		const { after } = await sessions.update(id, merged(rangeSessionInput, session, patch), user);
		return ok(after);
	}),
	remove: endpoint(async (event) => {
		const user = await requireRole(event, 'range_officer');
		return ok(await sessions.setDeleted(sessionId(event), true, user));
	}),
	/** Close and lock the session; the close-out report to the leads goes through the outbox. */
	close: endpoint(async (event) => {
		const user = await requireRole(event, 'range_officer');
		const id = sessionId(event);
		const session = await sessions.close(id, user);
		const leadsMailed = await queueSessionReport(id, user, 'closed');
		return ok({ ...session, leadsMailed, mailError: null });
	}),
	/** Leads ask for a closed session's report again (say, after the mail server was down). */
	resendReport: endpoint(async (event) => {
		const user = await requireRole(event, 'lead');
		const id = sessionId(event);
		const { session } = await liveSession(id);
		if (session.status !== 'closed') fail(409, 'The report goes out once the session is closed.', [{ path: 'id', message: 'The session is open.' }]);
		return ok({ sessionId: id, leadsQueued: await queueSessionReport(id, user, 'resent') }, 202);
	})
};

// ---------------------------------------------------------------------------------------------
// Shots.

const shotId = (event: RequestEvent) => idParam(event.params.id, 'shot');

export const shotApi = {
	/** A session's shots in sequence order with predictions; paged, filtered by sequence range. */
	list: endpoint(async (event) => {
		await requireUser(event);
		const id = sessionId(event);
		const url = event.url;
		const params = {
			page: queryInt(url, 'page', 1, MAX_PAGE) ?? 1,
			pageSize: queryInt(url, 'pageSize', 1, MAX_PAGE_SIZE) ?? 100,
			deleted: queryFlag(url, 'deleted'),
			from: queryInt(url, 'from', 1, 1_000_000),
			to: queryInt(url, 'to', 1, 1_000_000)
		};
		await liveSession(id);
		return ok(await shots.listForSession(id, params));
	}),
	/** 201 with a new shot; 200 with the stored one when the clientUuid was sent before. */
	create: endpoint(async (event) => {
		const user = await requireRole(event, 'range_officer');
		const id = sessionId(event);
		const input = await parseBody(event.request, shotInput);
		const { shot, created } = await shots.create(id, input, user);
		return ok(shot, created ? 201 : 200);
	}),
	get: endpoint(async (event) => {
		await requireUser(event);
		const id = shotId(event);
		const shot = await shots.getWithPrediction(id);
		if (!shot) fail(404, `No shot with id ${id}.`);
		return ok(shot);
	}),
	update: endpoint(async (event) => {
		const user = await requireRole(event, 'analyst');
		const id = shotId(event);
		const patch = await parseBody(event.request, shotUpdate);
		await shots.update(id, patch, user);
		return ok(await shots.getWithPrediction(id));
	}),
	/** Void at the firing line: kept with its reason and shown as voided, out of the statistics (the officer's own shots while the session is open). */
	void: endpoint(async (event) => {
		const user = await requireRole(event, 'range_officer');
		const id = shotId(event);
		const { reason } = await parseBody(event.request, shotVoid);
		await shots.setVoided(id, reason, user);
		return ok(await shots.getWithPrediction(id));
	}),
	/** Soft delete: the shot stays in the record, marked deleted, and leaves the statistics. */
	remove: endpoint(async (event) => {
		const user = await requireRole(event, 'analyst');
		return ok(await shots.setDeleted(shotId(event), true, user));
	})
};

// ---------------------------------------------------------------------------------------------
// Predictions.

export const predictionApi = {
	create: endpoint(async (event) => {
		await requireUser(event);
		return ok(await predictSetup(await parseBody(event.request, predictionInput)));
	})
};
