import { sessionApi } from '$lib/server/api-handlers';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = sessionApi.get;
export const PATCH: RequestHandler = sessionApi.update;
export const DELETE: RequestHandler = sessionApi.remove;
