// Account rules against the real MariaDB: last-admin protection, API tokens (hashed, revocable),
// one-time password links (expiry, single use) and the sign-in rate limit.
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { and, eq } from 'drizzle-orm';
import { scratchDatabase } from '../support/db';
import { apiTokens, auditEvents, passwordTokens, signInLimits, users } from '../../src/lib/server/db/schema';

let scratch: Awaited<ReturnType<typeof scratchDatabase>>;
// The modules under test use the app's one client, which reads DATABASE_URL on first use.
let accounts: {
	admin: typeof import('../../src/lib/server/accounts/admin');
	tokens: typeof import('../../src/lib/server/accounts/tokens');
	links: typeof import('../../src/lib/server/accounts/password-tokens');
	passwords: typeof import('../../src/lib/server/accounts/passwords');
	rateLimit: typeof import('../../src/lib/server/accounts/rate-limit');
	db: typeof import('../../src/lib/server/db');
};

beforeAll(async () => {
	scratch = await scratchDatabase();
	process.env.DATABASE_URL = scratch.url;
	process.env.PUBLIC_BASE_URL ??= 'http://shotwright.test';
	accounts = {
		admin: await import('../../src/lib/server/accounts/admin'),
		tokens: await import('../../src/lib/server/accounts/tokens'),
		links: await import('../../src/lib/server/accounts/password-tokens'),
		passwords: await import('../../src/lib/server/accounts/passwords'),
		rateLimit: await import('../../src/lib/server/accounts/rate-limit'),
		db: await import('../../src/lib/server/db')
	};
});
afterAll(async () => {
	await accounts?.db.closeDatabase();
	await scratch?.drop();
});

/** Any non-null hash makes an account "active"; tests that sign in use a real bcrypt hash. */
const SOME_HASH = '$2b$04$notarealhashnotarealhashnotarealhashnotarealhas';
let serial = 0;

async function makeUser(role: (typeof users.$inferInsert)['role'], over: Partial<typeof users.$inferInsert> = {}): Promise<AppUser> {
	const email = `user${++serial}-${Date.now()}@accounts.test`;
	const values = { email, name: `User ${serial}`, role, passwordHash: SOME_HASH, ...over };
	const [row] = await scratch.db.insert(users).values(values).$returningId();
	return { id: row.id, email: values.email, name: values.name, role: role ?? 'viewer', unitPreferences: null };
}

async function activeAdminIds() {
	const rows = await scratch.db.select().from(users).where(eq(users.role, 'admin'));
	return rows.filter((r) => !r.disabledAt && r.passwordHash).map((r) => r.id);
}

async function auditFor(action: string, entityId: number | string) {
	return scratch.db
		.select()
		.from(auditEvents)
		.where(and(eq(auditEvents.action, action), eq(auditEvents.entityId, String(entityId))));
}

