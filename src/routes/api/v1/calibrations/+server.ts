import { calibrationApi } from '$lib/server/calibrations/api';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = calibrationApi.list;
export const POST: RequestHandler = calibrationApi.create;
