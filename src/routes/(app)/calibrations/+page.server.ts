import { requireUser } from '$lib/server/guards';
import { calibrationPairs } from '$lib/server/calibrations';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireUser(event);
	return { pairs: await calibrationPairs() };
};
