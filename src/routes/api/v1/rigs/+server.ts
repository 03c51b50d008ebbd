import { rigApi } from '$lib/server/api-handlers';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = rigApi.list;
export const POST: RequestHandler = rigApi.create;
