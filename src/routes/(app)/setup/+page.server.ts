import { requireUser } from '$lib/server/guards';
import { db } from '$lib/server/db';
import { NEW_SESSION_DEFAULTS } from '$lib/server/session-forms';
import { setupChoices } from '$lib/server/setup-sheet';
import type { PageServerLoad } from './$types';

function idOf(url: URL, name: string): number | null {
	const raw = url.searchParams.get(name);
	return raw && /^\d+$/.test(raw) ? Number(raw) : null;
}

export const load: PageServerLoad = async (event) => {
	await requireUser(event);
	const choices = await setupChoices(db);
	return {
		...choices,
		chosen: { planId: idOf(event.url, 'plan'), rigId: idOf(event.url, 'rig'), projectileId: idOf(event.url, 'projectile') },
		// Standard sea-level air (ISO 2533: 15 °C, 101 325 Pa) and the geometry of a new session.
		defaults: {
			launchHeightM: NEW_SESSION_DEFAULTS.launchHeightM!,
			aimHeightM: NEW_SESSION_DEFAULTS.aimHeightM!,
			temperatureC: NEW_SESSION_DEFAULTS.temperatureC!,
			pressurePa: NEW_SESSION_DEFAULTS.pressurePa!,
			relativeHumidity: NEW_SESSION_DEFAULTS.relativeHumidity!,
			windXMps: 0,
			windZMps: 0
		}
	};
};
