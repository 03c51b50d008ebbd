import { rigApi } from '$lib/server/api-handlers';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = rigApi.get;
export const PATCH: RequestHandler = rigApi.update;
export const DELETE: RequestHandler = rigApi.remove;
