// The calibrations API (/api/v1/calibrations, issue 13) against the real MariaDB (a scratch
// database of its own): the handlers the route files export, called with request events as
// SvelteKit passes them. Contract (every answer parses with the zod schemas the OpenAPI document
// is generated from), roles (viewer reads, analyst fits, lead approves), validation errors that
// name the field, 404s and 409s. The shots are a synthetic pressure sweep (1.5–6 bar) predicted
// with the physics module's predictShot from known parameters plus seeded noise, so the fit is
// quick and its answer known.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { airDensity } from '../../src/lib/physics/air';
import { predictShot, type CalibrationParameters, type LauncherCalibration } from '../../src/lib/physics/launcher';
import { createRandom } from '../../src/lib/physics/random';
import type { Role } from '../../src/lib/roles';
import { projectiles, rangeSessions, rigs, shots, users } from '../../src/lib/server/db/schema';
import { approvedCalibration, calibrationApi, calibrationDetail, calibrationList } from '../../src/lib/server/calibrations/api';
import { openApiDocument } from '../../src/lib/server/openapi';
import { scratchDatabase } from '../support/db';

let scratch: Awaited<ReturnType<typeof scratchDatabase>>;
const db = () => scratch.db;
const BAR = 1e5;
const MISSING = 999_999_999;

const RIG = { reservoirM3: 2.0e-3, deadM3: 0.05e-3, boreDiameterM: 0.0254, travelM: 1.2 };
const BALL = { massKg: 7.53e-3, diameterM: 0.025 };
const TRUTH: CalibrationParameters = {
	efficiency: 0.64,
	pressureSlope: 0,
	pRefPa: 3.5e5,
	energyOffsetJ: 0,
	valveAreaM2: 1e-4,
	openingTimeS: 0.01,
	frictionN: 0,
	dragCoefficient: 0.5,
	elevationBiasDeg: 0
};
const truthModel: LauncherCalibration = { parameters: TRUTH, fitted: [], identifiable: [], covariance: [], fillPressureRangePa: { min: 0, max: Infinity } };
const NOISE = { speedMps: 0.1, pressurePa: 300 };
const GEOMETRY = { targetDistanceM: 5, elevationDeg: 1.0, azimuthDeg: 0, launchHeightM: 1.2, aimHeightM: 1.2, downrangeChronoM: 4.5 };
const CONDITIONS = { temperatureC: 10, pressurePa: 101_300, relativeHumidity: 0.6, windXMps: 0, windZMps: 0 };
/** 12 gauge readings from 1.5 to 6 bar, cycled; two sessions of 12 shots = 24. */
const SWEEP_PA = Array.from({ length: 12 }, (_, i) => (1.5 + (4.5 * i) / 11) * BAR);

const ids = { rig: 0, ball: 0, otherRig: 0, sessions: [] as number[], firstShot: 0 };
const people = {} as Record<'viewer' | 'analyst' | 'lead', AppUser>;

async function makeUser(role: 'viewer' | 'analyst' | 'lead'): Promise<AppUser> {
	const email = `${role}@calibrations-api.test`;
	const [row] = await db().insert(users).values({ email, name: `API ${role}`, role, passwordHash: 'x' }).$returningId();
	return { id: row.id, email, name: `API ${role}`, role: role as Role, unitPreferences: null };
}

