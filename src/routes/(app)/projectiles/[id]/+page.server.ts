import { projectileRoutes } from '$lib/server/registries';

export const load = projectileRoutes.detailLoad;
export const actions = { updateProjectile: projectileRoutes.update, deleteProjectile: projectileRoutes.remove, restoreProjectile: projectileRoutes.restore };
