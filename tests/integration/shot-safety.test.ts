// The firing line's guards on the shot record, against the real MariaDB (scratch database): a
// fill pressure above the rig's rated working pressure is refused unless confirmed, and a
// confirmed one is kept as a safety event with its audit entry, in the shot's own batch
// (db/raw.ts); a void keeps the shot with its reason but takes it out of the statistics; an
// officer may correct or void only their own shots, and only while the session is open.
import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEvents, projectiles, rangeSessions, rigs, shots, testPlans, users } from '../../src/lib/server/db/schema';
import { scratchDatabase } from '../support/db';

let scratch: Awaited<ReturnType<typeof scratchDatabase>>;
let savedUrl: string | undefined;
let shotsModule: typeof import('../../src/lib/server/shots');
let reconcile: typeof import('../../src/lib/server/reconcile');
let appDb: typeof import('../../src/lib/server/db');
let api: typeof import('../../src/lib/server/api');

const BAR = 1e5;
const ids = { rig: 0, ball: 0, plan: 0 };
let officer: AppUser;
let otherOfficer: AppUser;
let analyst: AppUser;
let serial = 0;

async function newSession() {
	const [row] = await scratch.db
		.insert(rangeSessions)
		.values({
			title: `Safety session ${++serial}`,
			rigId: ids.rig,
			projectileId: ids.ball,
			testPlanId: ids.plan,
			startedAt: new Date('2026-11-30T09:00:00.000Z'),
			targetDistanceM: 5,
			elevationDeg: 1,
			launchHeightM: 1.2,
			aimHeightM: 1.2,
			temperatureC: 10,
			pressurePa: 101_000,
			relativeHumidity: 0.6
		})
		.$returningId();
	return row.id;
}

const shot = (over: Record<string, unknown> = {}) => ({ clientUuid: crypto.randomUUID(), fillGaugePa: 2.2 * BAR, muzzleSpeedMps: 97.4, miss: false, ...over });

beforeAll(async () => {
	scratch = await scratchDatabase();
	savedUrl = process.env.DATABASE_URL;
	process.env.DATABASE_URL = scratch.url;
	shotsModule = await import('../../src/lib/server/shots');
	reconcile = await import('../../src/lib/server/reconcile');
	appDb = await import('../../src/lib/server/db');
	api = await import('../../src/lib/server/api');
	const person = async (role: 'range_officer' | 'analyst', tag: string) => {
		const email = `${tag}-${Date.now()}@safety.test`;
		const [row] = await scratch.db.insert(users).values({ email, name: tag, role, passwordHash: 'x' }).$returningId();
		return { id: row.id, email, name: tag, role, unitPreferences: null } satisfies AppUser;
	};
	officer = await person('range_officer', 'officer');
	otherOfficer = await person('range_officer', 'other');
	analyst = await person('analyst', 'analyst');
	[{ id: ids.rig }] = await scratch.db
		.insert(rigs)
		.values({ name: 'Safety rig', reservoirM3: 2e-3, deadM3: 0.05e-3, boreDiameterM: 0.0254, travelM: 1.2, ratedPressurePa: 8 * BAR, valveType: 'diaphragm', nominalEfficiency: 0.55 })
		.$returningId();
	[{ id: ids.ball }] = await scratch.db
		.insert(projectiles)
		.values({ name: 'Safety ball', massKg: 7.53e-3, diameterM: 0.025, lengthM: 0.025, shape: 'sphere', nominalDragCoefficient: 0.45 })
		.$returningId();
	[{ id: ids.plan }] = await scratch.db
		.insert(testPlans)
		.values({ name: 'Safety plan', speedAt: 'muzzle', requiredSpeedMps: 97, speedTolerancePct: 3, impactToleranceM: 0.02, targetDistanceM: 5, shotsRequired: 10 })
		.$returningId();
});

afterAll(async () => {
	await appDb?.closeDatabase();
	process.env.DATABASE_URL = savedUrl;
	await scratch?.drop();
});