function sweep(seed: number, sessionId: number, startedAt: Date) {
	const random = createRandom(seed);
	const session = {
		...GEOMETRY,
		airDensityKgM3: airDensity({ temperatureC: CONDITIONS.temperatureC, pressurePa: CONDITIONS.pressurePa, relativeHumidity: CONDITIONS.relativeHumidity }),
		ambientPa: CONDITIONS.pressurePa,
		wind: { xMps: 0, zMps: 0 }
	};
	return SWEEP_PA.map((reading, i) => {
		const p = predictShot(truthModel, { rig: RIG, projectile: BALL, session, fillGaugePa: reading + random.normal(0, NOISE.pressurePa) }, { downrangeDistanceM: 4.5 });
		if (!p.ok) throw new Error('synthetic shot fails');
		return {
			sessionId,
			sequence: i + 1,
			clientUuid: crypto.randomUUID(),
			firedAt: new Date(startedAt.getTime() + i * 60_000),
			fillGaugePa: reading,
			muzzleSpeedMps: p.muzzleSpeedMps + random.normal(0, NOISE.speedMps),
			downrangeSpeedMps: p.downrange ? p.downrange.speedMps + random.normal(0, NOISE.speedMps) : null,
			miss: false
		};
	});
}

beforeAll(async () => {
	scratch = await scratchDatabase();
	// The handlers use the app's one client, which reads DATABASE_URL on first use.
	process.env.DATABASE_URL = scratch.url;
	people.viewer = await makeUser('viewer');
	people.analyst = await makeUser('analyst');
	people.lead = await makeUser('lead');
	const rigValues = { ...RIG, ratedPressurePa: 8 * BAR, valveType: 'diaphragm', nominalEfficiency: 0.55 };
	ids.rig = (await db().insert(rigs).values({ name: 'API launcher', ...rigValues }).$returningId())[0].id;
	ids.otherRig = (await db().insert(rigs).values({ name: 'API spare launcher', ...rigValues }).$returningId())[0].id;
	ids.ball = (
		await db()
			.insert(projectiles)
			.values({ name: 'API ball 25 mm', ...BALL, lengthM: 0.025, shape: 'sphere', nominalDragCoefficient: 0.47 })
			.$returningId()
	)[0].id;
	for (const [i, seed] of [21, 22].entries()) {
		const startedAt = new Date(Date.UTC(2026, 10, 2 + i, 8));
		const [row] = await db()
			.insert(rangeSessions)
			.values({ title: `API sweep ${i + 1}`, rigId: ids.rig, projectileId: ids.ball, startedAt, ...GEOMETRY, ...CONDITIONS })
			.$returningId();
		ids.sessions.push(row.id);
		await db().insert(shots).values(sweep(seed, row.id, startedAt));
	}
	ids.firstShot = (await db().select({ id: shots.id }).from(shots).orderBy(shots.id).limit(1))[0].id;
}, 60_000);

afterAll(async () => {
	const { closeDatabase } = await import('../../src/lib/server/db');
	await closeDatabase();
	await scratch?.drop();
});

// ---------------------------------------------------------------------------------------------

type Who = keyof typeof people | null;

function eventFor(who: Who, method: 'GET' | 'POST', path: string, options: { params?: Record<string, string>; body?: unknown } = {}) {
	const url = new URL(path, 'http://127.0.0.1:4173');
	const user = who ? people[who] : null;
	const body = options.body === undefined ? undefined : JSON.stringify(options.body);
	return {
		url,
		params: options.params ?? {},
		route: { id: null },
		request: new Request(url, { method, body, headers: body === undefined ? {} : { 'content-type': 'application/json' } }),
		locals: { user, claimedUserId: user ? user.id : null, apiTokenId: null, auth: async () => null },
		getClientAddress: () => '127.0.0.1',
		cookies: { get: () => undefined, getAll: () => [], set() {}, delete() {}, serialize: () => '' },
		setHeaders() {},
		fetch,
		isDataRequest: false,
		isSubRequest: false,
		isRemoteRequest: false,
		platform: undefined
	};
}

type Handler = (event: never) => Promise<Response>;
async function call(handler: Handler, who: Who, method: 'GET' | 'POST', path: string, options: { params?: Record<string, string>; body?: unknown } = {}) {
	const response = await handler(eventFor(who, method, path, options) as never);
	return { status: response.status, body: (await response.json()) as Record<string, unknown> & { issues?: { path: string; message: string }[] } };
}

