import { requireUser } from '$lib/server/guards';
import { API_VERSION, apiReference } from '$lib/server/openapi';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = await requireUser(event);
	return { tags: apiReference(event.url.origin), version: API_VERSION, role: user.role };
};
