import { planRoutes } from '$lib/server/registries';

export const load = planRoutes.newLoad;
export const actions = { createPlan: planRoutes.create };
