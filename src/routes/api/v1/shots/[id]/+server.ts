import { shotApi } from '$lib/server/api-handlers';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = shotApi.get;
export const PATCH: RequestHandler = shotApi.update;
export const DELETE: RequestHandler = shotApi.remove;