describe('a fill pressure above the rig’s rating', () => {
	it('is refused with a 422 naming fillGaugePa unless confirmed, and stores nothing', async () => {
		const sessionId = await newSession();
		const body = shot({ fillGaugePa: 12 * BAR });
		const refusal = await shotsModule.create(sessionId, body, officer).catch((e: unknown) => e);
		expect(refusal).toMatchObject({ field: 'fillGaugePa', status: 422 });
		// As the API answers it (the edge's mapping).
		const response = api.errorResponse(refusal);
		expect(response.status).toBe(422);
		expect(await response.json()).toMatchObject({ issues: [{ path: 'fillGaugePa' }] });
		await expect(shotsModule.create(sessionId, { ...body, aboveRatingConfirmed: false }, officer)).rejects.toMatchObject({ field: 'fillGaugePa', status: 422 });
		expect(await scratch.db.select().from(shots).where(eq(shots.sessionId, sessionId))).toHaveLength(0);
		// The next shot still takes sequence 1: the refused one left no trace.
		const next = await shotsModule.create(sessionId, shot(), officer);
		expect(next.shot).toMatchObject({ sequence: 1, aboveRating: false });
	});

	it('confirmed, is kept, marked as a safety event and audited in the same batch; at the rating it is an ordinary shot', async () => {
		const sessionId = await newSession();
		const { shot: stored, created } = await shotsModule.create(sessionId, shot({ fillGaugePa: 12 * BAR, aboveRatingConfirmed: true }), officer);
		expect(created).toBe(true);
		expect(stored.aboveRating).toBe(true);
		expect(await shotsModule.getWithPrediction(stored.id)).toMatchObject({ aboveRating: true, fillGaugePa: 12 * BAR });
		const events = await scratch.db.select().from(auditEvents).where(and(eq(auditEvents.entityType, 'shot'), eq(auditEvents.entityId, String(stored.id))));
		expect(events).toHaveLength(1);
		expect(events[0]).toMatchObject({ action: 'above_rating', userId: officer.id, after: { sessionId, fillGaugePa: 12 * BAR, ratedPressurePa: 8 * BAR } });
		// Exactly at the rating, or confirmed needlessly below it: no safety event.
		const atRating = await shotsModule.create(sessionId, shot({ fillGaugePa: 8 * BAR }), officer);
		const needless = await shotsModule.create(sessionId, shot({ aboveRatingConfirmed: true }), officer);
		expect([atRating.shot.aboveRating, needless.shot.aboveRating]).toEqual([false, false]);
		const [row] = await scratch.db.select().from(shots).where(eq(shots.id, needless.shot.id));
		expect(row.aboveRating).toBe(false);
		expect(await scratch.db.select().from(auditEvents).where(eq(auditEvents.action, 'above_rating'))).toHaveLength(1);
	});

	it('a correction to a pressure above the rating is refused unless confirmed, and sets the flag when confirmed', async () => {
		const sessionId = await newSession();
		const { shot: stored } = await shotsModule.create(sessionId, shot(), officer);
		await expect(shotsModule.update(stored.id, { fillGaugePa: 9 * BAR }, officer)).rejects.toMatchObject({ field: 'fillGaugePa', status: 422 });
		const after = await shotsModule.update(stored.id, { fillGaugePa: 9 * BAR, aboveRatingConfirmed: true }, officer);
		expect(after).toMatchObject({ aboveRating: true, fillGaugePa: 9 * BAR });
		const back = await shotsModule.update(stored.id, { fillGaugePa: 2 * BAR }, officer);
		expect(back.aboveRating).toBe(false);
	});
});

describe('void and corrections at the firing line', () => {
	it('a void keeps the shot with its reason, audited, and takes it out of the session’s statistics; undone with null', async () => {
		const sessionId = await newSession();
		const first = await shotsModule.create(sessionId, shot({ muzzleSpeedMps: 97 }), officer);
		await shotsModule.create(sessionId, shot({ muzzleSpeedMps: 98 }), officer);
		const voided = await shotsModule.setVoided(first.shot.id, 'Chronograph did not trigger', officer);
		expect(voided).toMatchObject({ voidReason: 'Chronograph did not trigger', voidedBy: officer.id, deletedAt: null });
		expect(voided.voidedAt).toBeInstanceOf(Date);
		const statistics = await reconcile.sessionStatistics(scratch.db as never, sessionId);
		expect(statistics.counts.shots).toBe(1);
		expect(statistics.speed.muzzle.mean).toBeCloseTo(98, 10);
		const [event] = await scratch.db.select().from(auditEvents).where(and(eq(auditEvents.action, 'void'), eq(auditEvents.entityId, String(first.shot.id))));
		expect(event).toMatchObject({ userId: officer.id, after: { voidReason: 'Chronograph did not trigger' } });
		const restored = await shotsModule.setVoided(first.shot.id, null, officer);
		expect(restored).toMatchObject({ voidedAt: null, voidReason: null });
		expect((await reconcile.sessionStatistics(scratch.db as never, sessionId)).counts.shots).toBe(2);
	});

	it('an officer corrects or voids only their own shots, and only while the session is open; an analyst any', async () => {
		const sessionId = await newSession();
		const { shot: mine } = await shotsModule.create(sessionId, shot(), officer);
		await expect(shotsModule.setVoided(mine.id, 'not mine', otherOfficer)).rejects.toMatchObject({ status: 403 });
		await expect(shotsModule.update(mine.id, { muzzleSpeedMps: 90 }, otherOfficer)).rejects.toMatchObject({ status: 403 });
		const corrected = await shotsModule.update(mine.id, { muzzleSpeedMps: 96.5 }, officer);
		expect(corrected.muzzleSpeedMps).toBe(96.5);
		const [event] = await scratch.db.select().from(auditEvents).where(and(eq(auditEvents.action, 'update'), eq(auditEvents.entityId, String(mine.id))));
		expect(event).toMatchObject({ userId: officer.id, before: { muzzleSpeedMps: 97.4 }, after: { muzzleSpeedMps: 96.5 } });
		expect(await shotsModule.setVoided(mine.id, 'by the analyst', analyst)).toMatchObject({ voidReason: 'by the analyst' });
		await scratch.db.update(rangeSessions).set({ status: 'closed', closedAt: new Date() }).where(eq(rangeSessions.id, sessionId));
		await expect(shotsModule.setVoided(mine.id, null, officer)).rejects.toMatchObject({ status: 403 });
		await expect(shotsModule.update(mine.id, { muzzleSpeedMps: 97 }, officer)).rejects.toMatchObject({ status: 403 });
	});

	it('the log page acts only on its own session’s shots: another session’s shot id is 404', async () => {
		const a = await newSession();
		const b = await newSession();
		const { shot: inA } = await shotsModule.create(a, shot(), officer);
		await expect(shotsModule.assertInSession(inA.id, a)).resolves.toBeUndefined();
		await expect(shotsModule.assertInSession(inA.id, b)).rejects.toMatchObject({ status: 404, field: 'shotId' });
		await expect(shotsModule.assertInSession(999_999_999, a)).rejects.toMatchObject({ status: 404 });
	});
});