const list = (who: Who, query = '') => call(calibrationApi.list, who, 'GET', `/api/v1/calibrations${query}`);
const fit = (who: Who, body: unknown) => call(calibrationApi.create, who, 'POST', '/api/v1/calibrations', { body });
const getOne = (who: Who, id: number | string) => call(calibrationApi.get, who, 'GET', `/api/v1/calibrations/${id}`, { params: { id: String(id) } });
const approve = (who: Who, id: number | string) => call(calibrationApi.approve, who, 'POST', `/api/v1/calibrations/${id}/approve`, { params: { id: String(id) } });
const paths = (body: { issues?: { path: string }[] }) => (body.issues ?? []).map((i) => i.path);

const drafts = { auto: 0, named: 0 };

describe('fitting a draft (analyst)', () => {
	it('refuses anonymous callers (401) and viewers (403) before reading the body', async () => {
		expect((await fit(null, { rigId: ids.rig, projectileId: ids.ball })).status).toBe(401);
		const viewer = await fit('viewer', { rigId: ids.rig, projectileId: ids.ball });
		expect(viewer.status).toBe(403);
		expect(viewer.body).toMatchObject({ message: expect.stringContaining('Analyst') });
	});

	it('names the field at fault: model.family, rigId, an exclusion’s reason and shot', async () => {
		const steam = await fit('analyst', { rigId: ids.rig, projectileId: ids.ball, model: { family: 'steam' } });
		expect(steam.status).toBe(400);
		expect(paths(steam.body)).toEqual(['model.family']);
		const rig = await fit('analyst', { rigId: 'x', projectileId: ids.ball });
		expect(rig.status).toBe(400);
		expect(paths(rig.body)).toEqual(['rigId']);
		const notAModel = await fit('analyst', { rigId: ids.rig, projectileId: ids.ball, model: 'best' });
		expect(paths(notAModel.body)).toEqual(['model']);
		const blank = await fit('analyst', { rigId: ids.rig, projectileId: ids.ball, excludedShots: [{ shotId: ids.firstShot, reason: '  ' }] });
		expect(blank.status).toBe(400);
		expect(paths(blank.body)).toEqual(['excludedShots.0.reason']);
		// A shot outside the chosen sessions: the engine's ReconcileError, under the API's field name.
		const elsewhere = await fit('analyst', { rigId: ids.rig, projectileId: ids.ball, sessionIds: [ids.sessions[1]], excludedShots: [{ shotId: ids.firstShot, reason: 'double feed' }] });
		expect(elsewhere.status).toBe(400);
		expect(paths(elsewhere.body)).toEqual(['excludedShots.0.shotId']);
		const sphereOnNothing = await fit('analyst', { rigId: ids.rig, projectileId: ids.ball, model: { family: 'gas-work', drag: 'cone' } });
		expect(paths(sphereOnNothing.body)).toEqual(['model.drag']);
	});

	it('answers 404 naming the rig or projectile that does not exist, and 400 when the pair has no sessions', async () => {
		const rig = await fit('analyst', { rigId: MISSING, projectileId: ids.ball });
		expect(rig.status).toBe(404);
		expect(paths(rig.body)).toEqual(['rigId']);
		const projectile = await fit('analyst', { rigId: ids.rig, projectileId: MISSING });
		expect(projectile.status).toBe(404);
		expect(paths(projectile.body)).toEqual(['projectileId']);
		const empty = await fit('analyst', { rigId: ids.otherRig, projectileId: ids.ball });
		expect(empty.status).toBe(400);
		expect(paths(empty.body)).toEqual(['sessionIds']);
	});

	it('fits model "auto" over every session of the pair: 201 with the draft and its report', async () => {
		const { status, body } = await fit('analyst', {
			rigId: ids.rig,
			projectileId: ids.ball,
			excludedShots: [{ shotId: ids.firstShot, reason: 'Fired before the gauge settled.' }],
			notes: 'API sweep'
		});
		expect(status, JSON.stringify(body)).toBe(201);
		const draft = calibrationDetail.parse(body);
		drafts.auto = draft.id;
		expect(draft).toMatchObject({ status: 'draft', rigId: ids.rig, projectileId: ids.ball, createdBy: people.analyst.id, notes: 'API sweep', converged: true });
		expect(draft.sessionIds.sort()).toEqual([...ids.sessions].sort());
		expect(draft.exclusions).toEqual([{ shotId: ids.firstShot, reason: 'Fired before the gauge settled.' }]);
		expect(draft.comparison).not.toBeNull();
		expect(draft.comparison!.candidates.length).toBeGreaterThan(1);
		expect(draft.comparison!.proposed).toEqual(expect.any(String));
		expect(draft.nUsed.shots).toBe(23);
		expect(draft.fillPressureRangePa.min).toBeCloseTo(1.5 * BAR, 0);
		expect(draft.fillPressureRangePa.max).toBeCloseTo(6 * BAR, 0);
		expect(draft.crossValidation).not.toBeNull();
		expect(draft.rmsByKind.muzzleSpeed!).toBeLessThan(1);
		// Every fitted parameter has a value, a standard error and an interval around the value.
		const fitted = Object.entries(draft.parameters).filter(([, p]) => p?.status === 'fitted');
		expect(fitted.map(([k]) => k).sort()).toEqual([...draft.correlation.parameters].sort());
		for (const [, p] of fitted) {
			expect(p!.standardError).toBeGreaterThan(0);
			expect(p!.confidence95!.lower).toBeLessThan(p!.value!);
			expect(p!.confidence95!.upper).toBeGreaterThan(p!.value!);
		}
		expect(draft.correlation.matrix.length).toBe(draft.correlation.parameters.length);
	}, 120_000);

	it('fits a named model without a comparison', async () => {
		const { status, body } = await fit('analyst', {
			rigId: ids.rig,
			projectileId: ids.ball,
			sessionIds: ids.sessions,
			model: { family: 'gas-work', drag: 'constant', dragCoefficient: true }
		});
		expect(status, JSON.stringify(body)).toBe(201);
		const draft = calibrationDetail.parse(body);
		drafts.named = draft.id;
		expect(draft.comparison).toBeNull();
		expect(draft.model).toEqual({ family: 'gas-work', drag: 'constant' });
		expect(draft.fitted.sort()).toEqual(['dragCoefficient', 'eta0']);
		expect(draft.parameters.eta0).toMatchObject({ status: 'fitted', unit: null });
		expect(draft.parameters.eta0!.value!).toBeGreaterThan(0.6);
		expect(draft.parameters.eta0!.value!).toBeLessThan(0.68);
		expect(draft.parameters.dragCoefficient!.status).toBe('fitted');
	}, 60_000);
});

