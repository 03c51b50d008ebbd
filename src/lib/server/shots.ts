// Shots: logged at the firing line (tablets, possibly offline and resending), imported from
// chronograph files, or edited by analysts. A client-made UUID makes creation idempotent; the
// session row lock makes server-assigned sequence numbers distinct across several tablets.
import { and, asc, count, desc, eq, inArray, isNotNull, isNull, max, sql } from 'drizzle-orm';
import type { ShotInput, ShotUpdate } from '$lib/schemas/range';
import { db, pool } from './db';
import * as raw from './db/raw';
import { name, selectList, tableName } from './db/raw';
import { rangeSessions, shotPredictions, shots } from './db/schema';
import { recordAudit } from './audit';
import { predictStoredShot, recomputePredictions } from './reconcile';
import { assertWritable, lockForWrite, SessionRuleError, type RangeSession } from './sessions';
import { pageOf } from './listing';

export type Shot = typeof shots.$inferSelect;
export type ShotWithPrediction = Shot & { prediction: typeof shotPredictions.$inferSelect | null };

function isDuplicate(err: unknown, index: string) {
	const e = err as { code?: string; message?: string; cause?: { code?: string; message?: string } };
	const code = e?.cause?.code ?? e?.code;
	const message = e?.cause?.message ?? e?.message ?? '';
	return code === 'ER_DUP_ENTRY' && message.includes(index);
}

// Logging a shot is the hottest write (several tablets on one session, scripts posting files
// shot by shot), so it runs as hand-written SQL on a raw connection (db/raw.ts says why).
const SESSION_FOR_UPDATE = `SELECT ${selectList(rangeSessions)} FROM ${tableName(rangeSessions)} WHERE ${name(rangeSessions.id)} = ? FOR UPDATE`;
const SHOT_BY_UUID = `SELECT ${selectList(shots)} FROM ${tableName(shots)} WHERE ${name(shots.clientUuid)} = ?`;
/** The session's last sequence number and whether (and where) the client's UUID is stored already. */
const LAST_SEQUENCE_AND_UUID =
	`SELECT (SELECT MAX(${name(shots.sequence)}) FROM ${tableName(shots)} WHERE ${name(shots.sessionId)} = ?) AS last_sequence, ` +
	`(SELECT ${name(shots.sessionId)} FROM ${tableName(shots)} WHERE ${name(shots.clientUuid)} = ?) AS uuid_session_id`;

/**
 * Record a shot and compare it with the model; the stored shot with its prediction is returned.
 * A resend of the same clientUuid returns the stored shot (created: false) and changes nothing.
 * Without a sequence the server assigns the next free one.
 *
 * Two short transactions: the first holds the session row lock only while it assigns the
 * sequence and inserts (several tablets on one session queue on that lock, so it must be brief);
 * the second compares the new shot with the model (reconcile's predictStoredShot, which
 * share-locks the pair's calibrations so an approval running meanwhile cannot leave it stale).
 */
export async function create(sessionId: number, input: ShotInput, user: AppUser): Promise<{ shot: ShotWithPrediction; created: boolean }> {
	const result = await insert(sessionId, input, user);
	if (!result.created) {
		const stored = await getWithPrediction(result.shot.id);
		if (!stored) throw new Error(`shot ${result.shot.id} vanished after it was stored`);
		return { shot: stored, created: false };
	}
	// The stored rows are known without reading them back (raw.insertedRow).
	return { shot: { ...result.shot, prediction: await predictNewShot(result.shot, result.session) }, created: true };
}

async function predictNewShot(shot: Shot, session: RangeSession) {
	try {
		return await raw.transaction((connection) => predictStoredShot(connection, shot, session));
	} catch (err) {
		// The shot is stored either way; a failed prediction is recomputed by the next change to
		// the session, rig or calibration, and the session's statistics count it as not predicted.
		console.error(`Prediction of shot ${shot.id} failed:`, err);
		return null;
	}
}

type Inserted = { shot: Shot; session: RangeSession; created: true } | { shot: { id: number }; created: false };

async function insert(sessionId: number, input: ShotInput, user: AppUser): Promise<Inserted> {
	try {
		return await raw.transaction(async (connection): Promise<Inserted> => {
			// The locking read runs first: the consistent read queued behind it then sees every shot
			// committed by the previous holder of the lock.
			const [[sessionRaw], [found]] = await Promise.all([
				raw.query(connection, SESSION_FOR_UPDATE, [sessionId]),
				raw.query<{ last_sequence: number | null; uuid_session_id: number | null }>(connection, LAST_SEQUENCE_AND_UUID, [
					sessionId,
					input.clientUuid
				])
			]);
			const session = sessionRaw ? raw.rowOf(rangeSessions, sessionRaw) : null;
			if (!session || session.deletedAt) throw new SessionRuleError('sessionId', `No range session with id ${sessionId}.`, 404);
			if (found.uuid_session_id !== null) return resent(connection, sessionId, input.clientUuid);
			assertWritable(session, user);
			// Every column with a default is given, so the stored row is known (raw.insertedRow).
			const now = new Date();
			const values = {
				...input,
				sessionId,
				sequence: input.sequence ?? (found.last_sequence ?? 0) + 1,
				firedAt: input.firedAt ?? now,
				miss: input.miss ?? false,
				enteredBy: user.id,
				createdAt: now,
				updatedAt: now
			};
			const statement = raw.insertStatement(shots, values);
			const { insertId } = await raw.execute(connection, statement.sql, statement.values);
			return { shot: raw.insertedRow(shots, { ...values, id: insertId }), session, created: true };
		});
	} catch (err) {
		if (isDuplicate(err, 'shots_session_sequence_unique'))
			throw new SessionRuleError('sequence', `Sequence number ${input.sequence} is already taken in this session.`, 409);
		// Two sends of one shot raced; the first one won. Answer like a resend.
		if (isDuplicate(err, 'shots_client_uuid_unique')) return resent(pool().pool, sessionId, input.clientUuid);
		throw err;
	}
}

/** The stored shot of a resent clientUuid; 409 when the UUID belongs to another session's shot. */
async function resent(connection: raw.Queryable, sessionId: number, clientUuid: string): Promise<Inserted> {
	const [row] = await raw.query(connection, SHOT_BY_UUID, [clientUuid]);
	const shot = row ? raw.rowOf(shots, row) : null;
	if (!shot) throw new Error(`the shot with clientUuid ${clientUuid} was reported stored but is not`);
	if (shot.sessionId !== sessionId)
		throw new SessionRuleError('clientUuid', 'This clientUuid belongs to a shot of another session.', 409);
	return { shot: { id: shot.id }, created: false };
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
