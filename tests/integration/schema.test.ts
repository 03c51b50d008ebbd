import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { scratchDatabase } from '../support/db';
import { migrateDatabase } from '../../src/lib/server/db/migrate';
import { projectiles, rangeSessions, rigs, shots, users } from '../../src/lib/server/db/schema';
import { eq } from 'drizzle-orm';

let scratch: Awaited<ReturnType<typeof scratchDatabase>>;

beforeAll(async () => {
	scratch = await scratchDatabase(false);
});
afterAll(async () => {
	await scratch?.drop();
});

async function tableNames() {
	const [rows] = await scratch.pool.query(
		'SELECT table_name AS name FROM information_schema.tables WHERE table_schema = ? ORDER BY table_name',
		[scratch.name]
	);
	return (rows as { name: string }[]).map((r) => r.name);
}

describe('migrations on an empty MariaDB database', () => {
	it('starts empty, then the committed migrations create every table', async () => {
		expect(await tableNames()).toEqual([]);
		await migrateDatabase(scratch.url);
		const names = await tableNames();
		for (const table of ['users', 'rigs', 'projectiles', 'test_plans', 'range_sessions', 'shots', 'imports', 'calibrations', 'audit_events', 'api_tokens'])
			expect(names).toContain(table);
	});

	it('applying them again changes nothing (idempotent)', async () => {
		const before = await tableNames();
		await migrateDatabase(scratch.url);
		expect(await tableNames()).toEqual(before);
	});
});

describe('the schema guards the range record', () => {
	let sessionId: number;

	beforeAll(async () => {
		const db = scratch.db;
		const [user] = await db.insert(users).values({ email: 'it@example.test', name: 'Test', role: 'range_officer' }).$returningId();
		const [rig] = await db
			.insert(rigs)
			.values({ name: 'IT rig', reservoirM3: 0.002, deadM3: 5e-5, boreDiameterM: 0.0254, travelM: 1.2, ratedPressurePa: 8e5, valveType: 'test' })
			.$returningId();
		const [projectile] = await db
			.insert(projectiles)
			.values({ name: 'IT ball', massKg: 0.00753, diameterM: 0.025, lengthM: 0.025, shape: 'sphere', nominalDragCoefficient: 0.47 })
			.$returningId();
		const [session] = await db
			.insert(rangeSessions)
			.values({
				title: 'IT session',
				rigId: rig.id,
				projectileId: projectile.id,
				startedAt: new Date(),
				targetDistanceM: 5,
				elevationDeg: 1,
				launchHeightM: 1.2,
				aimHeightM: 1.2,
				temperatureC: 20,
				pressurePa: 101325,
				relativeHumidity: 0.5,
				createdBy: user.id
			})
			.$returningId();
		sessionId = session.id;
	});

	const shot = (over: Partial<typeof shots.$inferInsert>) => ({
		sessionId,
		sequence: 1,
		clientUuid: crypto.randomUUID(),
		firedAt: new Date('2026-11-30T10:00:00.123Z'),
		fillGaugePa: 2e5,
		muzzleSpeedMps: 25.1,
		...over
	});

	it('stores a shot and reads it back in UTC with milliseconds', async () => {
		const values = shot({ sequence: 1 });
		await scratch.db.insert(shots).values(values);
		const [row] = await scratch.db.select().from(shots).where(eq(shots.clientUuid, values.clientUuid));
		expect(row.firedAt.toISOString()).toBe('2026-11-30T10:00:00.123Z');
		expect(row.muzzleSpeedMps).toBe(25.1);
	});

	it('refuses an orphan shot (foreign key to range_sessions)', async () => {
		await expect(scratch.db.insert(shots).values(shot({ sessionId: 999_999, sequence: 5 }))).rejects.toMatchObject({
			cause: expect.objectContaining({ code: 'ER_NO_REFERENCED_ROW_2' })
		});
	});

	it('refuses a duplicate (session, sequence)', async () => {
		await expect(scratch.db.insert(shots).values(shot({ sequence: 1 }))).rejects.toMatchObject({
			cause: expect.objectContaining({ code: 'ER_DUP_ENTRY' })
		});
	});

	it('refuses a second shot with the same client UUID', async () => {
		const uuid = crypto.randomUUID();
		await scratch.db.insert(shots).values(shot({ sequence: 10, clientUuid: uuid }));
		await expect(scratch.db.insert(shots).values(shot({ sequence: 11, clientUuid: uuid }))).rejects.toMatchObject({
			cause: expect.objectContaining({ code: 'ER_DUP_ENTRY' })
		});
	});
});
