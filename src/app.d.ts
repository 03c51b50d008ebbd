import type { Role } from '$lib/roles';

declare module '@auth/core/types' {
	interface Session {
		/** users.session_version when this session signed in (auth.ts). */
		sessionVersion: number | null;
		/** Sign-in time, seconds since the epoch, for the absolute lifetime. */
		signedInAt: number | null;
	}
}

declare global {
	namespace App {
		interface Locals {
			/** Who the request claims to be (Auth.js session cookie or API bearer token); not yet checked. */
			claimedUserId: number | null;
			/** The user's session version the session cookie was signed in with (accounts/sessions.ts). */
			claimedSessionVersion?: number | null;
			/** Set when the claim came from an API token. */
			apiTokenId: number | null;
			/** Filled by requireUser(): the user as stored in MariaDB right now. */
			user: AppUser | null;
		}
		interface Error {
			message: string;
			/** Field paths with their messages, for API validation errors. */
			issues?: { path: string; message: string }[];
		}
	}

	interface AppUser {
		id: number;
		email: string;
		name: string;
		role: Role;
		unitPreferences: Record<string, string> | null;
	}
}

export {};
