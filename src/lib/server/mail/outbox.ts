// The mail outbox: messages are stored in mail_outbox in the transaction that decides to send
// them, and a worker in each app process sends what is due. A request never waits on SMTP; a
// mail server that is down or hung costs retries with growing pauses, not the message.
// Several app instances may run workers: each claims rows with one UPDATE … WHERE claimed_by IS
// NULL (MariaDB locks the rows it changes, so a row goes to one worker), sends them, and lets go.
import { randomBytes } from 'node:crypto';
import { hostname } from 'node:os';
import { and, asc, eq, isNull, lt, lte, or, sql } from 'drizzle-orm';
import { db, type Database, type Transaction } from '../db';
import { mailOutbox } from '../db/schema';
import { sendMail, type OutgoingMail } from '../mail';

/** Tries before a message is marked failed (about a day of retries with the pauses below). */
export const MAX_ATTEMPTS = 8;
/** Pause after the first failure; doubled after each further one, at most MAX_BACKOFF_MS. */
export const FIRST_BACKOFF_MS = 30_000;
export const MAX_BACKOFF_MS = 6 * 60 * 60 * 1000;
/** How often the worker looks for due mail when nothing woke it. */
export const POLL_INTERVAL_MS = 5_000;
/** A claim older than this belongs to a worker that died while sending: another may take it. */
export const STALE_CLAIM_MS = 5 * 60 * 1000;
/** Messages one worker claims at a time. */
const BATCH = 20;

const WORKER_ID = `${hostname().slice(0, 40)}:${process.pid}:${randomBytes(4).toString('hex')}`;

export type QueuedMail = OutgoingMail & { kind: string; entityId?: string | number | null };

/** Store messages to send (inside the caller's transaction) and wake this process's worker. */
export async function enqueueMail(tx: Transaction | Database, messages: QueuedMail[]) {
	if (messages.length === 0) return;
	await tx.insert(mailOutbox).values(
		messages.map((m) => ({ kind: m.kind, entityId: m.entityId == null ? null : String(m.entityId), recipient: m.to, subject: m.subject, body: m.text }))
	);
	queueMicrotask(wakeWorker);
}

export function backoffMs(attempts: number) {
	return Math.min(MAX_BACKOFF_MS, FIRST_BACKOFF_MS * 2 ** Math.max(0, attempts - 1));
}

/** Claim due messages for this worker; the rows claimed are the ones it sends. */
async function claimDue(worker: string, now: Date) {
	const staleBefore = new Date(now.getTime() - STALE_CLAIM_MS);
	const due = and(
		eq(mailOutbox.status, 'pending'),
		lte(mailOutbox.nextAttemptAt, now),
		or(isNull(mailOutbox.claimedBy), lt(mailOutbox.claimedAt, staleBefore))
	);
	await db.update(mailOutbox).set({ claimedBy: worker, claimedAt: now }).where(due).orderBy(asc(mailOutbox.id)).limit(BATCH);
	return db
		.select()
		.from(mailOutbox)
		.where(and(eq(mailOutbox.claimedBy, worker), eq(mailOutbox.status, 'pending')));
}

/**
 * Send what is due now; returns how many were sent and how many failed this round. The worker
 * calls it; tests call it with their own worker name to act as a second instance.
 */
export async function sendDueMail(worker = WORKER_ID, now = new Date()) {
	const rows = await claimDue(worker, now);
	let sent = 0;
	let failed = 0;
	for (const row of rows) {
		try {
			await sendMail({ to: row.recipient, subject: row.subject, text: row.body });
			await db
				.update(mailOutbox)
				.set({ status: 'sent', sentAt: new Date(), attempts: row.attempts + 1, claimedBy: null, claimedAt: null, lastError: null })
				.where(and(eq(mailOutbox.id, row.id), eq(mailOutbox.claimedBy, worker)));
			sent++;
		} catch (err) {
			const attempts = row.attempts + 1;
			await db
				.update(mailOutbox)
				.set({
					status: attempts >= MAX_ATTEMPTS ? 'failed' : 'pending',
					attempts,
					nextAttemptAt: new Date(Date.now() + backoffMs(attempts)),
					claimedBy: null,
					claimedAt: null,
					lastError: String((err as Error).message ?? err).slice(0, 500)
				})
				.where(and(eq(mailOutbox.id, row.id), eq(mailOutbox.claimedBy, worker)));
			failed++;
		}
	}
	return { sent, failed };
}

/** The newest delivery state of a record's messages of one kind (for the session page). */
export async function deliveryOf(kind: string, entityId: string | number) {
	const rows = await db
		.select({ status: mailOutbox.status, n: sql<number>`COUNT(*)` })
		.from(mailOutbox)
		.where(and(eq(mailOutbox.kind, kind), eq(mailOutbox.entityId, String(entityId))))
		.groupBy(mailOutbox.status);
	const count = (status: string) => Number(rows.find((r) => r.status === status)?.n ?? 0);
	return { pending: count('pending'), sent: count('sent'), failed: count('failed') };
}

// The worker: one per process, woken after each enqueue and by a timer that does not keep the
// process alive. A round never overlaps the previous one.
let timer: ReturnType<typeof setInterval> | undefined;
let running: Promise<void> | null = null;
let again = false;

function wakeWorker() {
	if (!timer) return;
	if (running) {
		again = true;
		return;
	}
	running = (async () => {
		do {
			again = false;
			try {
				await sendDueMail();
			} catch (err) {
				console.error(`Mail outbox: ${(err as Error).message}`);
			}
		} while (again);
	})().finally(() => {
		running = null;
	});
}

/** Start this process's worker (hooks.server.ts init); calling it again does nothing. */
export function startOutboxWorker() {
	if (timer || !process.env.DATABASE_URL) return;
	timer = setInterval(wakeWorker, POLL_INTERVAL_MS);
	timer.unref();
	wakeWorker();
}
