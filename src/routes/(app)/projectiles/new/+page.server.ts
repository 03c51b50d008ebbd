import { projectileRoutes } from '$lib/server/registries';

export const load = projectileRoutes.newLoad;
export const actions = { createProjectile: projectileRoutes.create };
