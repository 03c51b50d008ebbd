// Logging a shot (shots.create: hand-written SQL in batches, db/raw.ts) against the real MariaDB,
// on a scratch database of its own. The HTTP side (status codes, resends over the API, 10 × 50
// parallel clients) is in tests/e2e/api.e2e.ts; here, what the fast path must keep equal to the
// general one: the row it answers with is the row stored, its prediction is the one
// recomputePredictions makes, sequence numbers stay distinct under concurrency, the closed/deleted
// rules hold, and an approval racing with logging leaves no shot predicted under the old
// calibration.
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { calibrations, projectiles, rangeSessions, rigs, shotPredictions, shots, testPlans, users } from '../../src/lib/server/db/schema';
import { scratchDatabase } from '../support/db';

let scratch: Awaited<ReturnType<typeof scratchDatabase>>;
let savedUrl: string | undefined;
// The app's modules use its one client, which reads DATABASE_URL on first use.
let shotsModule: typeof import('../../src/lib/server/shots');
let reconcile: typeof import('../../src/lib/server/reconcile');
let raw: typeof import('../../src/lib/server/db/raw');
let appDb: typeof import('../../src/lib/server/db');

const BAR = 1e5;
const ids = { officer: 0, lead: 0, rig: 0, ball: 0, plan: 0 };
let officer: AppUser;
let lead: AppUser;
let serial = 0;

async function newSession(over: Partial<typeof rangeSessions.$inferInsert> = {}) {
	const [row] = await scratch.db
		.insert(rangeSessions)
		.values({
			title: `IT session ${++serial}`,
			rigId: ids.rig,
			projectileId: ids.ball,
			testPlanId: ids.plan,
			startedAt: new Date('2026-11-30T09:00:00.000Z'),
			targetDistanceM: 5,
			elevationDeg: 1,
			launchHeightM: 1.2,
			aimHeightM: 1.2,
			downrangeChronoM: 4.5,
			temperatureC: 10,
			pressurePa: 101_000,
			relativeHumidity: 0.6,
			...over
		})
		.$returningId();
	return row.id;
}

function shot(over: Record<string, unknown> = {}) {
	return {
		clientUuid: crypto.randomUUID(),
		fillGaugePa: 2.2 * BAR,
		muzzleSpeedMps: 97.4,
		downrangeSpeedMps: 95.9,
		impactXM: 0.004,
		impactYM: -0.002,
		miss: false,
		...over
	};
}

/**
 * Numbers to 13 significant digits: MariaDB's text protocol (Drizzle's reads) renders some
 * doubles 1 ulp off what was stored (measured here: 36 of 2 000 random values; the binary
 * protocol is exact), so a value computed from JavaScript's own numbers and one computed from
 * numbers read back may differ in the last bit.
 */
function digits<T>(value: T): T {
	return JSON.parse(JSON.stringify(value, (_key, v) => (typeof v === 'number' ? Number(v.toPrecision(13)) : v)));
}

/** The prediction columns a recomputation writes (not its time), to 13 digits. */
function predicted(row: typeof shotPredictions.$inferSelect | null) {
	if (!row) return null;
	const { computedAt: _time, ...rest } = row;
	return digits(rest);
}

