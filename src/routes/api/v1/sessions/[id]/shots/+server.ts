import { shotApi } from '$lib/server/api-handlers';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = shotApi.list;
export const POST: RequestHandler = shotApi.create;
