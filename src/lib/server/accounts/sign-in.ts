// The one way a password is checked: the sign-in page (through Auth.js's authorize()), the token
// endpoint and the profile's password change all come here, so all share the rate limit and the
// audit trail. Auth.js's own HTTP endpoints are closed (request-guard.ts), so nothing else can.
import { db } from '../db';
import { recordAudit } from '../audit';
import { reserveSignInAttempt, signInSucceeded } from './rate-limit';
import { verifyCredentials } from './passwords';
import { findUserByEmail, normaliseEmail } from './users';

/** blockedMinutes: 0 for a wrong password, else the wait the rate limit asks for. */
export type PasswordCheck = { ok: true; userId: number } | { ok: false; blockedMinutes: number };

/**
 * Check e-mail and password under the rate limit. The attempt is counted before bcrypt runs, so
 * parallel guesses past the limit are refused without being evaluated; a refusal by the limit is
 * { ok: false, blockedMinutes > 0 }, a wrong password { ok: false, blockedMinutes: 0 } (audited).
 */
export async function checkPassword(email: string, password: string, address: string): Promise<PasswordCheck> {
	const waitMinutes = await reserveSignInAttempt(email, address);
	if (waitMinutes > 0) return { ok: false, blockedMinutes: waitMinutes };
	const userId = await verifyCredentials({ email, password });
	if (userId === null) {
		await recordFailedSignIn(email, address);
		return { ok: false, blockedMinutes: 0 };
	}
	await signInSucceeded(email, address);
	return { ok: true, userId };
}

/** Leave an audit event for a wrong password (with the account when it exists). */
async function recordFailedSignIn(email: string, address: string) {
	const user = await findUserByEmail(email);
	await recordAudit(db, {
		userId: null,
		action: 'sign_in_failed',
		entityType: 'user',
		entityId: user?.id ?? null,
		after: { email: normaliseEmail(email), address }
	});
}