describe('the last active admin', () => {
	beforeEach(async () => {
		// Each case starts with no active admin, then makes exactly the admins it needs.
		await scratch.db.update(users).set({ role: 'viewer' }).where(eq(users.role, 'admin'));
	});

	it('cannot be demoted, and the refusal leaves no audit row', async () => {
		const only = await makeUser('admin');
		await expect(accounts.admin.changeRole(only, only.id, 'lead')).rejects.toThrow(/last active admin/);
		expect(await activeAdminIds()).toEqual([only.id]);
		expect(await auditFor('role_changed', only.id)).toHaveLength(0);
	});

	it('cannot be disabled by another admin once that admin is demoted', async () => {
		const a = await makeUser('admin');
		const b = await makeUser('admin');
		expect(await accounts.admin.changeRole(a, b.id, 'lead')).toEqual({ changed: true });
		await expect(accounts.admin.setDisabled(b, a.id, true)).rejects.toThrow(/last active admin/);
		const [row] = await scratch.db.select().from(users).where(eq(users.id, a.id));
		expect(row.disabledAt).toBeNull();
		const [audit] = await auditFor('role_changed', b.id);
		expect(audit).toMatchObject({ userId: a.id, before: { role: 'admin' }, after: { role: 'lead' } });
	});

	it('an invited admin without a password does not count as active', async () => {
		const real = await makeUser('admin');
		await makeUser('admin', { passwordHash: null });
		await expect(accounts.admin.changeRole(real, real.id, 'analyst')).rejects.toThrow(/last active admin/);
	});

	it('a disabled admin does not count as active', async () => {
		const real = await makeUser('admin');
		await makeUser('admin', { disabledAt: new Date() });
		await expect(accounts.admin.changeRole(real, real.id, 'viewer')).rejects.toThrow(/last active admin/);
	});

	it('with two admins, one may step down; nobody may disable themselves', async () => {
		const a = await makeUser('admin');
		const b = await makeUser('admin');
		await expect(accounts.admin.setDisabled(a, a.id, true)).rejects.toThrow(/your own account/);
		expect(await accounts.admin.changeRole(a, a.id, 'lead')).toEqual({ changed: true });
		expect(await activeAdminIds()).toEqual([b.id]);
	});

	it('two admins demoting each other at the same moment: exactly one succeeds (rows locked in the transaction)', async () => {
		const a = await makeUser('admin');
		const b = await makeUser('admin');
		const results = await Promise.allSettled([accounts.admin.changeRole(a, b.id, 'lead'), accounts.admin.changeRole(b, a.id, 'lead')]);
		expect(results.filter((r) => r.status === 'fulfilled')).toHaveLength(1);
		const refused = results.find((r) => r.status === 'rejected') as PromiseRejectedResult;
		expect(refused.reason).toBeInstanceOf(accounts.admin.AccountRuleError);
		expect(await activeAdminIds()).toHaveLength(1);
	});

	it('disabling and enabling are audited with the times, and a second disable changes nothing', async () => {
		const a = await makeUser('admin');
		const officer = await makeUser('range_officer');
		const at = new Date('2026-12-01T10:00:00.000Z');
		expect(await accounts.admin.setDisabled(a, officer.id, true, at)).toEqual({ changed: true });
		expect(await accounts.admin.setDisabled(a, officer.id, true)).toEqual({ changed: false });
		expect(await accounts.admin.setDisabled(a, officer.id, false)).toEqual({ changed: true });
		const [disabled] = await auditFor('user_disabled', officer.id);
		expect(disabled).toMatchObject({ userId: a.id, after: { disabledAt: at.toISOString() } });
		expect(await auditFor('user_enabled', officer.id)).toHaveLength(1);
	});

	it('an unknown user id gives null, not an error', async () => {
		const a = await makeUser('admin');
		expect(await accounts.admin.changeRole(a, 987_654_321, 'lead')).toBeNull();
		expect(await accounts.admin.setDisabled(a, 987_654_321, true)).toBeNull();
	});
});

