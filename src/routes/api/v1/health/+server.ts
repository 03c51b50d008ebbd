import { json } from '@sveltejs/kit';
import * as service from '$lib/server/health';
import type { RequestHandler } from './$types';

/** Public: for load balancers and the start script. 503 while the database is not usable. */
export const GET: RequestHandler = async () => {
	const report = await service.health();
	return json(report, { status: report.ok ? 200 : 503, headers: { 'cache-control': 'no-store' } });
};