describe('reading calibrations (viewer)', () => {
	it('gets one with the same report the fit answered; 404 for an unknown or malformed id; 401 anonymous', async () => {
		const { status, body } = await getOne('viewer', drafts.named);
		expect(status).toBe(200);
		const detail = calibrationDetail.parse(body);
		expect(detail.id).toBe(drafts.named);
		expect((await getOne('viewer', MISSING)).status).toBe(404);
		expect((await getOne('viewer', 'abc')).status).toBe(404);
		expect((await getOne(null, drafts.named)).status).toBe(401);
	});

	it('lists them newest first, filtered by rig, projectile and status', async () => {
		const all = await list('viewer');
		expect(all.status).toBe(200);
		const rows = calibrationList.parse(all.body).rows;
		expect(rows.map((r) => r.id)).toEqual([drafts.named, drafts.auto]);
		expect(rows[0]).toMatchObject({ status: 'draft', converged: true, model: { family: 'gas-work', drag: 'constant' } });
		expect(rows[0].headline.eta0).toBeGreaterThan(0.6);
		expect(rows[0].headline.muzzleSpeedRmsMps).toBeGreaterThan(0);
		expect(calibrationList.parse((await list('viewer', `?rigId=${ids.otherRig}`)).body).rows).toEqual([]);
		expect(calibrationList.parse((await list('viewer', `?rigId=${ids.rig}&projectileId=${ids.ball}&status=draft`)).body).rows).toHaveLength(2);
		expect(calibrationList.parse((await list('viewer', '?status=approved')).body).rows).toEqual([]);
	});

	it('refuses bad filters with a 400 naming the parameter', async () => {
		for (const [query, field] of [
			['?rigId=x', 'rigId'],
			['?projectileId=1.5', 'projectileId'],
			['?rigId=-2', 'rigId'],
			['?status=pending', 'status']
		]) {
			const { status, body } = await list('viewer', query);
			expect(status, query).toBe(400);
			expect(paths(body)).toEqual([field]);
		}
		expect((await list(null)).status).toBe(401);
	});
});

