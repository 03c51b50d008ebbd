import { rigRoutes } from '$lib/server/registries';

export const load = rigRoutes.detailLoad;
export const actions = { updateRig: rigRoutes.update, deleteRig: rigRoutes.remove, restoreRig: rigRoutes.restore };
