// Range sessions: one sitting on one rig with one projectile type and fixed geometry.
import { error } from '@sveltejs/kit';
import { and, count, eq, gte, isNotNull, isNull, like, lte, sql } from 'drizzle-orm';
import { hasRole } from '$lib/roles';
import type { RangeSessionInput } from '$lib/schemas/range';
import { db, type Database, type Transaction } from './db';
import { projectiles, rangeSessions, rigs, shots, testPlans } from './db/schema';
import { recordAudit } from './audit';
import { recomputePredictions } from './reconcile';
import { containsPattern, orderBy, pageOf, type ListParams } from './listing';

export type RangeSession = typeof rangeSessions.$inferSelect;

export const SESSION_SORTS = ['startedAt', 'title', 'rig', 'status'] as const;
export type SessionSort = (typeof SESSION_SORTS)[number];

export type SessionFilters = { rigId?: number | null; status?: 'open' | 'closed' | null; from?: Date | null; to?: Date | null };

const shotCount = sql<number>`(SELECT COUNT(*) FROM ${shots} WHERE ${shots.sessionId} = ${rangeSessions.id} AND ${shots.deletedAt} IS NULL)`.mapWith(Number);

export async function list(params: ListParams<SessionSort>, filters: SessionFilters = {}) {
	const where = and(
		params.deleted ? isNotNull(rangeSessions.deletedAt) : isNull(rangeSessions.deletedAt),
		params.q ? like(rangeSessions.title, containsPattern(params.q)) : undefined,
		filters.rigId ? eq(rangeSessions.rigId, filters.rigId) : undefined,
		filters.status ? eq(rangeSessions.status, filters.status) : undefined,
		filters.from ? gte(rangeSessions.startedAt, filters.from) : undefined,
		filters.to ? lte(rangeSessions.startedAt, filters.to) : undefined
	);
	const sortColumn = {
		startedAt: rangeSessions.startedAt,
		title: rangeSessions.title,
		rig: rigs.name,
		status: rangeSessions.status
	}[params.sort];
	const [rows, [total]] = await Promise.all([
		db
			.select({
				id: rangeSessions.id,
				title: rangeSessions.title,
				status: rangeSessions.status,
				startedAt: rangeSessions.startedAt,
				closedAt: rangeSessions.closedAt,
				rigId: rangeSessions.rigId,
				rig: rigs.name,
				projectile: projectiles.name,
				plan: testPlans.name,
				targetDistanceM: rangeSessions.targetDistanceM,
				shotCount
			})
			.from(rangeSessions)
			.innerJoin(rigs, eq(rigs.id, rangeSessions.rigId))
			.innerJoin(projectiles, eq(projectiles.id, rangeSessions.projectileId))
			.leftJoin(testPlans, eq(testPlans.id, rangeSessions.testPlanId))
			.where(where)
			.orderBy(orderBy(sortColumn, params.dir), orderBy(rangeSessions.id, params.dir))
			.limit(params.pageSize)
			.offset((params.page - 1) * params.pageSize),
		db.select({ n: count() }).from(rangeSessions).innerJoin(rigs, eq(rigs.id, rangeSessions.rigId)).where(where)
	]);
	return pageOf(rows, total?.n ?? 0, params);
}

/** The session with its rig, projectile and plan, or null. */
export async function get(id: number, executor: Database | Transaction = db) {
	const [row] = await executor
		.select({ session: rangeSessions, rig: rigs, projectile: projectiles, plan: testPlans })
		.from(rangeSessions)
		.innerJoin(rigs, eq(rigs.id, rangeSessions.rigId))
		.innerJoin(projectiles, eq(projectiles.id, rangeSessions.projectileId))
		.leftJoin(testPlans, eq(testPlans.id, rangeSessions.testPlanId))
		.where(eq(rangeSessions.id, id))
		.limit(1);
	return row ?? null;
}

export async function getOr404(id: number) {
	const row = await get(id);
	if (!row) error(404, { message: `No range session with id ${id}.` });
	return row;
}

export class SessionRuleError extends Error {
	constructor(
		public readonly field: string,
		message: string,
		public readonly status = 400
	) {
		super(message);
	}
}

async function checkReferences(tx: Transaction, input: RangeSessionInput) {
	const [rig] = await tx.select().from(rigs).where(eq(rigs.id, input.rigId)).limit(1);
	if (!rig || rig.deletedAt) throw new SessionRuleError('rigId', 'Choose a rig that is in service.');
	const [projectile] = await tx.select().from(projectiles).where(eq(projectiles.id, input.projectileId)).limit(1);
	if (!projectile || projectile.deletedAt) throw new SessionRuleError('projectileId', 'Choose a projectile that is in the registry.');
	if (input.testPlanId) {
		const [plan] = await tx.select().from(testPlans).where(eq(testPlans.id, input.testPlanId)).limit(1);
		if (!plan || plan.deletedAt) throw new SessionRuleError('testPlanId', 'Choose a test plan that is in the registry, or none.');
	}
}

