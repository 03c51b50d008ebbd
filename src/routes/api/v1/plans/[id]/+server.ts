import { planApi } from '$lib/server/api-handlers';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = planApi.get;
export const PATCH: RequestHandler = planApi.update;
export const DELETE: RequestHandler = planApi.remove;
