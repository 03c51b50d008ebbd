import { planRoutes } from '$lib/server/registries';

export const load = planRoutes.detailLoad;
export const actions = { updatePlan: planRoutes.update, deletePlan: planRoutes.remove, restorePlan: planRoutes.restore };