describe('API tokens', () => {
	it('are stored as SHA-256 only, resolve to their user, record last use, and stop at revocation', async () => {
		const owner = await makeUser('analyst');
		const created = await accounts.tokens.createApiToken(owner.id, 'chronograph uploader');
		expect(created.token).toMatch(/^swt_[A-Za-z0-9_-]{43}$/);

		const [row] = await scratch.db.select().from(apiTokens).where(eq(apiTokens.id, created.id));
		expect(row.tokenHash).toBe(createHash('sha256').update(created.token).digest('hex'));
		expect(row.prefix).toBe(created.token.slice(0, 10));
		expect(JSON.stringify(row)).not.toContain(created.token);
		const [audit] = await auditFor('api_token_created', created.id);
		expect(JSON.stringify(audit)).not.toContain(created.token);
		expect(audit).toMatchObject({ userId: owner.id, after: { name: 'chronograph uploader' } });

		expect(await accounts.tokens.resolveBearerToken(created.token)).toEqual({
			id: created.id,
			userId: owner.id,
			user: owner
		});
		const [used] = await scratch.db.select().from(apiTokens).where(eq(apiTokens.id, created.id));
		expect(used.lastUsedAt).toBeInstanceOf(Date);

		const stranger = await makeUser('admin');
		expect(await accounts.tokens.revokeApiToken(stranger.id, created.id)).toBe(false);
		expect(await accounts.tokens.resolveBearerToken(created.token)).not.toBeNull();

		expect(await accounts.tokens.revokeApiToken(owner.id, created.id)).toBe(true);
		expect(await accounts.tokens.resolveBearerToken(created.token)).toBeNull();
		expect(await accounts.tokens.revokeApiToken(owner.id, created.id)).toBe(false);
		expect(await auditFor('api_token_revoked', created.id)).toHaveLength(1);
		expect((await accounts.tokens.listApiTokens(owner.id))[0].revokedAt).toBeInstanceOf(Date);
	});

	it('an admin revoking someone else’s token is recorded as the actor', async () => {
		const owner = await makeUser('lead');
		const admin = await makeUser('admin');
		const { id } = await accounts.tokens.createApiToken(owner.id, 'report script');
		expect(await accounts.tokens.revokeApiToken(owner.id, id, admin.id)).toBe(true);
		const [audit] = await auditFor('api_token_revoked', id);
		expect(audit.userId).toBe(admin.id);
	});

	it('a disabled owner’s token resolves without a user (the request then acts as signed out)', async () => {
		const owner = await makeUser('range_officer', { disabledAt: new Date() });
		const created = await accounts.tokens.createApiToken(owner.id, 'old tablet');
		expect(await accounts.tokens.resolveBearerToken(created.token)).toEqual({ id: created.id, userId: owner.id, user: null });
	});

	it('a made-up or malformed token resolves to nothing', async () => {
		expect(await accounts.tokens.resolveBearerToken('swt_' + 'A'.repeat(43))).toBeNull();
		expect(await accounts.tokens.resolveBearerToken('not-a-token')).toBeNull();
	});

	it('trading a password for a token: wrong password 401 and counted, right one 201, then the account lock-out holds', async () => {
		const password = 'a long enough test password';
		const user = await makeUser('viewer', { passwordHash: await accounts.passwords.hashPassword(password) });
		const address = '192.0.2.10';
		const wrong = await accounts.tokens.issueTokenForCredentials({ email: user.email, password: 'nope', name: 't' }, address);
		expect(wrong).toMatchObject({ ok: false, status: 401 });
		const right = await accounts.tokens.issueTokenForCredentials({ email: user.email.toUpperCase(), password, name: 'cli' }, address);
		expect(right).toMatchObject({ ok: true, name: 'cli' });
		for (let i = 0; i < accounts.rateLimit.MAX_FAILURES_PER_ACCOUNT; i++)
			await accounts.tokens.issueTokenForCredentials({ email: user.email, password: 'nope', name: 't' }, address);
		const locked = await accounts.tokens.issueTokenForCredentials({ email: user.email, password, name: 'cli' }, address);
		expect(locked).toMatchObject({ ok: false, status: 429 });
	});
});