describe('approving (lead)', () => {
	it('refuses analysts (403) and unknown ids (404)', async () => {
		expect((await approve('analyst', drafts.auto)).status).toBe(403);
		expect((await approve('viewer', drafts.auto)).status).toBe(403);
		expect((await approve('lead', MISSING)).status).toBe(404);
	});

	it('approves a draft, recomputing the pair’s residuals; a second approval supersedes it; 409 for a non-draft', async () => {
		const first = await approve('lead', drafts.named);
		expect(first.status, JSON.stringify(first.body)).toBe(200);
		const approved = approvedCalibration.parse(first.body);
		expect(approved).toMatchObject({ id: drafts.named, status: 'approved', approvedBy: people.lead.id, supersededCalibrationId: null });
		expect(approved.recomputed).toMatchObject({ sessions: 2, shots: 24 });

		const again = await approve('lead', drafts.named);
		expect(again.status).toBe(409);

		const second = approvedCalibration.parse((await approve('lead', drafts.auto)).body);
		expect(second.supersededCalibrationId).toBe(drafts.named);
		const superseded = calibrationDetail.parse((await getOne('viewer', drafts.named)).body);
		expect(superseded.status).toBe('superseded');
		expect(superseded.supersededAt).not.toBeNull();
		expect((await approve('lead', drafts.named)).status).toBe(409);
		expect(calibrationList.parse((await list('viewer', '?status=approved')).body).rows.map((r) => r.id)).toEqual([drafts.auto]);
	}, 60_000);
});

describe('the OpenAPI document', () => {
	it('lists the four operations with the roles the handlers enforce', () => {
		const doc = openApiDocument();
		const paths = doc.paths as Record<string, Record<string, { 'x-required-role': string; responses: Record<string, unknown> }>>;
		expect(paths['/api/v1/calibrations'].get['x-required-role']).toBe('viewer');
		expect(paths['/api/v1/calibrations'].post['x-required-role']).toBe('analyst');
		expect(paths['/api/v1/calibrations/{id}'].get['x-required-role']).toBe('viewer');
		expect(paths['/api/v1/calibrations/{id}/approve'].post['x-required-role']).toBe('lead');
		expect(Object.keys(paths['/api/v1/calibrations/{id}/approve'].post.responses)).toEqual(expect.arrayContaining(['200', '403', '404', '409']));
		const schema = doc.components.schemas.Calibration as { properties: { parameters: { properties: Record<string, { description?: string; properties: { value: { 'x-unit'?: string } } }> } } };
		expect(schema.properties.parameters.properties.energyOffsetJ.properties.value['x-unit']).toBe('J');
		expect(schema.properties.parameters.properties.valveAreaM2.properties.value['x-unit']).toBe('m²');
		expect(schema.properties.parameters.properties.eta0.description).toMatch(/dimensionless/);
	});
});