beforeAll(async () => {
	scratch = await scratchDatabase();
	savedUrl = process.env.DATABASE_URL;
	process.env.DATABASE_URL = scratch.url;
	shotsModule = await import('../../src/lib/server/shots');
	reconcile = await import('../../src/lib/server/reconcile');
	raw = await import('../../src/lib/server/db/raw');
	appDb = await import('../../src/lib/server/db');

	const person = async (role: 'range_officer' | 'lead') => {
		const email = `${role}-${Date.now()}@shots.test`;
		const [row] = await scratch.db.insert(users).values({ email, name: role, role, passwordHash: 'x' }).$returningId();
		return { id: row.id, email, name: role, role, unitPreferences: null } satisfies AppUser;
	};
	officer = await person('range_officer');
	lead = await person('lead');
	ids.officer = officer.id;
	ids.lead = lead.id;
	[{ id: ids.rig }] = await scratch.db
		.insert(rigs)
		.values({ name: 'IT rig', reservoirM3: 2e-3, deadM3: 0.05e-3, boreDiameterM: 0.0254, travelM: 1.2, ratedPressurePa: 8 * BAR, valveType: 'diaphragm', nominalEfficiency: 0.55 })
		.$returningId();
	[{ id: ids.ball }] = await scratch.db
		.insert(projectiles)
		.values({ name: 'IT ball', massKg: 7.53e-3, diameterM: 0.025, lengthM: 0.025, shape: 'sphere', nominalDragCoefficient: 0.45 })
		.$returningId();
	[{ id: ids.plan }] = await scratch.db
		.insert(testPlans)
		.values({ name: 'IT plan', speedAt: 'target', requiredSpeedMps: 96, speedTolerancePct: 3, impactToleranceM: 0.02, targetDistanceM: 5, shotsRequired: 10 })
		.$returningId();
});

afterAll(async () => {
	await appDb?.closeDatabase();
	process.env.DATABASE_URL = savedUrl;
	await scratch?.drop();
});

