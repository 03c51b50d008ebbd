// Ending a user's sessions. Sessions are JWTs (nothing stored per session), so each carries the
// user's session version from its sign-in; raising the stored version makes every older JWT
// name a user it no longer matches, and guards.ts treats the request as signed out.
import { eq, sql } from 'drizzle-orm';
import { db, type Database, type Transaction } from '../db';
import { users } from '../db/schema';

export async function sessionVersionOf(userId: number) {
	const [row] = await db.select({ v: users.sessionVersion }).from(users).where(eq(users.id, userId)).limit(1);
	return row?.v ?? 0;
}

/** End every session of the user signed in so far (inside the caller's transaction, if any). */
export async function endSessions(tx: Transaction | Database, userId: number) {
	await tx
		.update(users)
		.set({ sessionVersion: sql`${users.sessionVersion} + 1` })
		.where(eq(users.id, userId));
}
