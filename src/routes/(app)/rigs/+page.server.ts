import { rigRoutes } from '$lib/server/registries';

export const load = rigRoutes.listLoad;
