import { projectileApi } from '$lib/server/api-handlers';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = projectileApi.get;
export const PATCH: RequestHandler = projectileApi.update;
export const DELETE: RequestHandler = projectileApi.remove;
