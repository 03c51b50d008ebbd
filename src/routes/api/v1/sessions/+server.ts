import { sessionApi } from '$lib/server/api-handlers';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = sessionApi.list;
export const POST: RequestHandler = sessionApi.create;
