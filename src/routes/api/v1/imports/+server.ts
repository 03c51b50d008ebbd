import { importApi } from '$lib/server/imports/api';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = importApi.create;
