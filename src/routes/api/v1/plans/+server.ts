import { planApi } from '$lib/server/api-handlers';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = planApi.list;
export const POST: RequestHandler = planApi.create;
