import { shotApi } from '$lib/server/api-handlers';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = shotApi.void;
