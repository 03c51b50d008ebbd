import { requireRole } from '$lib/server/guards';
import type { LayoutServerLoad } from './$types';

// Admin pages share the app's shell (this group sits inside (app)); each of their loads and
// actions checks the role again, since a layout load does not run before a form action.
export const load: LayoutServerLoad = async (event) => {
	await requireRole(event, 'admin');
	return {};
};
