// One-time links that let a person choose a password: invitations (from an admin) and password
// resets (asked for by the person). Only the SHA-256 of the link's token is stored; a link works
// once, until it expires, and choosing a password through any link spends all of that user's links.
import { randomBytes } from 'node:crypto';
import { and, count, eq, gt, gte, isNull } from 'drizzle-orm';
import { db, type Transaction } from '../db';
import { auditEvents, passwordTokens, users } from '../db/schema';
import { recordAudit } from '../audit';
import { appLink, sendMail } from '../mail';
import { hashToken } from './tokens';
import { hashPassword } from './passwords';
import { clearAccountFailures } from './rate-limit';
import { findUserByEmail } from './users';
import { endSessions } from './sessions';
import { invitationMail, resetMail } from './messages';

export type PasswordTokenPurpose = 'invite' | 'reset';

/** How long a link works: an invitation waits for the person for days, a reset only an hour. */
export const LINK_LIFETIME_MS: Record<PasswordTokenPurpose, number> = {
	invite: 72 * 60 * 60 * 1000,
	reset: 60 * 60 * 1000
};
/** Reset e-mails sent to one account per hour at most, so the form cannot flood a mailbox. */
export const MAX_RESETS_PER_HOUR = 3;

/** Store a new link for the user (inside the caller's transaction); returns the token, shown once. */
export async function issuePasswordToken(tx: Transaction, userId: number, purpose: PasswordTokenPurpose, now = new Date()) {
	const token = randomBytes(32).toString('base64url');
	const expiresAt = new Date(now.getTime() + LINK_LIFETIME_MS[purpose]);
	await tx.insert(passwordTokens).values({ userId, purpose, tokenHash: hashToken(token), expiresAt, createdAt: now });
	return { token, expiresAt, link: appLink(`/set-password/${token}`) };
}

/** Tokens are base64url of 32 bytes: anything else is refused before touching the database. */
const TOKEN_SHAPE = /^[A-Za-z0-9_-]{43}$/;

/** What the set-password page shows for a link, or null when the link is unknown, used or expired. */
export async function checkPasswordToken(token: string, now = new Date()) {
	if (!TOKEN_SHAPE.test(token)) return null;
	const [row] = await db
		.select({ purpose: passwordTokens.purpose, expiresAt: passwordTokens.expiresAt, email: users.email, name: users.name })
		.from(passwordTokens)
		.innerJoin(users, eq(users.id, passwordTokens.userId))
		.where(
			and(eq(passwordTokens.tokenHash, hashToken(token)), isNull(passwordTokens.usedAt), gt(passwordTokens.expiresAt, now), isNull(users.disabledAt))
		)
		.limit(1);
	return row ?? null;
}

/** Set the password through a link. Null when the link is unknown, used, expired or its account disabled. */
export async function redeemPasswordToken(token: string, password: string, now = new Date()) {
	if (!TOKEN_SHAPE.test(token)) return null;
	// bcrypt takes a quarter of a second: hash before the transaction takes its locks.
	const passwordHash = await hashPassword(password);
	const redeemed = await db.transaction(async (tx) => {
		const [row] = await tx
			.select()
			.from(passwordTokens)
			.where(eq(passwordTokens.tokenHash, hashToken(token)))
			.for('update');
		if (!row || row.usedAt || row.expiresAt <= now) return null;
		const [user] = await tx.select().from(users).where(eq(users.id, row.userId)).for('update');
		if (!user || user.disabledAt) return null;
		await tx.update(users).set({ passwordHash }).where(eq(users.id, user.id));
		// Whoever knew the old password is signed out everywhere.
		await endSessions(tx, user.id);
		await tx
			.update(passwordTokens)
			.set({ usedAt: now })
			.where(and(eq(passwordTokens.userId, user.id), isNull(passwordTokens.usedAt)));
		await recordAudit(tx, {
			userId: user.id,
			action: row.purpose === 'invite' ? 'invitation_accepted' : 'password_reset',
			entityType: 'user',
			entityId: user.id
		});
		return { userId: user.id, email: user.email, purpose: row.purpose };
	});
	// A fresh password ends any lock-out the old one built up.
	if (redeemed) await clearAccountFailures(redeemed.email);
	return redeemed;
}

/** Reset requests for the user in the last hour (from the audit trail, which records each one). */
async function recentResetRequests(userId: number, now: Date) {
	const [row] = await db
		.select({ n: count() })
		.from(auditEvents)
		.where(
			and(
				eq(auditEvents.action, 'password_reset_requested'),
				eq(auditEvents.entityType, 'user'),
				eq(auditEvents.entityId, String(userId)),
				gte(auditEvents.at, new Date(now.getTime() - 60 * 60 * 1000))
			)
		);
	return row?.n ?? 0;
}

/**
 * Send a reset link when the address belongs to an enabled account. The caller shows the same
 * answer either way, and the e-mail goes out after this returns, so neither the page nor its
 * timing tells whether an account exists. Returns the delivery, for tests that wait on it.
 */
export async function requestPasswordReset(email: string, address: string, now = new Date()): Promise<{ delivery: Promise<void> }> {
	const user = await findUserByEmail(email);
	if (!user || user.disabledAt || (await recentResetRequests(user.id, now)) >= MAX_RESETS_PER_HOUR)
		return { delivery: Promise.resolve() };
	const { link, expiresAt } = await db.transaction(async (tx) => {
		const issued = await issuePasswordToken(tx, user.id, 'reset', now);
		await recordAudit(tx, { userId: null, action: 'password_reset_requested', entityType: 'user', entityId: user.id, after: { address } });
		return issued;
	});
	const delivery = sendMail(resetMail({ to: user.email, name: user.name, link, expiresAt })).catch((err: Error) => {
		console.error(`Password reset e-mail to user ${user.id} failed: ${err.message}`);
	});
	return { delivery };
}
