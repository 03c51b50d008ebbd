// Shots: logged at the firing line (tablets, possibly offline and resending), imported from
// chronograph files, or edited by analysts. A client-made UUID makes creation idempotent; the
// session row lock makes server-assigned sequence numbers distinct across several tablets.
import { and, asc, count, desc, eq, inArray, isNotNull, isNull, max, sql } from 'drizzle-orm';
import type { ShotInput, ShotUpdate } from '$lib/schemas/range';
import { db, type Transaction } from './db';
import { calibrations, shotPredictions, shots } from './db/schema';
import { recordAudit } from './audit';
import { recomputePredictions } from './reconcile';
import { assertWritable, lockForWrite, SessionRuleError } from './sessions';
import { pageOf } from './listing';

export type Shot = typeof shots.$inferSelect;
export type ShotWithPrediction = Shot & { prediction: typeof shotPredictions.$inferSelect | null };

function isDuplicate(err: unknown, index: string) {
	const e = err as { code?: string; message?: string; cause?: { code?: string; message?: string } };
	const code = e?.cause?.code ?? e?.code;
	const message = e?.cause?.message ?? e?.message ?? '';
	return code === 'ER_DUP_ENTRY' && message.includes(index);
}

async function byUuid(tx: Transaction, clientUuid: string) {
	const [row] = await tx.select().from(shots).where(eq(shots.clientUuid, clientUuid)).limit(1);
	return row ?? null;
}

/**
 * Record a shot. A resend of the same clientUuid returns the stored shot (created: false) and
 * changes nothing. Without a sequence the server assigns the next free one.
 *
 * Two short transactions: the first holds the session row lock only while it assigns the
 * sequence and inserts (several tablets on one session queue on that lock, so it must be brief);
 * the second compares the new shot with the model.
 */
export async function create(sessionId: number, input: ShotInput, user: AppUser): Promise<{ shot: Shot; created: boolean }> {
	const result = await insert(sessionId, input, user);
	if (result.created) await predictNewShot(result.shot.id, result.rigId, result.projectileId);
	return { shot: result.shot, created: result.created };
}

/**
 * The prediction of a shot just stored. It share-locks the pair's calibrations first, which an
 * approval locks for update while it recomputes every shot of the pair: so this prediction either
 * waits for the approval (and then uses the new calibration) or the approval waits for it (and
 * then recomputes this shot too). Never a stale prediction written after an approval.
 */
async function predictNewShot(shotId: number, rigId: number, projectileId: number) {
	try {
		await db.transaction(async (tx) => {
			// MariaDB spells the shared lock LOCK IN SHARE MODE (10.11 has no FOR SHARE).
			await tx.execute(
				sql`SELECT ${calibrations.id} FROM ${calibrations} WHERE ${calibrations.rigId} = ${rigId} AND ${calibrations.projectileId} = ${projectileId} LOCK IN SHARE MODE`
			);
			await recomputePredictions(tx, { shotIds: [shotId] });
		});
	} catch (err) {
		// The shot is stored either way; a failed prediction is recomputed by the next change to
		// the session, rig or calibration, and the session's statistics count it as not predicted.
		console.error(`Prediction of shot ${shotId} failed:`, err);
	}
}

async function insert(sessionId: number, input: ShotInput, user: AppUser) {
	try {
		return await db.transaction(async (tx) => {
			const session = await lockForWrite(tx, sessionId);
			const existing = await byUuid(tx, input.clientUuid);
			if (existing) {
				if (existing.sessionId !== sessionId)
					throw new SessionRuleError('clientUuid', 'This clientUuid belongs to a shot of another session.', 409);
				return { shot: existing, created: false, rigId: session.rigId, projectileId: session.projectileId };
			}
			assertWritable(session, user);
			let sequence = input.sequence ?? null;
			if (sequence === null) {
				const [last] = await tx.select({ n: max(shots.sequence) }).from(shots).where(eq(shots.sessionId, sessionId));
				sequence = (last?.n ?? 0) + 1;
			}
			const [created] = await tx
				.insert(shots)
				.values({
					...input,
					sessionId,
					sequence,
					firedAt: input.firedAt ?? new Date(),
					miss: input.miss ?? false,
					enteredBy: user.id
				})
				.$returningId();
			const [row] = await tx.select().from(shots).where(eq(shots.id, created.id));
			return { shot: row, created: true, rigId: session.rigId, projectileId: session.projectileId };
		});
	} catch (err) {
		if (isDuplicate(err, 'shots_session_sequence_unique'))
			throw new SessionRuleError('sequence', `Sequence number ${input.sequence} is already taken in this session.`, 409);
		if (isDuplicate(err, 'shots_client_uuid_unique')) {
			// Two sends of one shot raced; the first one won. Answer like a resend.
			const [row] = await db.select().from(shots).where(eq(shots.clientUuid, input.clientUuid));
			if (row && row.sessionId === sessionId) return { shot: row, created: false, rigId: 0, projectileId: 0 };
		}
		throw err;
	}
}

