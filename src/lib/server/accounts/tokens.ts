// API tokens: random, shown once, stored as SHA-256 (a token is high-entropy, so a fast hash is
// enough; bcrypt is for low-entropy passwords).
import { createHash, randomBytes } from 'node:crypto';
import { and, eq, isNull } from 'drizzle-orm';
import { db } from '../db';
import { apiTokens } from '../db/schema';

export const TOKEN_PREFIX = 'swt_';

export function hashToken(token: string) {
	return createHash('sha256').update(token, 'utf8').digest('hex');
}

export function newTokenValue() {
	return TOKEN_PREFIX + randomBytes(32).toString('base64url');
}

/** The token's user and id when the bearer token is valid and not revoked; records last use. */
export async function resolveBearerToken(token: string) {
	if (!token.startsWith(TOKEN_PREFIX) || token.length > 200) return null;
	const [row] = await db
		.select({ id: apiTokens.id, userId: apiTokens.userId })
		.from(apiTokens)
		.where(and(eq(apiTokens.tokenHash, hashToken(token)), isNull(apiTokens.revokedAt)))
		.limit(1);
	if (!row) return null;
	await db.update(apiTokens).set({ lastUsedAt: new Date() }).where(eq(apiTokens.id, row.id));
	return row;
}
