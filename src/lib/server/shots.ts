// Shots: logged at the firing line (tablets, possibly offline and resending), imported from
// chronograph files, or edited by analysts. A client-made UUID makes creation idempotent; the
// session row lock makes server-assigned sequence numbers distinct across several tablets.
import { and, asc, count, desc, eq, inArray, isNotNull, isNull, sql } from 'drizzle-orm';
import type { ShotInput, ShotUpdate } from '$lib/schemas/range';
import type { ResultSetHeader } from 'mysql2';
import { db, pool, type Transaction } from './db';
import { appLink } from './mail';
import { queueForLeads } from './leads';
import * as raw from './db/raw';
import { name, selectList, tableName } from './db/raw';
import { auditEvents, rangeSessions, rigs, shotPredictions, shots } from './db/schema';
import { recordAudit } from './audit';
import {
	insertPredictionIfInputsUnchanged,
	insertPredictionIfSessionUnchanged,
	inputVersions,
	INSERTED_SHOT_ID_VARIABLE,
	predictionInputs,
	predictionInputsRead,
	predictNewShot,
	recomputePredictions,
	type InputVersions,
	type PredictionInputRows,
	type ShotPrediction
} from './reconcile';
import { hasRole } from '$lib/roles';
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
// shot by shot), so it runs as hand-written SQL in batches (db/raw.ts says why).
const SESSION_READ = `SELECT ${selectList(rangeSessions, 's')} FROM ${tableName(rangeSessions)} s WHERE ${name(rangeSessions.id, 's')} = ?`;
const SHOT_BY_UUID = `SELECT ${name(shots.id)} AS id, ${name(shots.sessionId)} AS session_id FROM ${tableName(shots)} WHERE ${name(shots.clientUuid)} = ?`;
/**
 * Right behind the shot's INSERT: its id into the variable the prediction's guarded INSERT reads,
 * or NULL when the INSERT stored nothing (LAST_INSERT_ID() would still hold an earlier shot's id);
 * answers shot_id and next_sequence.
 */
const INSERTED_SHOT = `SELECT ${INSERTED_SHOT_ID_VARIABLE} := IF(ROW_COUNT() = 1, LAST_INSERT_ID(), NULL) AS shot_id, @next_sequence AS next_sequence, @above_rating AS above_rating`;
/**
 * Whether the fill pressure lies above the rated working pressure of the session's rig, into
 * @above_rating (read after the session's lock, as locks go: sessions, then rigs). The shot's
 * INSERT refuses such a shot unless the officer confirmed it (aboveRatingConfirmed), and stores
 * the flag; the rating read is kept in @rated_pressure_pa for the audit event.
 */
const RATED_PRESSURE = `SET @rated_pressure_pa = (SELECT ${name(rigs.ratedPressurePa, 'r')} FROM ${tableName(rangeSessions)} s JOIN ${tableName(rigs)} r ON ${name(rigs.id, 'r')} = ${name(rangeSessions.rigId, 's')} WHERE ${name(rangeSessions.id, 's')} = ?)`;
const ABOVE_RATING = `SET @above_rating = COALESCE(? > @rated_pressure_pa, FALSE)`;
/**
 * The audit event of a shot stored above its rig's rating (a safety event), in the shot's batch;
 * inserts nothing for any other shot.
 */
const ABOVE_RATING_AUDIT =
	`INSERT INTO ${tableName(auditEvents)} (${name(auditEvents.userId)}, ${name(auditEvents.action)}, ${name(auditEvents.entityType)}, ${name(auditEvents.entityId)}, ${name(auditEvents.after)}) ` +
	`SELECT ?, 'above_rating', 'shot', ${INSERTED_SHOT_ID_VARIABLE}, JSON_OBJECT('sessionId', ?, 'clientUuid', ?, 'fillGaugePa', ?, 'ratedPressurePa', CAST(@rated_pressure_pa AS DOUBLE)) ` +
	`FROM DUAL WHERE @above_rating AND ${INSERTED_SHOT_ID_VARIABLE} IS NOT NULL`;
