import { projectileRoutes } from '$lib/server/registries';

export const load = projectileRoutes.listLoad;
