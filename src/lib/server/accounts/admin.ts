// User management, for admins only (the routes check the role; these functions keep the rules).
// The rule that matters most: there is always at least one active admin, checked inside the
// transaction that would remove one, with the admin rows locked so two admins demoting each
// other at the same moment cannot both succeed.
import { asc, count, eq, sql } from 'drizzle-orm';
import { db, type Transaction } from '../db';
import { apiTokens, users } from '../db/schema';
import { recordAudit } from '../audit';
import { sendMail } from '../mail';
import { ROLE_LABELS, type Role } from '$lib/roles';
import { accountStatus, isActiveAdmin, normaliseEmail } from './users';
import { issuePasswordToken } from './password-tokens';
import { invitationMail } from './messages';
import { listApiTokens } from './tokens';
import { endSessions } from './sessions';

/** A rule of user management was about to be broken; the message is meant for the admin. */
export class AccountRuleError extends Error {}

/** The e-mail could not be handed to the SMTP server; the database change stands. */
export class MailDeliveryError extends Error {}

export async function listUsers() {
	const rows = await db
		.select({
			id: users.id,
			email: users.email,
			name: users.name,
			role: users.role,
			disabledAt: users.disabledAt,
			passwordHash: users.passwordHash,
			createdAt: users.createdAt,
			activeTokens: sql<number>`(SELECT COUNT(*) FROM ${apiTokens} WHERE ${apiTokens.userId} = ${users.id} AND ${apiTokens.revokedAt} IS NULL)`
		})
		.from(users)
		.orderBy(asc(users.name), asc(users.id));
	return rows.map(({ passwordHash, ...row }) => ({
		...row,
		activeTokens: Number(row.activeTokens),
		status: accountStatus({ disabledAt: row.disabledAt, passwordHash })
	}));
}

/** One user with their API tokens, or null when there is no such user. */
export async function userDetail(id: number) {
	const [row] = await db.select().from(users).where(eq(users.id, id)).limit(1);
	if (!row) return null;
	const tokens = await listApiTokens(id);
	return {
		user: { id: row.id, email: row.email, name: row.name, role: row.role, createdAt: row.createdAt, disabledAt: row.disabledAt, status: accountStatus(row) },
		tokens
	};
}

/** Lock every active admin row, then the target row (always in this order, so no deadlock). */
async function lockForAdminChange(tx: Transaction, userId: number) {
	const admins = await tx.select({ id: users.id }).from(users).where(isActiveAdmin).orderBy(asc(users.id)).for('update');
	const [target] = await tx.select().from(users).where(eq(users.id, userId)).for('update');
	return { admins, target };
}

function refuseLastAdmin(admins: { id: number }[], target: typeof users.$inferSelect, doing: string) {
	const targetIsActiveAdmin = admins.some((a) => a.id === target.id);
	if (targetIsActiveAdmin && admins.length <= 1)
		throw new AccountRuleError(`${target.name} is the last active admin, so you cannot ${doing}. Make someone else an admin first.`);
}

/** Change a user's role. Null when the user does not exist; throws AccountRuleError for the last admin. */
export async function changeRole(actor: AppUser, userId: number, role: Role) {
	return db.transaction(async (tx) => {
		const { admins, target } = await lockForAdminChange(tx, userId);
		if (!target) return null;
		if (target.role === role) return { changed: false };
		if (role !== 'admin') refuseLastAdmin(admins, target, `make them ${ROLE_LABELS[role]}`);
		await tx.update(users).set({ role }).where(eq(users.id, userId));
		// The person signs in again under the new role rather than keep a session granted under the old.
		await endSessions(tx, userId);
		await recordAudit(tx, { userId: actor.id, action: 'role_changed', entityType: 'user', entityId: userId, before: { role: target.role }, after: { role } });
		return { changed: true };
	});
}

