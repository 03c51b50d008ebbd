import { calibrationApi } from '$lib/server/calibrations/api';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = calibrationApi.approve;