describe('logging a shot', () => {
	it('answers with exactly the row stored, and the prediction the general recomputation makes', async () => {
		const sessionId = await newSession();
		const { shot: answered, created } = await shotsModule.create(sessionId, shot({ note: 'first of the day' }), officer);
		expect(created).toBe(true);
		expect(answered.sequence).toBe(1);
		expect(answered.prediction?.predictedMuzzleMps).toBeGreaterThan(50);
		// What a later read returns (the row as MariaDB stored it) is what the POST answered.
		expect(digits(await shotsModule.getWithPrediction(answered.id))).toEqual(digits(answered));
		// And recomputePredictions, the path every edit and import takes, writes the same prediction.
		await scratch.db.transaction((tx) => reconcile.recomputePredictions(tx, { shotIds: [answered.id] }));
		const [again] = await scratch.db.select().from(shotPredictions).where(eq(shotPredictions.shotId, answered.id));
		expect(predicted(again)).toEqual(predicted(answered.prediction));
	});

	it('gives 40 concurrent shots on one session the sequence numbers 1..40, each with its prediction', async () => {
		const sessionId = await newSession();
		const results = await Promise.all(Array.from({ length: 40 }, () => shotsModule.create(sessionId, shot(), officer)));
		expect(results.map((r) => r.shot.sequence).sort((a, b) => a - b)).toEqual(Array.from({ length: 40 }, (_, i) => i + 1));
		const stored = await scratch.db.select().from(shots).where(eq(shots.sessionId, sessionId));
		expect(stored).toHaveLength(40);
		// Most were predicted ahead from the session's last inputs: each is what the general path makes.
		const answered = new Map(results.map((r) => [r.shot.id, predicted(r.shot.prediction)]));
		await scratch.db.transaction((tx) => reconcile.recomputePredictions(tx, { sessionIds: [sessionId] }));
		const fresh = await scratch.db.select().from(shotPredictions);
		for (const row of fresh.filter((p) => answered.has(p.shotId))) expect(answered.get(row.shotId)).toEqual(predicted(row));
		expect(fresh.filter((p) => answered.has(p.shotId))).toHaveLength(40);
	});

	it('predicts the next shot from the rig, plan and calibration as changed between two shots, not as last seen', async () => {
		const sessionId = await newSession();
		const first = await shotsModule.create(sessionId, shot(), officer);
		// The first shot's batch read the inputs and kept them; the second was predicted from them ahead.
		expect(shotsModule.testing.lastInputs.has(sessionId)).toBe(true);
		const same = await shotsModule.create(sessionId, shot(), officer);
		expect(same.shot.prediction?.predictedMuzzleMps).toBeCloseTo(first.shot.prediction!.predictedMuzzleMps!, 12);
		expect(shotsModule.testing.lastInputs.has(sessionId)).toBe(true);

		const check = async (label: string) => {
			const { shot: next } = await shotsModule.create(sessionId, shot(), officer);
			await scratch.db.transaction((tx) => reconcile.recomputePredictions(tx, { shotIds: [next.id] }));
			const [fresh] = await scratch.db.select().from(shotPredictions).where(eq(shotPredictions.shotId, next.id));
			expect(predicted(next.prediction), label).toEqual(predicted(fresh));
			return next.prediction!;
		};
		await scratch.db.update(rigs).set({ nominalEfficiency: 0.6 }).where(eq(rigs.id, ids.rig));
		expect((await check('rig edited')).predictedMuzzleMps).not.toBeCloseTo(first.shot.prediction!.predictedMuzzleMps!, 3);
		// The inputs found stale were forgotten; the next shot reads them again and keeps them.
		expect(shotsModule.testing.lastInputs.has(sessionId)).toBe(false);
		await check('after the rig edit');
		expect(shotsModule.testing.lastInputs.has(sessionId)).toBe(true);
		await scratch.db.update(testPlans).set({ requiredSpeedMps: 150 }).where(eq(testPlans.id, ids.plan));
		expect((await check('plan edited')).passSpeed).toBe(false);
		await scratch.db.update(rangeSessions).set({ temperatureC: -5 }).where(eq(rangeSessions.id, sessionId));
		await check('session edited');
		const [{ id: approvedId }] = await scratch.db
			.insert(calibrations)
			.values({
				rigId: ids.rig,
				projectileId: ids.ball,
				status: 'approved',
				approvedAt: new Date(),
				approvedBy: ids.lead,
				fitted: ['eta0'],
				parameters: { eta0: 0.66 },
				standardErrors: { eta0: 0.01 },
				covariance: [[1e-4]],
				summary: { converged: true, covarianceParameters: ['eta0'] },
				sessionIds: [sessionId],
				createdBy: ids.lead
			})
			.$returningId();
		expect((await check('calibration approved')).calibrationId).toBe(approvedId);
		await scratch.db.update(rigs).set({ nominalEfficiency: 0.55 }).where(eq(rigs.id, ids.rig));
		await scratch.db.update(testPlans).set({ requiredSpeedMps: 96 }).where(eq(testPlans.id, ids.plan));
		await scratch.db.update(calibrations).set({ status: 'superseded', supersededAt: new Date() }).where(eq(calibrations.id, approvedId));
	});

	it('keeps a sequence number given by the client, continues after it, and refuses a taken one (409)', async () => {
		const sessionId = await newSession();
		expect((await shotsModule.create(sessionId, shot({ sequence: 7 }), officer)).shot.sequence).toBe(7);
		expect((await shotsModule.create(sessionId, shot(), officer)).shot.sequence).toBe(8);
		await expect(shotsModule.create(sessionId, shot({ sequence: 7 }), officer)).rejects.toMatchObject({ field: 'sequence', status: 409 });
		expect(await scratch.db.select().from(shots).where(eq(shots.sessionId, sessionId))).toHaveLength(2);
	});

	it('answers a resend with the stored shot and stores nothing; a UUID of another session is a 409', async () => {
		const sessionId = await newSession();
		const body = shot();
		const first = await shotsModule.create(sessionId, body, officer);
		const again = await shotsModule.create(sessionId, { ...body, muzzleSpeedMps: 12 }, officer);
		expect(again.created).toBe(false);
		expect(digits(again.shot)).toEqual(digits(first.shot));
		const other = await newSession();
		await expect(shotsModule.create(other, body, officer)).rejects.toMatchObject({ field: 'clientUuid', status: 409 });
		expect(await scratch.db.select().from(shots).where(eq(shots.clientUuid, body.clientUuid))).toHaveLength(1);
	});

	it('a closed session refuses an officer (403) but takes a lead’s shot, and still answers an officer’s resend', async () => {
		const sessionId = await newSession();
		const body = shot();
		const first = await shotsModule.create(sessionId, body, officer);
		await scratch.db.update(rangeSessions).set({ status: 'closed', closedAt: new Date() }).where(eq(rangeSessions.id, sessionId));
		await expect(shotsModule.create(sessionId, shot(), officer)).rejects.toMatchObject({ field: 'sessionId', status: 403 });
		const resend = await shotsModule.create(sessionId, body, officer);
		expect(resend).toMatchObject({ created: false, shot: { id: first.shot.id } });
		const byLead = await shotsModule.create(sessionId, shot(), lead);
		expect(byLead).toMatchObject({ created: true, shot: { sequence: 2 } });
	});

	it('a deleted or unknown session is a 404 and stores nothing', async () => {
		const sessionId = await newSession({ deletedAt: new Date() });
		await expect(shotsModule.create(sessionId, shot(), lead)).rejects.toMatchObject({ field: 'sessionId', status: 404 });
		await expect(shotsModule.create(999_999, shot(), lead)).rejects.toMatchObject({ field: 'sessionId', status: 404 });
		expect(await scratch.db.select().from(shots).where(eq(shots.sessionId, sessionId))).toHaveLength(0);
	});
});

