// Auth.js configuration: e-mail + password (bcrypt) credentials, JWT sessions (credentials
// sign-in requires them). The JWT only names the user; every request re-reads the user from
// MariaDB (guards.ts), so a disabled account or a changed role takes effect at once.
import { SvelteKitAuth } from '@auth/sveltekit';
import Credentials from '@auth/sveltekit/providers/credentials';
import bcrypt from 'bcryptjs';
import { z } from 'zod';
import { building, dev } from '$app/environment';
import { findUserByEmail } from './accounts/users';

/** bcrypt cost factor (OWASP Password Storage Cheat Sheet suggests ≥ 10; we use 12). */
export const BCRYPT_COST = 12;
export const SESSION_MAX_AGE_S = 12 * 60 * 60;

const credentialsSchema = z.object({
	email: z.string().trim().toLowerCase().email().max(254),
	password: z.string().min(1).max(200)
});

let dummyHash: string | undefined;

export function hashPassword(password: string) {
	return bcrypt.hash(password, BCRYPT_COST);
}

/** The user id for valid credentials of an enabled account, else null. */
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

function secret() {
	const value = process.env.AUTH_SECRET;
	if (!value && !dev && !building)
		throw new Error('AUTH_SECRET is not set: production needs one (npm start generates one for the demo).');
	return value ?? 'development-only-secret-not-for-production';
}

export const { handle: authHandle, signIn, signOut } = SvelteKitAuth(() => ({
	secret: secret(),
	trustHost: true,
	session: { strategy: 'jwt', maxAge: SESSION_MAX_AGE_S },
	pages: { signIn: '/signin' },
	providers: [
		Credentials({
			credentials: { email: { type: 'email' }, password: { type: 'password' } },
			async authorize(credentials) {
				const id = await verifyCredentials(credentials);
				return id === null ? null : { id: String(id) };
			}
		})
	],
	callbacks: {
		jwt({ token, user }) {
			if (user?.id) token.uid = user.id;
			return token;
		},
		session({ session, token }) {
			return { ...session, user: { ...session.user, id: String(token.uid ?? '') } };
		}
	}
}));
