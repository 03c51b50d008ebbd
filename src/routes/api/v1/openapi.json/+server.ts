import { json } from '@sveltejs/kit';
import { openApiDocument } from '$lib/server/openapi';
import type { RequestHandler } from './$types';

/** Public (PUBLIC_API_ROUTES): the API's description, for clients and code generators. */
export const GET: RequestHandler = async () => {
	return json(openApiDocument(), { headers: { 'cache-control': 'public, max-age=300' } });
};