export async function get(shotId: number) {
	const [row] = await db.select().from(shots).where(eq(shots.id, shotId)).limit(1);
	return row ?? null;
}

export async function update(shotId: number, patch: ShotUpdate, user: AppUser) {
	try {
		return await db.transaction(async (tx) => {
			const [current] = await tx.select().from(shots).where(eq(shots.id, shotId));
			if (!current || current.deletedAt) throw new SessionRuleError('shotId', `No shot with id ${shotId}.`, 404);
			const session = await lockForWrite(tx, current.sessionId);
			assertWritable(session, user);
			const [before] = await tx.select().from(shots).where(eq(shots.id, shotId));
			const changes = Object.fromEntries(Object.entries(patch).filter(([, v]) => v !== undefined));
			if (Object.keys(changes).length > 0) await tx.update(shots).set(changes).where(eq(shots.id, shotId));
			await recomputePredictions(tx, { shotIds: [shotId] });
			const [after] = await tx.select().from(shots).where(eq(shots.id, shotId));
			await recordAudit(tx, { userId: user.id, action: session.status === 'closed' ? 'update_closed' : 'update', entityType: 'shot', entityId: shotId, before, after });
			return after;
		});
	} catch (err) {
		if (isDuplicate(err, 'shots_session_sequence_unique'))
			throw new SessionRuleError('sequence', `Sequence number ${patch.sequence} is already taken in this session.`, 409);
		throw err;
	}
}

export async function setDeleted(shotId: number, deleted: boolean, user: AppUser) {
	return db.transaction(async (tx) => {
		const [current] = await tx.select().from(shots).where(eq(shots.id, shotId));
		if (!current) throw new SessionRuleError('shotId', `No shot with id ${shotId}.`, 404);
		const session = await lockForWrite(tx, current.sessionId);
		assertWritable(session, user);
		await tx.update(shots).set({ deletedAt: deleted ? new Date() : null }).where(eq(shots.id, shotId));
		const [after] = await tx.select().from(shots).where(eq(shots.id, shotId));
		await recordAudit(tx, { userId: user.id, action: deleted ? 'delete' : 'restore', entityType: 'shot', entityId: shotId, before: current, after });
		return after;
	});
}

export type ShotListParams = { page: number; pageSize: number; deleted?: boolean; from?: number | null; to?: number | null };

/** A session's shots in sequence order with their predictions and residuals. */
export async function listForSession(sessionId: number, params: ShotListParams) {
	const where = and(
		eq(shots.sessionId, sessionId),
		params.deleted ? isNotNull(shots.deletedAt) : isNull(shots.deletedAt),
		params.from ? sql`${shots.sequence} >= ${params.from}` : undefined,
		params.to ? sql`${shots.sequence} <= ${params.to}` : undefined
	);
	const [rows, [total]] = await Promise.all([
		db
			.select({ shot: shots, prediction: shotPredictions })
			.from(shots)
			.leftJoin(shotPredictions, eq(shotPredictions.shotId, shots.id))
			.where(where)
			.orderBy(asc(shots.sequence))
			.limit(params.pageSize)
			.offset((params.page - 1) * params.pageSize),
		db.select({ n: count() }).from(shots).where(where)
	]);
	return pageOf(
		rows.map((r) => ({ ...r.shot, prediction: r.prediction })),
		total?.n ?? 0,
		params
	);
}

/** Every live shot of the session (for charts and statistics), in sequence order. */
export async function allForSession(sessionId: number): Promise<ShotWithPrediction[]> {
	const rows = await db
		.select({ shot: shots, prediction: shotPredictions })
		.from(shots)
		.leftJoin(shotPredictions, eq(shotPredictions.shotId, shots.id))
		.where(and(eq(shots.sessionId, sessionId), isNull(shots.deletedAt)))
		.orderBy(asc(shots.sequence));
	return rows.map((r) => ({ ...r.shot, prediction: r.prediction }));
}

/** The latest shots of a session, newest first, with their residuals (for the firing line). */
export async function recentForSession(sessionId: number, limit: number): Promise<ShotWithPrediction[]> {
	const rows = await db
		.select({ shot: shots, prediction: shotPredictions })
		.from(shots)
		.leftJoin(shotPredictions, eq(shotPredictions.shotId, shots.id))
		.where(and(eq(shots.sessionId, sessionId), isNull(shots.deletedAt)))
		.orderBy(desc(shots.sequence))
		.limit(limit);
	return rows.map((r) => ({ ...r.shot, prediction: r.prediction }));
}

/** One shot with its prediction and residuals (deleted shots too, with deletedAt set), or null. */
export async function getWithPrediction(shotId: number): Promise<ShotWithPrediction | null> {
	const [row] = await db
		.select({ shot: shots, prediction: shotPredictions })
		.from(shots)
		.leftJoin(shotPredictions, eq(shotPredictions.shotId, shots.id))
		.where(eq(shots.id, shotId))
		.limit(1);
	return row ? { ...row.shot, prediction: row.prediction } : null;
}

export async function byIds(ids: number[]) {
	if (ids.length === 0) return [];
	return db.select().from(shots).where(inArray(shots.id, ids));
}
