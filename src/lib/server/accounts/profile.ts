// What a signed-in person changes about their own account: password and display units.
import { eq } from 'drizzle-orm';
import { db } from '../db';
import { users } from '../db/schema';
import { recordAudit } from '../audit';
import type { UnitPreferences } from '$lib/physics/units';
import { hashPassword, passwordMatches } from './passwords';
import { clearAccountFailures, recordSignInFailure, signInBlockedFor } from './rate-limit';

export type PasswordChange =
	| { ok: true }
	| { ok: false; field: 'current'; message: string }
	| { ok: false; blockedMinutes: number; message: string };

/**
 * Change the password after checking the current one. A wrong current password counts towards the
 * sign-in rate limit: an unattended signed-in tablet must not become a way to guess passwords.
 */
export async function changePassword(user: AppUser, current: string, next: string, address: string): Promise<PasswordChange> {
	const waitMinutes = await signInBlockedFor(user.email, address);
	if (waitMinutes > 0)
		return { ok: false, blockedMinutes: waitMinutes, message: `Too many wrong passwords. Wait ${waitMinutes} minutes and try again.` };
	const [row] = await db.select({ passwordHash: users.passwordHash }).from(users).where(eq(users.id, user.id)).limit(1);
	if (!row?.passwordHash || !(await passwordMatches(current, row.passwordHash))) {
		await recordSignInFailure(user.email, address);
		return { ok: false, field: 'current', message: 'The current password is not right.' };
	}
	const passwordHash = await hashPassword(next);
	await db.transaction(async (tx) => {
		await tx.update(users).set({ passwordHash }).where(eq(users.id, user.id));
		await recordAudit(tx, { userId: user.id, action: 'password_changed', entityType: 'user', entityId: user.id });
	});
	await clearAccountFailures(user.email);
	return { ok: true };
}

export async function saveUnitPreferences(user: AppUser, preferences: UnitPreferences) {
	const next: Record<string, string> = { ...(user.unitPreferences ?? {}), ...preferences };
	await db.transaction(async (tx) => {
		await tx.update(users).set({ unitPreferences: next }).where(eq(users.id, user.id));
		await recordAudit(tx, {
			userId: user.id,
			action: 'unit_preferences_changed',
			entityType: 'user',
			entityId: user.id,
			before: user.unitPreferences,
			after: next
		});
	});
	return next;
}
