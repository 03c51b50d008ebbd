// API tokens: random, shown once, stored as SHA-256 (a token is high-entropy, so a fast hash is
// enough; bcrypt is for low-entropy passwords). A token carries no role of its own: requests made
// with it act with its user's role as stored at that moment (guards.ts).
import { createHash, randomBytes } from 'node:crypto';
import { and, desc, eq, isNull, lt, or } from 'drizzle-orm';
import { db, pool } from '../db';
import * as raw from '../db/raw';
import { apiTokens, users } from '../db/schema';
import { recordAudit } from '../audit';
import { activeUserOf } from './users';
import { checkPassword } from './sign-in';

export const TOKEN_PREFIX = 'swt_';
/** Characters of a token kept in clear so its owner can tell tokens apart ("swt_" + 6). */
const SHOWN_PREFIX_LENGTH = 10;
/** Last-use times are refreshed at most this often, so busy scripts do not write on every call. */
const LAST_USED_RESOLUTION_MS = 60 * 1000;

export function hashToken(token: string) {
	return createHash('sha256').update(token, 'utf8').digest('hex');
}

export function newTokenValue() {
	return TOKEN_PREFIX + randomBytes(32).toString('base64url');
}

/**
 * The token and its owner, read in one statement because every API call asks (db/raw.ts says
 * why it is hand-written): the token's last use, and the owner's row for the request's user.
 */
const TOKEN_WITH_OWNER =
	`SELECT ${raw.name(apiTokens.id, 't')}, ${raw.name(apiTokens.userId, 't')}, ${raw.name(apiTokens.lastUsedAt, 't')}, ${raw.selectList(users, 'u')} ` +
	`FROM ${raw.tableName(apiTokens)} t JOIN ${raw.tableName(users)} u ON ${raw.name(users.id, 'u')} = ${raw.name(apiTokens.userId, 't')} ` +
	`WHERE ${raw.name(apiTokens.tokenHash, 't')} = ? AND ${raw.name(apiTokens.revokedAt, 't')} IS NULL LIMIT 1`;

/**
 * The token's id, its user's id, and that user as stored now (null when disabled) when the bearer
 * token is valid and not revoked; records last use.
 */
export async function resolveBearerToken(token: string, now = new Date()) {
	if (!token.startsWith(TOKEN_PREFIX) || token.length > 200) return null;
	const [found] = await raw.query<{ t: Record<string, unknown>; u: Record<string, unknown> }>(pool().pool, TOKEN_WITH_OWNER, [hashToken(token)], {
		nestTables: true
	});
	if (!found) return null;
	const row = raw.rowOf(apiTokens, found.t);
	const resolved = { id: row.id, userId: row.userId, user: activeUserOf(raw.rowOf(users, found.u)) };
	const stale = new Date(now.getTime() - LAST_USED_RESOLUTION_MS);
	// A script calling many times a second writes the time once per resolution, not per request.
	if (row.lastUsedAt && row.lastUsedAt >= stale) return resolved;
	await db
		.update(apiTokens)
		.set({ lastUsedAt: now })
		.where(and(eq(apiTokens.id, row.id), or(isNull(apiTokens.lastUsedAt), lt(apiTokens.lastUsedAt, stale))));
	return resolved;
}

/** A new token for the user; the clear value is returned here and never again. */
export async function createApiToken(userId: number, name: string, actorId = userId) {
	const token = newTokenValue();
	const prefix = token.slice(0, SHOWN_PREFIX_LENGTH);
	const id = await db.transaction(async (tx) => {
		const [row] = await tx.insert(apiTokens).values({ userId, name, tokenHash: hashToken(token), prefix }).$returningId();
		await recordAudit(tx, { userId: actorId, action: 'api_token_created', entityType: 'api_token', entityId: row.id, after: { userId, name, prefix } });
		return row.id;
	});
	return { id, name, prefix, token };
}

/** The user's tokens, newest first; revoked ones stay listed (greyed) so their history is visible. */
export function listApiTokens(userId: number) {
	return db
		.select({
			id: apiTokens.id,
			name: apiTokens.name,
			prefix: apiTokens.prefix,
			createdAt: apiTokens.createdAt,
			lastUsedAt: apiTokens.lastUsedAt,
			revokedAt: apiTokens.revokedAt
		})
		.from(apiTokens)
		.where(eq(apiTokens.userId, userId))
		.orderBy(desc(apiTokens.createdAt), desc(apiTokens.id));
}

/** Revoke one of the owner's tokens. False when it is not theirs or already revoked. */
export async function revokeApiToken(ownerId: number, tokenId: number, actorId = ownerId, now = new Date()) {
	return db.transaction(async (tx) => {
		const [row] = await tx
			.select()
			.from(apiTokens)
			.where(and(eq(apiTokens.id, tokenId), eq(apiTokens.userId, ownerId), isNull(apiTokens.revokedAt)))
			.for('update');
		if (!row) return false;
		await tx.update(apiTokens).set({ revokedAt: now }).where(eq(apiTokens.id, row.id));
		await recordAudit(tx, {
			userId: actorId,
			action: 'api_token_revoked',
			entityType: 'api_token',
			entityId: row.id,
			before: { userId: ownerId, name: row.name, prefix: row.prefix }
		});
		return true;
	});
}

export type TokenForCredentials =
	| { ok: true; id: number; name: string; token: string }
	| { ok: false; status: 401 | 429; message: string };

/**
 * POST /api/v1/tokens: a script trades e-mail and password for a named token. Wrong passwords
 * count towards the same MariaDB rate limit as the sign-in page.
 */
export async function issueTokenForCredentials(
	input: { email: string; password: string; name: string },
	address: string
): Promise<TokenForCredentials> {
	const check = await checkPassword(input.email, input.password, address);
	if (!check.ok && check.blockedMinutes > 0)
		return { ok: false, status: 429, message: `Too many failed sign-ins. Wait ${check.blockedMinutes} minutes and try again.` };
	if (!check.ok) return { ok: false, status: 401, message: 'That e-mail and password do not match an active account.' };
	const created = await createApiToken(check.userId, input.name);
	return { ok: true, id: created.id, name: created.name, token: created.token };
}
