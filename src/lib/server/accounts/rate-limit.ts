// Sign-in rate limit kept in MariaDB, so it survives restarts and holds across app instances.
import { and, count, eq, gte, lt } from 'drizzle-orm';
import { db } from '../db';
import { signInFailures } from '../db/schema';

/** Failed attempts allowed per account, and per address, within the window (common practice). */
export const MAX_FAILURES_PER_ACCOUNT = 5;
export const MAX_FAILURES_PER_ADDRESS = 20;
export const FAILURE_WINDOW_MS = 15 * 60 * 1000;

const accountKey = (email: string) => `account:${email.trim().toLowerCase()}`;
const addressKey = (address: string) => `address:${address}`;

async function failuresSince(bucket: string, since: Date) {
	const [row] = await db
		.select({ n: count() })
		.from(signInFailures)
		.where(and(eq(signInFailures.bucket, bucket), gte(signInFailures.at, since)));
	return row?.n ?? 0;
}

/** Minutes to wait, or 0 when the attempt may go ahead. */
export async function signInBlockedFor(email: string, address: string): Promise<number> {
	const since = new Date(Date.now() - FAILURE_WINDOW_MS);
	const [perAccount, perAddress] = await Promise.all([
		failuresSince(accountKey(email), since),
		failuresSince(addressKey(address), since)
	]);
	if (perAccount >= MAX_FAILURES_PER_ACCOUNT || perAddress >= MAX_FAILURES_PER_ADDRESS)
		return Math.ceil(FAILURE_WINDOW_MS / 60000);
	return 0;
}

export async function recordSignInFailure(email: string, address: string) {
	await db.insert(signInFailures).values([{ bucket: accountKey(email) }, { bucket: addressKey(address) }]);
	// Old rows carry no information once outside the window.
	await db.delete(signInFailures).where(lt(signInFailures.at, new Date(Date.now() - 2 * FAILURE_WINDOW_MS)));
}

export async function clearAccountFailures(email: string) {
	await db.delete(signInFailures).where(eq(signInFailures.bucket, accountKey(email)));
}