/** The next free sequence number of the session, into @next_sequence (read after the session's lock: see storeShot). */
const NEXT_SEQUENCE = `SET @next_sequence = (SELECT COALESCE(MAX(${name(shots.sequence)}), 0) + 1 FROM ${tableName(shots)} WHERE ${name(shots.sessionId)} = ?)`;

/**
 * The INSERT of a shot whose sequence is the given one or, when that is null, @next_sequence, and
 * whose aboveRating flag is @above_rating; it inserts nothing when the session is deleted, or
 * closed and the user may not edit closed ones, or the fill pressure is above the rig's rating
 * and not confirmed.
 */
function insertShotStatement(
	values: Omit<typeof shots.$inferInsert, 'sequence'> & { sequence: number | null },
	mayEditClosed: boolean,
	aboveRatingConfirmed: boolean
): raw.Statement {
	const { keys, names, params } = raw.insertColumns(shots, values as typeof shots.$inferInsert);
	const placeholders = keys.map((key) => (key === 'sequence' ? 'COALESCE(?, @next_sequence)' : key === 'aboveRating' ? '@above_rating' : '?'));
	return {
		sql:
			`INSERT INTO ${tableName(shots)} (${names.join(', ')}) SELECT ${placeholders.join(', ')} FROM ${tableName(rangeSessions)} s ` +
			`WHERE ${name(rangeSessions.id, 's')} = ? AND ${name(rangeSessions.deletedAt, 's')} IS NULL AND (${name(rangeSessions.status, 's')} <> 'closed' OR ?) ` +
			`AND (NOT @above_rating OR ?)`,
		values: [...params.filter((_, i) => keys[i] !== 'aboveRating'), values.sessionId, mayEditClosed, aboveRatingConfirmed]
	};
}

/**
 * Record a shot and compare it with the model; the stored shot with its prediction is returned.
 * A resend of the same clientUuid returns the stored shot (created: false) and changes nothing.
 * Without a sequence the server assigns the next free one.
 *
 * One transaction sent as one batch (db/raw.ts), on a busy firing line:
 * - the session row locked for update — several tablets on one session queue there, which makes
 *   their sequence numbers distinct — and the next sequence number read after the lock;
 * - the shot's INSERT (nothing when the session is deleted, or closed to this user);
 * - its prediction, computed beforehand from the inputs of the session's last shot (lastInputs)
 *   and written only if they are still what MariaDB holds, read share-locked by that INSERT;
 * - the COMMIT. The session lock is held only while MariaDB runs the batch.
 * For a session's first shot, or when its inputs changed, the batch reads the inputs instead
 * (share-locked: reconcile's predictionInputsRead) and a second transaction writes the
 * prediction (predictStoredShot), or it is computed again from what is stored, under the locks
 * an edit takes. The locks come in the order an approval takes them (sessions, then the pair's
 * calibrations), so the two cannot deadlock, and a change to a rig, plan, session or calibration
 * either shows in the prediction or recomputes it after.
 */
export async function create(sessionId: number, input: ShotInput, user: AppUser): Promise<{ shot: ShotWithPrediction; created: boolean }> {
	let stored: Stored;
	try {
		stored = await storeShot(sessionId, input, user);
	} catch (err) {
		if (isDuplicate(err, 'shots_session_sequence_unique'))
			throw new SessionRuleError('sequence', `Sequence number ${input.sequence} is already taken in this session.`, 409);
		// A resend of a stored shot, or two sends of one shot that raced (the first one won).
		const resentId = isDuplicate(err, 'shots_client_uuid_unique') ? await resent(pool().pool, sessionId, input.clientUuid) : null;
		if (resentId === null) throw err;
		stored = { resentId };
	}
	if ('resentId' in stored) {
		const shot = await getWithPrediction(stored.resentId);
		if (!shot) throw new Error(`shot ${stored.resentId} vanished after it was stored`);
		return { shot, created: false };
	}
	if (stored.shot.aboveRating) await notifyLeadsOfAboveRating(stored.shot, stored.session);
	if (stored.prediction) return { shot: { ...stored.shot, prediction: stored.prediction }, created: true };
	const prediction = await predictStoredShot(stored.shot, stored.session, stored.fresh);
	return { shot: { ...stored.shot, prediction }, created: true };
}

