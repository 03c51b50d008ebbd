// Password hashing and checking (bcrypt). Kept apart from the Auth.js config so the sign-in page,
// the token endpoint, the profile page and the tests share one implementation.
import bcrypt from 'bcryptjs';
import { z } from 'zod';
import { findUserByEmail } from './users';

/** bcrypt cost factor (OWASP Password Storage Cheat Sheet suggests ≥ 10; we use 12). */
export const BCRYPT_COST = 12;

const credentialsSchema = z.object({
	email: z.string().trim().toLowerCase().email().max(254),
	password: z.string().min(1).max(200)
});

let dummyHash: string | undefined;

export function hashPassword(password: string) {
	return bcrypt.hash(password, BCRYPT_COST);
}

export function passwordMatches(password: string, hash: string) {
	return bcrypt.compare(password, hash);
}

/** The user id for valid credentials of an enabled account with a password, else null. */
export async function verifyCredentials(raw: unknown): Promise<number | null> {
	const parsed = credentialsSchema.safeParse(raw);
	if (!parsed.success) return null;
	const user = await findUserByEmail(parsed.data.email);
	if (!user || user.disabledAt || !user.passwordHash) {
		// Same work whether or not the account exists, so timing does not tell.
		dummyHash ??= await bcrypt.hash('not-a-password', BCRYPT_COST);
		await bcrypt.compare(parsed.data.password, dummyHash);
		return null;
	}
	return (await bcrypt.compare(parsed.data.password, user.passwordHash)) ? user.id : null;
}
