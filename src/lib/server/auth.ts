// Auth.js configuration: e-mail + password (bcrypt) credentials, JWT sessions (credentials
// sign-in requires them). The JWT only names the user; every request re-reads the user from
// MariaDB (guards.ts), so a disabled account or a changed role takes effect at once.
// The session cookie keeps Auth.js's defaults: httpOnly, sameSite=lax, and secure (with the
// __Secure- prefix) whenever the app is reached over https.
import type { RequestEvent } from '@sveltejs/kit';
import { SvelteKitAuth } from '@auth/sveltekit';
import Credentials from '@auth/sveltekit/providers/credentials';
import { building, dev } from '$app/environment';
import { verifyCredentials } from './accounts/passwords';

export const SESSION_MAX_AGE_S = 12 * 60 * 60;

function secret() {
	const value = process.env.AUTH_SECRET;
	if (!value && !dev && !building)
		throw new Error('AUTH_SECRET is not set: production needs one (npm start generates one for the demo).');
	return value ?? 'development-only-secret-not-for-production';
}

// The config is built per request (not at import), so a build without AUTH_SECRET still works
// and a production server started without it fails every request, logging the message above.
export const { handle: authHandle, signIn, signOut } = SvelteKitAuth(async () => ({
	secret: secret(),
	trustHost: true,
	session: { strategy: 'jwt', maxAge: SESSION_MAX_AGE_S },
	pages: { signIn: '/signin' },
	logger: {
		// A refused password is an expected outcome (counted and audited), not a server error.
		error(err) {
			if ((err as { type?: string }).type !== 'CredentialsSignin') console.error(err);
		}
	},
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

/**
 * The event Auth.js's signIn/signOut actions read: our own form fields as the body, and the
 * original request's headers. Auth.js takes the host (for its redirect and callback URLs) and the
 * session cookie (to end it on sign-out) from those headers; the body's type is FormData's own.
 */
export function authActionEvent<E extends RequestEvent>(event: E, fields: Record<string, string>): E {
	const body = new FormData();
	for (const [name, value] of Object.entries(fields)) body.set(name, value);
	const headers = new Headers(event.request.headers);
	headers.delete('content-type');
	headers.delete('content-length');
	return { ...event, request: new Request(event.request.url, { method: 'POST', body, headers }) };
}
