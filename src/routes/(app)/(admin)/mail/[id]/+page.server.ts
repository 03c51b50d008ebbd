import { error } from '@sveltejs/kit';
import { requireRole } from '$lib/server/guards';
import * as mailbox from '$lib/server/mailbox';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	await requireRole(event, 'admin');
	const message = await mailbox.readMessage(event.params.id);
	if (!message) error(404, { message: 'No such message in the mail sink.' });
	return { message };
};
