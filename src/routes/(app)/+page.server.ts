import { requireUser } from '$lib/server/guards';
import * as dashboard from '$lib/server/dashboard';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireUser(event);
	return { overview: await dashboard.overview() };
};