/** The refusal of an unconfirmed fill pressure above the rig's rated working pressure (most likely a typo). */
function aboveRatingRefusal() {
	return new SessionRuleError(
		'fillGaugePa',
		"The fill pressure is above the rig's rated working pressure: most likely a typo. Check the gauge reading; if the shot really was fired so, confirm it (aboveRatingConfirmed) and it is kept as a safety event.",
		422
	);
}

/** Mail the leads about a shot confirmed above its rig's rating; the shot is stored whether or not the mail goes out. */
async function notifyLeadsOfAboveRating(shot: Shot, session: RangeSession) {
	try {
		const [rig] = await db.select({ name: rigs.name, ratedPressurePa: rigs.ratedPressurePa }).from(rigs).where(eq(rigs.id, session.rigId));
		const bar = (pa: number) => `${(pa / 1e5).toFixed(2)} bar (${Math.round(pa)} Pa gauge)`;
		await queueForLeads(db, {
			kind: 'safety_event',
			entityId: shot.id,
			subject: `Safety: shot above rated pressure in ${session.title}`,
			text: [
				`Shot #${shot.sequence} of range session "${session.title}" was fired at ${bar(shot.fillGaugePa)},`,
				`above the rated working pressure of rig ${rig?.name ?? session.rigId}${rig ? ` (${bar(rig.ratedPressurePa)})` : ''}.`,
				'The range officer confirmed the reading; the shot is kept and marked as a safety event.',
				'Check the rig, its relief valve and its components before it is filled again.',
				'',
				`Session: ${appLink(`/sessions/${session.id}`)}`
			].join('\n')
		});
	} catch (err) {
		console.error(`Mail about shot ${shot.id} above its rig's rating failed:`, err);
	}
}

type Stored =
	| {
			shot: Shot;
			/** Written in the shot's own batch: computed from the session's last inputs, still current. */
			prediction: ShotPrediction | null;
			session: RangeSession;
			/** The inputs, read in the shot's batch when no prediction was made ahead; null otherwise. */
			fresh: FreshInputs | null;
	  }
	| { resentId: number };

/**
 * Per session, the inputs its last logged shot was predicted from (the session row and
 * predictionInputsRead's rows, as MariaDB held them under the locks). The next shot of the session
 * is predicted from them before its batch is sent, and the batch writes that prediction only if
 * they are still current (reconcile's insertPredictionIfInputsUnchanged): on a busy firing line
 * a shot then takes one transaction, not two. Never trusted unchecked, so never stale in effect;
 * bounded, oldest session out first.
 */
const lastInputs = new Map<number, { session: RangeSession; inputRows: PredictionInputRows; versions: InputVersions }>();
const LAST_INPUTS_KEPT = 200;

/** predictionInputsRead's rows and what they were read at (null without a rig or projectile). */
type FreshInputs = { inputRows: PredictionInputRows; versions: InputVersions | null };

function rememberInputs(sessionId: number, session: RangeSession, fresh: FreshInputs) {
	lastInputs.delete(sessionId);
	if (!fresh.versions) return;
	lastInputs.set(sessionId, { session, inputRows: fresh.inputRows, versions: fresh.versions });
	if (lastInputs.size > LAST_INPUTS_KEPT) lastInputs.delete(lastInputs.keys().next().value!);
}