describe('the prediction written after the shot', () => {
	it('is not written over a session edited since the shot was stored, nor over a prediction written meanwhile', async () => {
		const sessionId = await newSession();
		const { shot: stored } = await shotsModule.create(sessionId, shot(), officer);
		const prediction = stored.prediction!;
		const [{ updatedAt }] = await raw.transaction(async (connection, commit) => {
			const [rows] = (await raw.batch(connection, [
				{ sql: 'SELECT updated_at AS updatedAt FROM range_sessions WHERE id = ?', values: [sessionId] },
				commit()
			])) as [{ range_sessions: { updatedAt: string } }[]];
			return rows.map((r) => r.range_sessions);
		});
		await scratch.db.delete(shotPredictions).where(eq(shotPredictions.shotId, stored.id));

		// A stale session time (an edit committed in between): nothing written.
		const stale = await raw.transaction(async (connection, commit) => {
			const [result] = await raw.batch(connection, [
				reconcile.insertPredictionIfSessionUnchanged(prediction, sessionId, '2000-01-01 00:00:00.000'),
				commit()
			]);
			return result as { affectedRows: number };
		});
		expect(stale.affectedRows).toBe(0);
		expect(await scratch.db.select().from(shotPredictions).where(eq(shotPredictions.shotId, stored.id))).toHaveLength(0);

		// The session as it was: written.
		const current = await raw.transaction(async (connection, commit) => {
			const [result] = await raw.batch(connection, [reconcile.insertPredictionIfSessionUnchanged(prediction, sessionId, updatedAt), commit()]);
			return result as { affectedRows: number };
		});
		expect(current.affectedRows).toBe(1);

		// Written meanwhile by someone else: a duplicate key, never an overwrite.
		await expect(
			raw.transaction((connection) => raw.batch(connection, [reconcile.insertPredictionIfSessionUnchanged(prediction, sessionId, updatedAt)]))
		).rejects.toMatchObject({ code: 'ER_DUP_ENTRY' });
	});

	it('found stale, it is computed again from what is stored, under the locks, and stored', async () => {
		const sessionId = await newSession();
		const { shot: stored } = await shotsModule.create(sessionId, shot(), officer);
		await scratch.db.delete(shotPredictions).where(eq(shotPredictions.shotId, stored.id));
		// An analyst changes the session's conditions after the shot was stored (and its edit has
		// not reached this shot): the prediction made from the old conditions must not be written.
		await scratch.db.update(rangeSessions).set({ temperatureC: 30 }).where(eq(rangeSessions.id, sessionId));
		const [session] = await scratch.db.select().from(rangeSessions).where(eq(rangeSessions.id, sessionId));
		const oldConditions = { ...session, temperatureC: 10 };
		const inputRows = await raw.transaction(async (connection, commit) => {
			const [rows] = await raw.batch(connection, [reconcile.predictionInputsRead(sessionId), commit()]);
			return rows as import('../../src/lib/server/reconcile').PredictionInputRows;
		});
		// The inputs as read with the shot, but the session's time from before the edit.
		const versions = reconcile.inputVersions({ updated_at: '2000-01-01 00:00:00.000' }, inputRows)!;
		const written = await shotsModule.testing.predictStoredShot(stored, oldConditions, { inputRows, versions });

		await scratch.db.transaction((tx) => reconcile.recomputePredictions(tx, { shotIds: [stored.id] }));
		const [fresh] = await scratch.db.select().from(shotPredictions).where(eq(shotPredictions.shotId, stored.id));
		expect(predicted(written)).toEqual(predicted(fresh));
		expect(written?.predictedTargetMps).not.toBe(stored.prediction?.predictedTargetMps);
	});

	it('a rig edit racing with 30 shots being logged leaves every shot predicted as the edited rig would', async () => {
		const { rigs: rigRegistry } = await import('../../src/lib/server/rigs');
		const sessionId = await newSession();
		await shotsModule.create(sessionId, shot(), officer);
		const logging = Promise.all(Array.from({ length: 30 }, () => shotsModule.create(sessionId, shot(), officer)));
		const editing = rigRegistry.update(ids.rig, { nominalEfficiency: 0.62 }, ids.lead);
		await Promise.all([logging, editing]);

		// Whatever the interleaving, what is stored equals a recomputation from the final state.
		const stored = await scratch.db.select().from(shotPredictions);
		const ofSession = new Set((await scratch.db.select({ id: shots.id }).from(shots).where(eq(shots.sessionId, sessionId))).map((r) => r.id));
		const before = new Map(stored.filter((p) => ofSession.has(p.shotId)).map((p) => [p.shotId, predicted(p)]));
		expect(before.size).toBe(31);
		await scratch.db.transaction((tx) => reconcile.recomputePredictions(tx, { sessionIds: [sessionId] }));
		const after = (await scratch.db.select().from(shotPredictions)).filter((p) => ofSession.has(p.shotId));
		for (const row of after) expect(before.get(row.shotId), `shot ${row.shotId}`).toEqual(predicted(row));
		await scratch.db.update(rigs).set({ nominalEfficiency: 0.55 }).where(eq(rigs.id, ids.rig));
	});

	it('an approval racing with 30 shots being logged leaves every shot predicted under the approved calibration', async () => {
		const sessionId = await newSession();
		await shotsModule.create(sessionId, shot(), officer);
		const [{ id: draftId }] = await scratch.db
			.insert(calibrations)
			.values({
				rigId: ids.rig,
				projectileId: ids.ball,
				status: 'draft',
				fitted: ['eta0'],
				parameters: { eta0: 0.7 },
				standardErrors: { eta0: 0.01 },
				covariance: [[1e-4]],
				summary: { converged: true, covarianceParameters: ['eta0'] },
				sessionIds: [sessionId],
				createdBy: ids.lead
			})
			.$returningId();

		const logging = Promise.all(Array.from({ length: 30 }, () => shotsModule.create(sessionId, shot(), officer)));
		const approving = reconcile.approveCalibration(appDb.db, draftId, lead);
		const [logged] = await Promise.all([logging, approving]);
		expect(logged).toHaveLength(30);

		const all = await scratch.db
			.select({ id: shots.id, calibrationId: shotPredictions.calibrationId })
			.from(shots)
			.leftJoin(shotPredictions, eq(shotPredictions.shotId, shots.id))
			.where(eq(shots.sessionId, sessionId));
		expect(all).toHaveLength(31);
		expect(all.every((row) => row.calibrationId === draftId)).toBe(true);
	});
});
