import { z } from 'zod';
import { ROLE_ORDER } from '$lib/roles';
import { DEFAULT_PREFERENCES, UNITS, type Quantity, type UnitOf } from '$lib/physics/units';

const email = z
	.string()
	.trim()
	.toLowerCase()
	.email('Enter an e-mail address such as name@lab.example.')
	.max(254, 'E-mail addresses are at most 254 characters.');

export const signInSchema = z.object({
	email,
	password: z.string().min(1, 'Enter your password.').max(200, 'Passwords are at most 200 characters.')
});

/** Shortest password accepted (NIST SP 800-63B allows 8; a shared range tablet warrants more). */
export const MIN_PASSWORD_LENGTH = 12;
/** bcrypt reads only the first 72 bytes of a password, so longer ones are refused rather than cut. */
export const MAX_PASSWORD_BYTES = 72;

const newPassword = z
	.string()
	.min(MIN_PASSWORD_LENGTH, `The new password needs at least ${MIN_PASSWORD_LENGTH} characters.`)
	.refine((value) => new TextEncoder().encode(value).length <= MAX_PASSWORD_BYTES, {
		message: `The new password is too long: at most ${MAX_PASSWORD_BYTES} bytes (about ${MAX_PASSWORD_BYTES} plain letters).`
	});

export const forgotPasswordSchema = z.object({ email });

export const setPasswordSchema = z
	.object({
		password: newPassword,
		confirm: z.string().min(1, 'Type the new password a second time.')
	})
	.refine((v) => v.password === v.confirm, { path: ['confirm'], message: 'The two passwords differ; type the same one twice.' });

export const changePasswordSchema = z
	.object({
		current: z.string().min(1, 'Enter your current password.').max(200, 'Passwords are at most 200 characters.'),
		password: newPassword,
		confirm: z.string().min(1, 'Type the new password a second time.')
	})
	.refine((v) => v.password === v.confirm, { path: ['confirm'], message: 'The two passwords differ; type the same one twice.' })
	.refine((v) => v.password !== v.current, { path: ['password'], message: 'The new password must differ from the current one.' });

/** The quantities a person chooses display units for on the profile page. */
export const PREFERENCE_QUANTITIES = ['pressure', 'speed', 'length', 'mass', 'temperature', 'angle'] as const satisfies readonly Quantity[];

function unitEnum<Q extends Quantity>(quantity: Q) {
	return z.enum(Object.keys(UNITS[quantity]) as [UnitOf[Q], ...UnitOf[Q][]], {
		error: `Choose one of the listed ${quantity} units.`
	});
}

export const unitPreferencesSchema = z.object({
	pressure: unitEnum('pressure').default(DEFAULT_PREFERENCES.pressure),
	speed: unitEnum('speed').default(DEFAULT_PREFERENCES.speed),
	length: unitEnum('length').default(DEFAULT_PREFERENCES.length),
	mass: unitEnum('mass').default(DEFAULT_PREFERENCES.mass),
	temperature: unitEnum('temperature').default(DEFAULT_PREFERENCES.temperature),
	angle: unitEnum('angle').default(DEFAULT_PREFERENCES.angle)
});

export const tokenNameSchema = z
	.string()
	.trim()
	.min(1, 'Give the token a name, e.g. the script or machine that will use it.')
	.max(120, 'Token names are at most 120 characters.');

export const createTokenSchema = z.object({ name: tokenNameSchema });

const id = z.coerce.number({ error: 'Missing record id.' }).int('Missing record id.').positive('Missing record id.');

export const revokeTokenSchema = z.object({ tokenId: id });

/** Body of POST /api/v1/tokens (scripts trade a password for a named token). */
export const issueTokenSchema = z.object({
	email,
	password: z.string({ error: 'Give the password as a string.' }).min(1, 'Give the password.').max(200, 'Passwords are at most 200 characters.'),
	name: tokenNameSchema
});

const role = z.enum(ROLE_ORDER, { error: 'Choose one of the listed roles.' });

export const inviteSchema = z.object({
	email,
	name: z.string().trim().min(1, 'Enter the person’s name.').max(120, 'Names are at most 120 characters.'),
	role: role.default('viewer')
});

export const changeRoleSchema = z.object({ role });

/** What the change-role action answers: saved, or refused with the reason. */
export type RoleFormMessage = { tone: 'ok' | 'problem'; text: string };
