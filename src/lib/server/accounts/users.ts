import { and, eq, isNotNull, isNull } from 'drizzle-orm';
import { db } from '../db';
import { users } from '../db/schema';
import { isRole } from '$lib/roles';

/**
 * The user as stored now, or null when missing or disabled (a disabled account acts as signed
 * out), or when the session's version is not the user's current one (its sessions were ended).
 */
export async function findActiveUser(id: number, sessionVersion: number): Promise<AppUser | null> {
	const [row] = await db.select().from(users).where(eq(users.id, id)).limit(1);
	if (row && row.sessionVersion !== sessionVersion) return null;
	return activeUserOf(row);
}

/** The user row as the request's user, or null when missing or disabled. */
export function activeUserOf(row: typeof users.$inferSelect | undefined | null): AppUser | null {
	if (!row || row.disabledAt || !isRole(row.role)) return null;
	return { id: row.id, email: row.email, name: row.name, role: row.role, unitPreferences: row.unitPreferences ?? null };
}

export async function findUserByEmail(email: string) {
	const [row] = await db.select().from(users).where(eq(users.email, normaliseEmail(email))).limit(1);
	return row ?? null;
}

export function normaliseEmail(email: string) {
	return email.trim().toLowerCase();
}

export type AccountStatus = 'active' | 'invited' | 'disabled';

/** Invited: created by an admin, no password chosen yet (cannot sign in until they do). */
export function accountStatus(row: { disabledAt: Date | null; passwordHash: string | null }): AccountStatus {
	if (row.disabledAt) return 'disabled';
	return row.passwordHash ? 'active' : 'invited';
}

/**
 * An admin who can act right now: enabled and with a password. The last one may not be demoted
 * or disabled, or nobody could manage users any more.
 */
export const isActiveAdmin = and(eq(users.role, 'admin'), isNull(users.disabledAt), isNotNull(users.passwordHash));