async function storeShot(sessionId: number, input: ShotInput, user: AppUser): Promise<Stored> {
	// Every column with a default is given, so the stored row is known (raw.insertedRow) but for
	// its id and, when the server assigns it, its sequence number.
	const now = new Date();
	const { aboveRatingConfirmed, ...shotValues } = input;
	const values = {
		...shotValues,
		sessionId,
		sequence: input.sequence ?? null,
		firedAt: input.firedAt ?? now,
		miss: input.miss ?? false,
		enteredBy: user.id,
		// Written as @above_rating by the INSERT (insertShotStatement); set from the batch's answer below.
		aboveRating: false,
		createdAt: now,
		updatedAt: now
	};
	// Predicted ahead from the session's last inputs, when known (lastInputs).
	const known = lastInputs.get(sessionId);
	const ahead = known && predictionOrNull(raw.insertedRow(shots, { ...values, id: 0, sequence: 0 }), known.session, known.inputRows, now);
	const result = await raw.transaction(async (connection, commit) => {
		// The locking read first: the consistent read of the next sequence number behind it sees
		// every shot committed by the lock's previous holder. With a prediction made ahead, its
		// guarded INSERT reads (share-locked) what it was made from; without, the inputs are read
		// here for the second transaction and the next shot.
		const results = await raw.batch(connection, [
			{ sql: `${SESSION_READ} FOR UPDATE`, values: [sessionId] },
			{ sql: NEXT_SEQUENCE, values: [sessionId] },
			{ sql: RATED_PRESSURE, values: [sessionId] },
			{ sql: ABOVE_RATING, values: [input.fillGaugePa] },
			insertShotStatement(values, hasRole(user.role, 'lead'), aboveRatingConfirmed === true),
			{ sql: INSERTED_SHOT },
			{ sql: ABOVE_RATING_AUDIT, values: [user.id, sessionId, input.clientUuid, input.fillGaugePa] },
			ahead ? insertPredictionIfInputsUnchanged(input.clientUuid, ahead, known.versions) : predictionInputsRead(sessionId),
			commit()
		]);
		const [sessionRows, , , , inserted, idRows, , last] = results as [
			SessionRows,
			unknown,
			unknown,
			unknown,
			ResultSetHeader,
			{ '': { next_sequence: number; above_rating: number | string } }[],
			unknown,
			unknown
		];
		return {
			sessionRows,
			inserted,
			nextSequence: idRows[0][''].next_sequence,
			aboveRating: Number(idRows[0][''].above_rating) === 1,
			inputRows: ahead ? null : (last as PredictionInputRows),
			predicted: ahead ? (last as ResultSetHeader).affectedRows === 1 : false
		};
	});
	const session = sessionOf(result.sessionRows, sessionId);
	// Fresh inputs are remembered for the next shot; inputs found stale are forgotten, so the next
	// shot reads them again.
	const fresh = result.inputRows && { inputRows: result.inputRows, versions: inputVersions(result.sessionRows[0].s, result.inputRows) };
	if (fresh) rememberInputs(sessionId, session, fresh);
	else if (!result.predicted) lastInputs.delete(sessionId);
	if (result.inserted.affectedRows !== 1) {
		// Nothing inserted: the session is closed to this user — unless this is a resend.
		const resentId = await resent(pool().pool, sessionId, input.clientUuid);
		if (resentId !== null) return { resentId };
		assertWritable(session, user);
		if (result.aboveRating) throw aboveRatingRefusal();
		throw new Error(`shot of session ${sessionId} not inserted although the session is writable`);
	}
	const shot = raw.insertedRow(shots, { ...values, id: result.inserted.insertId, sequence: input.sequence ?? result.nextSequence, aboveRating: result.aboveRating });
	const prediction = ahead && result.predicted ? { ...ahead, shotId: shot.id } : null;
	return { shot, prediction, session, fresh };
}

/**
 * The prediction of a shot just stored, in a transaction of its own (see create), from the inputs
 * its batch read: written only if the session row is unchanged since (a session edit recomputes
 * the shot itself) and with a plain INSERT that fails rather than overwrite a prediction an
 * approval or edit wrote meanwhile. Otherwise — or without inputs (a prediction made ahead was
 * found stale) — it is computed again from what is stored, under the locks an edit takes. Null
 * when the model code failed.
 */