describe('one-time password links', () => {
	async function issue(userId: number, purpose: 'invite' | 'reset', now = new Date()) {
		return accounts.db.db.transaction((tx) => accounts.links.issuePasswordToken(tx, userId, purpose, now));
	}

	it('are stored hashed and point at /set-password/<token>', async () => {
		const user = await makeUser('viewer');
		const { token, link } = await issue(user.id, 'reset');
		expect(link).toBe(`${process.env.PUBLIC_BASE_URL!.replace(/\/$/, '')}/set-password/${token}`);
		const rows = await scratch.db.select().from(passwordTokens).where(eq(passwordTokens.userId, user.id));
		expect(rows).toHaveLength(1);
		expect(rows[0].tokenHash).toBe(createHash('sha256').update(token).digest('hex'));
	});

	it('a reset link expires after one hour, an invitation after 72 hours', async () => {
		const user = await makeUser('viewer');
		const t0 = new Date();
		const reset = await issue(user.id, 'reset', t0);
		const invite = await issue(user.id, 'invite', t0);
		expect(reset.expiresAt.getTime() - t0.getTime()).toBe(60 * 60 * 1000);
		expect(invite.expiresAt.getTime() - t0.getTime()).toBe(72 * 60 * 60 * 1000);

		const justBefore = new Date(reset.expiresAt.getTime() - 1000);
		const justAfter = new Date(reset.expiresAt.getTime() + 1000);
		expect(await accounts.links.checkPasswordToken(reset.token, justBefore)).toMatchObject({ purpose: 'reset', email: user.email });
		expect(await accounts.links.checkPasswordToken(reset.token, justAfter)).toBeNull();
		expect(await accounts.links.redeemPasswordToken(reset.token, 'a new password of some length', justAfter)).toBeNull();
		expect(await accounts.links.checkPasswordToken(invite.token, justAfter)).toMatchObject({ purpose: 'invite' });
	});

	it('works once: the password is set, the second use is refused, and the user’s other links die with it', async () => {
		const user = await makeUser('viewer', { passwordHash: null });
		const first = await issue(user.id, 'invite');
		const second = await issue(user.id, 'reset');
		const password = 'correct horse battery staple';

		expect(await accounts.links.redeemPasswordToken(first.token, password)).toMatchObject({ userId: user.id, purpose: 'invite' });
		const [row] = await scratch.db.select().from(users).where(eq(users.id, user.id));
		expect(await accounts.passwords.passwordMatches(password, row.passwordHash!)).toBe(true);
		expect(await accounts.passwords.verifyCredentials({ email: user.email, password })).toBe(user.id);

		expect(await accounts.links.redeemPasswordToken(first.token, 'another password entirely')).toBeNull();
		expect(await accounts.links.checkPasswordToken(second.token)).toBeNull();
		expect(await accounts.links.redeemPasswordToken(second.token, 'another password entirely')).toBeNull();
		expect(await auditFor('invitation_accepted', user.id)).toHaveLength(1);
	});

	it('is refused for a disabled account, and for a token of the wrong shape', async () => {
		const user = await makeUser('viewer', { disabledAt: new Date() });
		const { token } = await issue(user.id, 'reset');
		expect(await accounts.links.checkPasswordToken(token)).toBeNull();
		expect(await accounts.links.redeemPasswordToken(token, 'a new password of some length')).toBeNull();
		expect(await accounts.links.checkPasswordToken('../../etc/passwd')).toBeNull();
	});

	it('a reset request for an unknown address stores nothing; a known one stores one link, at most three an hour', async () => {
		const before = await scratch.db.select().from(passwordTokens);
		await (await accounts.links.requestPasswordReset('nobody-here@accounts.test', '192.0.2.20')).delivery;
		expect(await scratch.db.select().from(passwordTokens)).toHaveLength(before.length);

		const user = await makeUser('lead');
		for (let i = 0; i < accounts.links.MAX_RESETS_PER_HOUR + 2; i++)
			await (await accounts.links.requestPasswordReset(user.email, '192.0.2.20')).delivery;
		const links = await scratch.db.select().from(passwordTokens).where(eq(passwordTokens.userId, user.id));
		expect(links).toHaveLength(accounts.links.MAX_RESETS_PER_HOUR);
		expect(links.every((l) => l.purpose === 'reset')).toBe(true);
	});
});

describe('the sign-in rate limit (kept in MariaDB)', () => {
	it('blocks an account after 5 attempts, whatever the address, until a success clears it', async () => {
		const email = `locked-${Date.now()}@accounts.test`;
		for (let i = 0; i < accounts.rateLimit.MAX_FAILURES_PER_ACCOUNT; i++)
			expect(await accounts.rateLimit.reserveSignInAttempt(email, `198.51.100.${i}`)).toBe(0);
		expect(await accounts.rateLimit.signInBlockedFor(email, '198.51.100.200')).toBe(15);
		expect(await accounts.rateLimit.reserveSignInAttempt(email, '198.51.100.200')).toBe(15);
		await accounts.rateLimit.clearAccountFailures(email);
		expect(await accounts.rateLimit.signInBlockedFor(email, '198.51.100.200')).toBe(0);
	});

	it('blocks an address after 20 attempts spread over many accounts, in one row per key', async () => {
		const address = '203.0.113.7';
		for (let i = 0; i < accounts.rateLimit.MAX_FAILURES_PER_ADDRESS; i++)
			await accounts.rateLimit.reserveSignInAttempt(`spray-${i}@accounts.test`, address);
		expect(await accounts.rateLimit.signInBlockedFor('fresh@accounts.test', address)).toBe(15);
		expect(await accounts.rateLimit.signInBlockedFor('fresh@accounts.test', '203.0.113.8')).toBe(0);
		const [row] = await scratch.db.select().from(signInLimits).where(eq(signInLimits.key, `address:${address}`));
		expect(row.points).toBe(accounts.rateLimit.MAX_FAILURES_PER_ADDRESS);
	});
});
