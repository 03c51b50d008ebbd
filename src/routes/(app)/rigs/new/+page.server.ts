import { rigRoutes } from '$lib/server/registries';

export const load = rigRoutes.newLoad;
export const actions = { createRig: rigRoutes.create };
