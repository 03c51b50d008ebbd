import { requireUser } from '$lib/server/guards';
import { blankTemplate } from '$lib/server/imports/export';
import type { RequestHandler } from './$types';

/** The blank import template: our column names, SI units in the names. */
export const GET: RequestHandler = async (event) => {
	await requireUser(event);
	return new Response(blankTemplate(), {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': 'attachment; filename="shotwright-shots-template.csv"',
			'cache-control': 'no-store'
		}
	});
};
