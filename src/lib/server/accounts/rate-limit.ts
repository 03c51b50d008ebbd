// Sign-in rate limit kept in MariaDB (rate-limiter-flexible's MySQL store, table sign_in_limits),
// so it survives restarts and holds across app instances. An attempt takes its point *before*
// the password is checked, in one INSERT … ON DUPLICATE KEY UPDATE inside a transaction: parallel
// attempts queue on the key's row, so no more than the limit are ever evaluated. A success gives
// the account's points back; a failure keeps them.
import { RateLimiterMySQL, RateLimiterRes } from 'rate-limiter-flexible';
import { pool } from '../db';

/** Failed attempts allowed per account, and per address, within the window (common practice). */
export const MAX_FAILURES_PER_ACCOUNT = 5;
export const MAX_FAILURES_PER_ADDRESS = 20;
export const FAILURE_WINDOW_MS = 15 * 60 * 1000;

const ACCOUNT = 'account';
const ADDRESS = 'address';

const normalise = (email: string) => email.trim().toLowerCase();

type Limiters = { account: RateLimiterMySQL; address: RateLimiterMySQL };
let limiters: Limiters | undefined;

/** The database the app's pool is connected to (the store names it in every statement). */
function databaseName() {
	return decodeURIComponent(new URL(process.env.DATABASE_URL ?? '').pathname.replace(/^\//, ''));
}

function limiter(keyPrefix: string, points: number) {
	return new RateLimiterMySQL({
		// mysql2's callback pool under the app's promise pool: the store speaks callbacks.
		storeClient: pool().pool,
		storeType: 'pool',
		dbName: databaseName(),
		tableName: 'sign_in_limits',
		// The table comes from the migrations, not from the library.
		tableCreated: true,
		keyPrefix,
		points,
		duration: FAILURE_WINDOW_MS / 1000
	});
}

function limitersNow(): Limiters {
	limiters ??= { account: limiter(ACCOUNT, MAX_FAILURES_PER_ACCOUNT), address: limiter(ADDRESS, MAX_FAILURES_PER_ADDRESS) };
	return limiters;
}

function minutesOf(msBeforeNext: number) {
	return Math.max(1, Math.ceil(msBeforeNext / 60000));
}

/**
 * Take one attempt for the account and the address. 0 when the password may be checked now,
 * else the minutes to wait (and the password must not be checked at all).
 */
export async function reserveSignInAttempt(email: string, address: string): Promise<number> {
	const { account, address: perAddress } = limitersNow();
	const results = await Promise.allSettled([account.consume(normalise(email)), perAddress.consume(address)]);
	let wait = 0;
	for (const result of results) {
		if (result.status === 'fulfilled') continue;
		if (!(result.reason instanceof RateLimiterRes)) throw result.reason;
		wait = Math.max(wait, minutesOf(result.reason.msBeforeNext));
	}
	return wait;
}

/** Minutes to wait, or 0 when an attempt may go ahead (a look only; takes nothing). */
export async function signInBlockedFor(email: string, address: string): Promise<number> {
	const { account, address: perAddress } = limitersNow();
	const [a, b] = await Promise.all([account.get(normalise(email)), perAddress.get(address)]);
	let wait = 0;
	if (a && a.consumedPoints >= MAX_FAILURES_PER_ACCOUNT) wait = Math.max(wait, minutesOf(a.msBeforeNext));
	if (b && b.consumedPoints >= MAX_FAILURES_PER_ADDRESS) wait = Math.max(wait, minutesOf(b.msBeforeNext));
	return wait;
}

/** A right password: the account's count starts again, and the address gets its point back. */
export async function signInSucceeded(email: string, address: string) {
	const { account, address: perAddress } = limitersNow();
	await Promise.all([account.delete(normalise(email)), perAddress.reward(address)]);
}

/** A fresh password (set through a link) ends any lock-out the old one built up. */
export async function clearAccountFailures(email: string) {
	await limitersNow().account.delete(normalise(email));
}
