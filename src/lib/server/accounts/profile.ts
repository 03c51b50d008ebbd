// What a signed-in person changes about their own account: password and display units.
import { eq } from 'drizzle-orm';
import { db } from '../db';
import { users } from '../db/schema';
import { recordAudit } from '../audit';
import type { UnitPreferences } from '$lib/physics/units';
import { hashPassword } from './passwords';
import { checkPassword } from './sign-in';
import { endSessions } from './sessions';

export type PasswordChange =
	| { ok: true }
	| { ok: false; field: 'current'; message: string }
	| { ok: false; blockedMinutes: number; message: string };

/**
 * Change the password after checking the current one, under the sign-in rate limit and audit: an
 * unattended signed-in tablet must not become a way to guess passwords. Every session of the
 * user ends (the caller signs the current one in again with the new password).
 */
export async function changePassword(user: AppUser, current: string, next: string, address: string): Promise<PasswordChange> {
	const check = await checkPassword(user.email, current, address);
	if (!check.ok && check.blockedMinutes > 0)
		return { ok: false, blockedMinutes: check.blockedMinutes, message: `Too many wrong passwords. Wait ${check.blockedMinutes} minutes and try again.` };
	if (!check.ok || check.userId !== user.id) return { ok: false, field: 'current', message: 'The current password is not right.' };
	const passwordHash = await hashPassword(next);
	await db.transaction(async (tx) => {
		await tx.update(users).set({ passwordHash }).where(eq(users.id, user.id));
		await endSessions(tx, user.id);
		await recordAudit(tx, { userId: user.id, action: 'password_changed', entityType: 'user', entityId: user.id });
	});
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