async function predictStoredShot(shot: Shot, session: RangeSession, fresh: FreshInputs | null): Promise<ShotPrediction | null> {
	const versions = fresh?.versions;
	const prediction = versions && predictionOrNull(shot, session, fresh.inputRows);
	try {
		if (prediction) {
			const [insert] = (await raw.transaction((connection, commit) =>
				raw.batch(connection, [insertPredictionIfSessionUnchanged(prediction, session.id, versions.sessionUpdatedAt), commit()])
			)) as [ResultSetHeader];
			if (insert.affectedRows === 1) return prediction;
		}
	} catch (err) {
		// Written meanwhile by an approval or an edit: computed again below, from what is stored.
		if (!isDuplicate(err, 'PRIMARY')) console.error(`Prediction of shot ${shot.id} failed:`, err);
	}
	try {
		// The session changed since the shot was stored (or a prediction was written meanwhile, or
		// the one made ahead was found stale, or the model code failed): compute it again from what
		// is stored now, under the locks an edit or approval takes, in their order.
		await db.transaction(async (tx) => {
			await lockForWrite(tx, session.id);
			await tx.execute(raw.asDrizzle(predictionInputsRead(session.id)));
			await recomputePredictions(tx, { shotIds: [shot.id] });
		});
		return (await getWithPrediction(shot.id))?.prediction ?? null;
	} catch (err) {
		// The shot is stored either way; its prediction is recomputed by the next change to the
		// session, rig or calibration, and the session's statistics count it as not predicted.
		console.error(`Prediction of shot ${shot.id} failed:`, err);
		return null;
	}
}

type SessionRows = { s: Record<string, unknown> }[];

function sessionOf(rows: SessionRows, sessionId: number) {
	const session = rows[0] ? raw.rowOf(rangeSessions, rows[0].s) : null;
	if (!session || session.deletedAt) throw new SessionRuleError('sessionId', `No range session with id ${sessionId}.`, 404);
	return session;
}

/**
 * The new shot's prediction, or null when the model code fails unexpectedly (the model's own
 * refusals, e.g. a shot that stays in the barrel, are a prediction with its error set).
 */
function predictionOrNull(shot: Shot, session: RangeSession, inputRows: PredictionInputRows, computedAt = new Date()) {
	try {
		return predictNewShot(shot, session, predictionInputs(inputRows, session), computedAt);
	} catch (err) {
		console.error(`Prediction of a shot of session ${session.id} failed:`, err);
		return null;
	}
}

/** The id of the stored shot of a resent clientUuid, or null when none has it; 409 when the UUID belongs to another session's shot. */
async function resent(connection: raw.Queryable, sessionId: number, clientUuid: string): Promise<number | null> {
	const [row] = await raw.query<{ id: number; session_id: number }>(connection, SHOT_BY_UUID, [clientUuid]);
	if (!row) return null;
	if (row.session_id !== sessionId)
		throw new SessionRuleError('clientUuid', 'This clientUuid belongs to a shot of another session.', 409);
	return row.id;
}

export async function get(shotId: number) {
	const [row] = await db.select().from(shots).where(eq(shots.id, shotId)).limit(1);
	return row ?? null;
}

/** Refuse a shot id that is not a live shot of this session (a page acts on its own session's shots). */
export async function assertInSession(shotId: number, sessionId: number) {
	const shot = await get(shotId);
	if (!shot || shot.deletedAt || shot.sessionId !== sessionId)
		throw new SessionRuleError('shotId', `No shot with id ${shotId} in this session.`, 404);
}

/**
 * Who may change a shot: an analyst or above any shot (a closed session only a lead); a range
 * officer only the shots they logged, and only while the session is open.
 */
function assertMayChange(shot: Shot, session: RangeSession, user: AppUser) {
	assertWritable(session, user);
	if (hasRole(user.role, 'analyst')) return;
	if (shot.enteredBy !== user.id) throw new SessionRuleError('shotId', 'You may correct or void only the shots you logged; ask an analyst.', 403);
	if (session.status !== 'open') throw new SessionRuleError('sessionId', 'This session is closed; only a lead may change it now.', 403);
}

