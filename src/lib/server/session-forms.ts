// Loads and actions shared by the new-session and edit-session pages.
import { superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { rangeSessionInput, type RangeSessionInput } from '$lib/schemas/range';
import { plans } from './plans';
import { projectiles } from './projectiles';
import { rigs } from './rigs';

export const sessionAdapter = zod4(rangeSessionInput);

/** Sensible starting values for a new session: standard conditions (ISO 2533 sea level: 15 °C, 101 325 Pa). */
export const NEW_SESSION_DEFAULTS: Partial<RangeSessionInput> = {
	elevationDeg: 0,
	azimuthDeg: 0,
	launchHeightM: 1.2,
	aimHeightM: 1.2,
	temperatureC: 15,
	pressurePa: 101_325,
	relativeHumidity: 0.5,
	windXMps: 0,
	windZMps: 0,
	downrangeChronoM: null,
	testPlanId: null
};

/** Choices for the rig, projectile and plan pickers (live rows only). */
export async function sessionPickers() {
	const [rigRows, projectileRows, planRows] = await Promise.all([rigs.options(), projectiles.options(), plans.options()]);
	return {
		rigs: rigRows.map((r) => ({ value: r.id, label: r.name })),
		projectiles: projectileRows.map((p) => ({ value: p.id, label: p.name })),
		plans: planRows.map((p) => ({ value: p.id, label: p.name }))
	};
}

export async function sessionForm(values: Partial<RangeSessionInput>) {
	return superValidate(values as RangeSessionInput, sessionAdapter, { errors: false });
}
