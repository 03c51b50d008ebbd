import { projectileApi } from '$lib/server/api-handlers';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = projectileApi.list;
export const POST: RequestHandler = projectileApi.create;
