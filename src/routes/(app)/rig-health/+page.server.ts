import { prefsFor } from '$lib/format';
import { requireRole } from '$lib/server/guards';
import { rigHealth } from '$lib/server/rig-health';
import { BIAS_ATTENTION_PCT } from '$lib/server/rig-health/attention';
import type { PageServerLoad } from './$types';

/** Leads review dispersion and model bias per rig (product brief). */
export const load: PageServerLoad = async (event) => {
	const user = await requireRole(event, 'lead');
	const now = new Date();
	return { rigs: await rigHealth(prefsFor(user.unitPreferences), now), now, limitPct: BIAS_ATTENTION_PCT };
};
