import { auditEvents } from './db/schema';
import type { Database, Transaction } from './db';

export type AuditInput = {
	userId: number | null;
	action: string;
	entityType: string;
	entityId?: string | number | null;
	before?: unknown;
	after?: unknown;
};

/** Record who did what to which entity; call inside the transaction of the change it describes. */
export async function recordAudit(tx: Database | Transaction, event: AuditInput) {
	await tx.insert(auditEvents).values({
		userId: event.userId,
		action: event.action,
		entityType: event.entityType,
		entityId: event.entityId == null ? null : String(event.entityId),
		before: event.before ?? null,
		after: event.after ?? null
	});
}
