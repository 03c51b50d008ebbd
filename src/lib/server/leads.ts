// Mail for the leads: session close-outs and safety events go to every active lead.
import { and, eq, isNull } from 'drizzle-orm';
import { db } from './db';
import { users } from './db/schema';
import { sendMail } from './mail';

/** Send one message to every active lead; returns how many were sent. */
export async function mailLeads(subject: string, text: string) {
	const leads = await db.select({ email: users.email }).from(users).where(and(eq(users.role, 'lead'), isNull(users.disabledAt)));
	for (const lead of leads) await sendMail({ to: lead.email, subject, text });
	return leads.length;
}