/** Disable (true) or enable (false) a user. A disabled user's sessions and API tokens stop at once. */
export async function setDisabled(actor: AppUser, userId: number, disabled: boolean, now = new Date()) {
	return db.transaction(async (tx) => {
		const { admins, target } = await lockForAdminChange(tx, userId);
		if (!target) return null;
		if (Boolean(target.disabledAt) === disabled) return { changed: false };
		if (disabled) {
			if (target.id === actor.id) throw new AccountRuleError('You cannot disable your own account; ask another admin.');
			refuseLastAdmin(admins, target, 'disable their account');
		}
		await tx.update(users).set({ disabledAt: disabled ? now : null }).where(eq(users.id, userId));
		if (disabled) await endSessions(tx, userId);
		await recordAudit(tx, {
			userId: actor.id,
			action: disabled ? 'user_disabled' : 'user_enabled',
			entityType: 'user',
			entityId: userId,
			before: { disabledAt: target.disabledAt },
			after: { disabledAt: disabled ? now : null }
		});
		return { changed: true };
	});
}

async function deliverInvitation(mail: Parameters<typeof invitationMail>[0]) {
	try {
		await sendMail(invitationMail(mail));
	} catch (err) {
		throw new MailDeliveryError(`The invitation e-mail could not be sent (${(err as Error).message}).`);
	}
}

export type InviteResult = { ok: true; userId: number } | { ok: false; field: 'email'; message: string };

const EMAIL_TAKEN = { ok: false, field: 'email', message: 'An account with this e-mail address already exists.' } as const;

/** Create an account without a password and e-mail its owner a one-time link to choose one. */
export async function inviteUser(actor: AppUser, input: { email: string; name: string; role: Role }): Promise<InviteResult> {
	const email = normaliseEmail(input.email);
	let created;
	try {
		created = await db.transaction(async (tx) => {
			const [existing] = await tx.select({ id: users.id }).from(users).where(eq(users.email, email)).limit(1);
			if (existing) return null;
			const [row] = await tx.insert(users).values({ email, name: input.name, role: input.role }).$returningId();
			const { link, expiresAt } = await issuePasswordToken(tx, row.id, 'invite');
			await recordAudit(tx, { userId: actor.id, action: 'user_invited', entityType: 'user', entityId: row.id, after: { email, name: input.name, role: input.role } });
			return { userId: row.id, link, expiresAt };
		});
	} catch (err) {
		// Two admins inviting the same address at once: the unique index decides.
		if ((err as { cause?: { code?: string } }).cause?.code === 'ER_DUP_ENTRY') return EMAIL_TAKEN;
		throw err;
	}
	if (!created) return EMAIL_TAKEN;
	await deliverInvitation({ to: email, name: input.name, role: ROLE_LABELS[input.role], invitedBy: actor.name, link: created.link, expiresAt: created.expiresAt });
	return { ok: true, userId: created.userId };
}

/** A fresh invitation link for someone who has not chosen a password yet. */
export async function resendInvitation(actor: AppUser, userId: number) {
	const issued = await db.transaction(async (tx) => {
		const [target] = await tx.select().from(users).where(eq(users.id, userId)).for('update');
		if (!target) return null;
		if (accountStatus(target) !== 'invited')
			throw new AccountRuleError(`${target.name} already has a password or is disabled; an invitation is only for a new account.`);
		const { link, expiresAt } = await issuePasswordToken(tx, target.id, 'invite');
		await recordAudit(tx, { userId: actor.id, action: 'invitation_resent', entityType: 'user', entityId: target.id });
		return { target, link, expiresAt };
	});
	if (!issued) return null;
	const { target, link, expiresAt } = issued;
	await deliverInvitation({ to: target.email, name: target.name, role: ROLE_LABELS[target.role], invitedBy: actor.name, link, expiresAt });
	return { sent: true };
}

/** How many active admins there are (for the users page's hint). */
export async function activeAdminCount() {
	const [row] = await db.select({ n: count() }).from(users).where(isActiveAdmin);
	return row?.n ?? 0;
}
