import { db } from '../db';
import { recordAudit } from '../audit';
import { recordSignInFailure } from './rate-limit';
import { findUserByEmail } from './users';

/** Count the failure for the rate limit and leave an audit event (with the account when it exists). */
export async function recordFailedSignIn(email: string, address: string) {
	await recordSignInFailure(email, address);
	const user = await findUserByEmail(email);
	await recordAudit(db, {
		userId: null,
		action: 'sign_in_failed',
		entityType: 'user',
		entityId: user?.id ?? null,
		after: { email: email.trim().toLowerCase(), address }
	});
}
