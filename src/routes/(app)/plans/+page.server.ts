import { planRoutes } from '$lib/server/registries';

export const load = planRoutes.listLoad;