export async function create(input: RangeSessionInput, user: AppUser) {
	return db.transaction(async (tx) => {
		await checkReferences(tx, input);
		const [created] = await tx
			.insert(rangeSessions)
			.values({ ...input, testPlanId: input.testPlanId ?? null, downrangeChronoM: input.downrangeChronoM ?? null, createdBy: user.id })
			.$returningId();
		const [row] = await tx.select().from(rangeSessions).where(eq(rangeSessions.id, created.id));
		await recordAudit(tx, { userId: user.id, action: 'create', entityType: 'range_session', entityId: created.id, after: row });
		return row;
	});
}

/** Lock the session row for the rest of the transaction (serialises writers of one session). */
export async function lockForWrite(tx: Transaction, id: number) {
	const [row] = await tx.select().from(rangeSessions).where(eq(rangeSessions.id, id)).for('update');
	if (!row || row.deletedAt) throw new SessionRuleError('sessionId', `No range session with id ${id}.`, 404);
	return row;
}

/** A closed session is locked: later edits need a lead (and are audited like every edit). */
export function assertWritable(session: RangeSession, user: AppUser) {
	if (session.status === 'closed' && !hasRole(user.role, 'lead'))
		throw new SessionRuleError('sessionId', 'This session is closed; only a lead may change it now.', 403);
}

export async function update(id: number, input: RangeSessionInput, user: AppUser) {
	return db.transaction(async (tx) => {
		const before = await lockForWrite(tx, id);
		assertWritable(before, user);
		await checkReferences(tx, input);
		await tx
			.update(rangeSessions)
			.set({ ...input, testPlanId: input.testPlanId ?? null, downrangeChronoM: input.downrangeChronoM ?? null })
			.where(eq(rangeSessions.id, id));
		// Geometry, conditions and the plan feed every prediction and pass/fail of the session.
		await recomputePredictions(tx, { sessionIds: [id] });
		const [after] = await tx.select().from(rangeSessions).where(eq(rangeSessions.id, id));
		await recordAudit(tx, { userId: user.id, action: before.status === 'closed' ? 'update_closed' : 'update', entityType: 'range_session', entityId: id, before, after });
		return { before, after };
	});
}

export async function close(id: number, user: AppUser) {
	return db.transaction(async (tx) => {
		const before = await lockForWrite(tx, id);
		if (before.status === 'closed') throw new SessionRuleError('sessionId', 'This session is already closed.', 409);
		await tx.update(rangeSessions).set({ status: 'closed', closedAt: new Date(), closedBy: user.id }).where(eq(rangeSessions.id, id));
		const [after] = await tx.select().from(rangeSessions).where(eq(rangeSessions.id, id));
		await recordAudit(tx, { userId: user.id, action: 'close', entityType: 'range_session', entityId: id, before, after });
		return after;
	});
}

export async function reopen(id: number, user: AppUser) {
	if (!hasRole(user.role, 'lead')) throw new SessionRuleError('sessionId', 'Only a lead may reopen a closed session.', 403);
	return db.transaction(async (tx) => {
		const before = await lockForWrite(tx, id);
		if (before.status === 'open') throw new SessionRuleError('sessionId', 'This session is open already.', 409);
		await tx.update(rangeSessions).set({ status: 'open', closedAt: null, closedBy: null }).where(eq(rangeSessions.id, id));
		const [after] = await tx.select().from(rangeSessions).where(eq(rangeSessions.id, id));
		await recordAudit(tx, { userId: user.id, action: 'reopen', entityType: 'range_session', entityId: id, before, after });
		return after;
	});
}

export async function setDeleted(id: number, deleted: boolean, user: AppUser) {
	return db.transaction(async (tx) => {
		const [before] = await tx.select().from(rangeSessions).where(eq(rangeSessions.id, id)).for('update');
		// Deleting a deleted session finds nothing to delete (404, and no audit event).
		if (!before || (deleted && before.deletedAt)) throw new SessionRuleError('sessionId', `No range session with id ${id}.`, 404);
		assertWritable(before, user);
		if (!deleted && !before.deletedAt) return before;
		await tx.update(rangeSessions).set({ deletedAt: deleted ? new Date() : null }).where(eq(rangeSessions.id, id));
		const [after] = await tx.select().from(rangeSessions).where(eq(rangeSessions.id, id));
		await recordAudit(tx, { userId: user.id, action: deleted ? 'delete' : 'restore', entityType: 'range_session', entityId: id, before, after });
		return after;
	});
}
