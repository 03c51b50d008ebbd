// Mail for the leads: session close-outs and safety events go to every active lead, through the
// outbox (mail/outbox.ts), so a slow or absent mail server delays the message but never loses it
// nor holds up the request.
import { and, eq, isNull } from 'drizzle-orm';
import type { Database, Transaction } from './db';
import { users } from './db/schema';
import { enqueueMail } from './mail/outbox';

/** Queue one message for every active lead (in the caller's transaction); returns how many. */
export async function queueForLeads(tx: Transaction | Database, mail: { kind: string; entityId: number; subject: string; text: string }) {
	const leads = await tx.select({ email: users.email }).from(users).where(and(eq(users.role, 'lead'), isNull(users.disabledAt)));
	await enqueueMail(
		tx,
		leads.map((lead) => ({ kind: mail.kind, entityId: mail.entityId, to: lead.email, subject: mail.subject, text: mail.text }))
	);
	return leads.length;
}
