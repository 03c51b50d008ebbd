// Auth.js configuration: e-mail + password (bcrypt) credentials, JWT sessions (credentials
// sign-in requires them). The JWT names the user, the user's session version at sign-in and the
// sign-in time; every request re-reads the user from MariaDB (guards.ts) and compares the
// version, so sign-out, a new password, a role change or disabling ends every older session.
// The session cookie is httpOnly and sameSite=lax; it is Secure (with the __Secure- prefix)
// exactly when the app is served over https, on sign-in and on every refresh alike
// (request-guard.ts keeps the refresh in line).
import { isRedirect, type RequestEvent } from '@sveltejs/kit';
import { SvelteKitAuth, CredentialsSignin } from '@auth/sveltekit';
import Credentials from '@auth/sveltekit/providers/credentials';
import { building, dev } from '$app/environment';
import { checkPassword } from './accounts/sign-in';
import { sessionVersionOf } from './accounts/sessions';

/** Idle lifetime: a session not used for this long ends (each request re-issues the cookie). */
export const SESSION_MAX_AGE_S = 12 * 60 * 60;
/** Absolute lifetime: however busy, a session ends this long after its sign-in. */
export const SESSION_ABSOLUTE_MAX_AGE_S = 7 * 24 * 60 * 60;

/** The rate limit said no: Auth.js puts the code into its error, so the page can say "wait". */
export class SignInRateLimited extends CredentialsSignin {
	code = 'rate_limited';
	constructor(readonly minutes: number) {
		super();
	}
}

/** When only Auth.js's redirect tells of the limit (not its error), the window's length is the wait. */
const RATE_LIMIT_MINUTES_UNKNOWN = 15;

/** The form field the sign-in action passes the client's address in (authorize() has no event). */
export const ADDRESS_FIELD = 'clientAddress';

/** True when the app is served over https (ORIGIN, which adapter-node builds the URL from). */
export function servedOverHttps(url: URL) {
	return url.protocol === 'https:';
}

/** True when a session signed in at signedInAtS (s since the epoch) is past its absolute lifetime. */
export function sessionExpired(signedInAtS: unknown, nowMs = Date.now()) {
	return typeof signedInAtS !== 'number' || nowMs / 1000 - signedInAtS > SESSION_ABSOLUTE_MAX_AGE_S;
}

function secret() {
	const value = process.env.AUTH_SECRET;
	if (!value && !dev && !building)
		throw new Error('AUTH_SECRET is not set: production needs one (npm start generates one for the demo).');
	return value ?? 'development-only-secret-not-for-production';
}

// The config is built per request (not at import), so a build without AUTH_SECRET still works
// and a production server started without it fails every request, logging the message above.
export const { handle: authHandle, signIn, signOut } = SvelteKitAuth(async (event) => ({
	secret: secret(),
	trustHost: true,
	useSecureCookies: servedOverHttps(event.url),
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
			credentials: { email: { type: 'email' }, password: { type: 'password' }, [ADDRESS_FIELD]: { type: 'text' } },
			// Reached only through the sign-in page's action (Auth.js's own callback URL is closed
			// to requests from outside, request-guard.ts), so the address field is the server's.
			async authorize(credentials) {
				const { email, password } = credentials;
				const address = credentials[ADDRESS_FIELD];
				if (typeof email !== 'string' || typeof password !== 'string' || typeof address !== 'string') return null;
				const check = await checkPassword(email, password, address);
				if (check.ok) return { id: String(check.userId) };
				if (check.blockedMinutes > 0) throw new SignInRateLimited(check.blockedMinutes);
				return null;
			}
		})
	],
	callbacks: {
		async jwt({ token, user }) {
			if (user?.id) {
				token.uid = user.id;
				token.sv = await sessionVersionOf(Number(user.id));
				token.sat = Math.floor(Date.now() / 1000);
			}
			// Past the absolute lifetime the token is dropped (Auth.js then clears the cookie).
			if (sessionExpired(token.sat)) return null;
			return token;
		},
		session({ session, token }) {
			return {
				...session,
				user: { ...session.user, id: String(token.uid ?? '') },
				sessionVersion: typeof token.sv === 'number' ? token.sv : null,
				signedInAt: typeof token.sat === 'number' ? token.sat : null
			};
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

export type SignInOutcome = { ok: true } | { ok: false; blockedMinutes: number };

/**
 * Sign in through Auth.js in-process (the only way in: its HTTP callback is closed), which runs
 * authorize() and so the rate limit and audit. On success the session cookie is set on the event.
 */
export async function signInWithPassword(event: RequestEvent, email: string, password: string): Promise<SignInOutcome> {
	try {
		await signIn(authActionEvent(event, { providerId: 'credentials', email, password, [ADDRESS_FIELD]: event.getClientAddress(), redirectTo: '/' }));
	} catch (thrown) {
		if (isRedirect(thrown)) {
			const refused = new URL(thrown.location, event.url).searchParams;
			if (!refused.has('error')) return { ok: true };
			return { ok: false, blockedMinutes: refused.get('code') === 'rate_limited' ? RATE_LIMIT_MINUTES_UNKNOWN : 0 };
		}
		if (thrown instanceof SignInRateLimited) return { ok: false, blockedMinutes: thrown.minutes };
		if ((thrown as { type?: string } | null)?.type === 'CredentialsSignin') return { ok: false, blockedMinutes: 0 };
		throw thrown;
	}
	return { ok: true };
}
