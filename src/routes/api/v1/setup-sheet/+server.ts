import { setupSheetApi } from '$lib/server/setup-sheet/api';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = setupSheetApi.create;