/** A changed fill pressure above the rig's rating: refused unless confirmed; the flag follows the pressure. */
async function aboveRatingAfterChange(tx: Transaction, session: RangeSession, fillGaugePa: number, confirmed: boolean) {
	const [rig] = await tx.select({ ratedPressurePa: rigs.ratedPressurePa }).from(rigs).where(eq(rigs.id, session.rigId));
	const above = rig !== undefined && fillGaugePa > rig.ratedPressurePa;
	if (above && !confirmed) throw aboveRatingRefusal();
	return above;
}

export async function update(shotId: number, { aboveRatingConfirmed, ...patch }: ShotUpdate, user: AppUser) {
	try {
		return await db.transaction(async (tx) => {
			const [current] = await tx.select().from(shots).where(eq(shots.id, shotId));
			if (!current || current.deletedAt) throw new SessionRuleError('shotId', `No shot with id ${shotId}.`, 404);
			const session = await lockForWrite(tx, current.sessionId);
			const [before] = await tx.select().from(shots).where(eq(shots.id, shotId));
			assertMayChange(before, session, user);
			const changes: Partial<Shot> = Object.fromEntries(Object.entries(patch).filter(([, v]) => v !== undefined));
			if (changes.fillGaugePa !== undefined && changes.fillGaugePa !== before.fillGaugePa)
				changes.aboveRating = await aboveRatingAfterChange(tx, session, changes.fillGaugePa, aboveRatingConfirmed === true);
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

/**
 * Void a shot at the firing line ("void and re-shoot"): it stays in the record with its reason,
 * shown as voided, and leaves the statistics and the plan's count. Undone with reason null.
 */
export async function setVoided(shotId: number, reason: string | null, user: AppUser) {
	return db.transaction(async (tx) => {
		const [current] = await tx.select().from(shots).where(eq(shots.id, shotId));
		if (!current || current.deletedAt) throw new SessionRuleError('shotId', `No shot with id ${shotId}.`, 404);
		const session = await lockForWrite(tx, current.sessionId);
		const [before] = await tx.select().from(shots).where(eq(shots.id, shotId));
		assertMayChange(before, session, user);
		const voided = reason === null ? { voidedAt: null, voidReason: null, voidedBy: null } : { voidedAt: new Date(), voidReason: reason, voidedBy: user.id };
		await tx.update(shots).set(voided).where(eq(shots.id, shotId));
		const [after] = await tx.select().from(shots).where(eq(shots.id, shotId));
		await recordAudit(tx, { userId: user.id, action: reason === null ? 'unvoid' : 'void', entityType: 'shot', entityId: shotId, before, after });
		return after;
	});
}

export async function setDeleted(shotId: number, deleted: boolean, user: AppUser) {
	return db.transaction(async (tx) => {
		const [current] = await tx.select().from(shots).where(eq(shots.id, shotId));
		// Deleting a deleted shot finds nothing to delete (404, and no audit event), as a list would.
		if (!current || (deleted && current.deletedAt)) throw new SessionRuleError('shotId', `No shot with id ${shotId}.`, 404);
		const session = await lockForWrite(tx, current.sessionId);
		assertWritable(session, user);
		if (!deleted && !current.deletedAt) return current;
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
/** A shot with its prediction; null when there is none, or its session is deleted (as its list is gone). */
export async function getWithPrediction(shotId: number): Promise<ShotWithPrediction | null> {
	const [row] = await db
		.select({ shot: shots, prediction: shotPredictions })
		.from(shots)
		.innerJoin(rangeSessions, and(eq(rangeSessions.id, shots.sessionId), isNull(rangeSessions.deletedAt)))
		.leftJoin(shotPredictions, eq(shotPredictions.shotId, shots.id))
		.where(eq(shots.id, shotId))
		.limit(1);
	return row ? { ...row.shot, prediction: row.prediction } : null;
}

export async function byIds(ids: number[]) {
	if (ids.length === 0) return [];
	return db.select().from(shots).where(inArray(shots.id, ids));
}

/** Internals reached by the integration tests: the fallback of a prediction found stale, the inputs kept per session. */
export const testing = { predictStoredShot, lastInputs };
