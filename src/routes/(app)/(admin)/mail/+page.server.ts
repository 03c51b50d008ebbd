import { requireRole } from '$lib/server/guards';
import * as mailbox from '$lib/server/mailbox';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'admin');
	return { mailbox: await mailbox.listMessages(), limit: mailbox.MAILBOX_LIMIT };
};
