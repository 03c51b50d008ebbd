// Reads of the import record (the list, one import, its raw file) and the saved mapping
// templates. The raw bytes are only read by the download; lists never carry them.
import { count, desc, eq, sql } from 'drizzle-orm';
import { importMapping, type CellError, type ImportMappingInput } from '$lib/schemas/imports';
import { importTemplates, imports, rangeSessions, users } from '../db/schema';
import type { Executor } from '../reconcile/model';
import { recordAudit } from '../audit';
import { pageOf } from '../listing';

/** Everything of an import but its raw bytes. */
const recordColumns = {
	id: imports.id,
	sessionId: imports.sessionId,
	fileName: imports.fileName,
	sizeBytes: imports.sizeBytes,
	sha256: imports.sha256,
	mapping: imports.mapping,
	rowCount: imports.rowCount,
	importedCount: imports.importedCount,
	rejectedCount: imports.rejectedCount,
	errors: imports.errors,
	createdBy: imports.createdBy,
	createdAt: imports.createdAt
};

export type ImportSessionLine = { id: number; title: string; created: boolean; rows: number };

/** What imports.mapping holds (written by commit.ts). */
export type StoredMapping = {
	format: { delimiter: string; decimal: string; headerRow: boolean; newline: string; bom: boolean; skippedRecords: number };
	columns: { index: number; header: string; field: string | null; unit: string | null }[];
	target: { kind: 'session'; sessionId: number } | { kind: 'column'; templateSessionId: number };
	mode: string;
	forced: boolean;
	template: string | null;
	sessions: ImportSessionLine[];
	notices: string[];
	findings: { header: string; chosen: string; suggested: string; reason: string }[];
	unrecordedErrors: number;
	predictions: { shots: number; unpredictable: number };
};

export type ImportRecord = Omit<typeof imports.$inferSelect, 'rawBytes' | 'mapping' | 'errors'> & {
	mapping: StoredMapping;
	errors: CellError[];
	createdByName: string;
	sessionTitle: string | null;
};

export async function listImports(db: Executor, params: { page: number; pageSize: number; sessionId?: number | null }) {
	const where = params.sessionId ? eq(imports.sessionId, params.sessionId) : undefined;
	const [rows, [total]] = await Promise.all([
		db
			.select({
				id: imports.id,
				sessionId: imports.sessionId,
				sessionTitle: rangeSessions.title,
				fileName: imports.fileName,
				sizeBytes: imports.sizeBytes,
				sha256: imports.sha256,
				rowCount: imports.rowCount,
				importedCount: imports.importedCount,
				rejectedCount: imports.rejectedCount,
				createdAt: imports.createdAt,
				createdByName: users.name,
				// Only the session list of the mapping, not the whole JSON with its columns.
				sessionCount: sql<number>`JSON_LENGTH(${imports.mapping}, '$.sessions')`.mapWith(Number)
			})
			.from(imports)
			.innerJoin(users, eq(users.id, imports.createdBy))
			.leftJoin(rangeSessions, eq(rangeSessions.id, imports.sessionId))
			.where(where)
			.orderBy(desc(imports.id))
			.limit(params.pageSize)
			.offset((params.page - 1) * params.pageSize),
		db.select({ n: count() }).from(imports).where(where)
	]);
	return pageOf(rows, total?.n ?? 0, params);
}

export async function getImport(db: Executor, id: number): Promise<ImportRecord | null> {
	const [row] = await db
		.select({ ...recordColumns, createdByName: users.name, sessionTitle: rangeSessions.title })
		.from(imports)
		.innerJoin(users, eq(users.id, imports.createdBy))
		.leftJoin(rangeSessions, eq(rangeSessions.id, imports.sessionId))
		.where(eq(imports.id, id))
		.limit(1);
	if (!row) return null;
	return { ...row, mapping: row.mapping as unknown as StoredMapping, errors: row.errors as CellError[] };
}

/** The uploaded file as it came, with its name. */
export async function rawFile(db: Executor, id: number) {
	const [row] = await db.select({ fileName: imports.fileName, sha256: imports.sha256, rawBytes: imports.rawBytes }).from(imports).where(eq(imports.id, id)).limit(1);
	return row ?? null;
}

/** Earlier imports of a file with this SHA-256 (newest first). */
export async function importsOfFile(db: Executor, sha256: string) {
	return db
		.select({ id: imports.id, createdAt: imports.createdAt, createdByName: users.name, sessionId: imports.sessionId, sessionTitle: rangeSessions.title, fileName: imports.fileName })
		.from(imports)
		.innerJoin(users, eq(users.id, imports.createdBy))
		.leftJoin(rangeSessions, eq(rangeSessions.id, imports.sessionId))
		.where(eq(imports.sha256, sha256))
		.orderBy(desc(imports.id));
}

// ---------------------------------------------------------------------------------------------
// Templates: a mapping saved under a name for the next file from the same chronograph.

export type ImportTemplate = { id: number; name: string; mapping: ImportMappingInput; createdByName: string; createdAt: Date };

export async function listTemplates(db: Executor): Promise<ImportTemplate[]> {
	const rows = await db
		.select({ id: importTemplates.id, name: importTemplates.name, mapping: importTemplates.mapping, createdByName: users.name, createdAt: importTemplates.createdAt })
		.from(importTemplates)
		.innerJoin(users, eq(users.id, importTemplates.createdBy))
		.orderBy(importTemplates.name);
	return rows.flatMap((r) => {
		const parsed = importMapping.safeParse(r.mapping);
		return parsed.success ? [{ ...r, mapping: parsed.data }] : [];
	});
}

export async function templateByName(db: Executor, name: string): Promise<ImportTemplate | null> {
	const all = await listTemplates(db);
	return all.find((t) => t.name.toLowerCase() === name.trim().toLowerCase()) ?? null;
}

/**
 * Save a mapping under a name; an existing template of that name is replaced (the mapping screen
 * asks first). Only the columns are kept: the next file's format is detected afresh.
 */
export async function saveTemplate(db: Executor, name: string, mapping: ImportMappingInput, user: AppUser) {
	const stored = { columns: mapping.columns.map((c) => ({ index: c.index, header: c.header, field: c.field, unit: c.unit ?? null })) };
	return db.transaction(async (tx) => {
		const [existing] = await tx.select().from(importTemplates).where(eq(importTemplates.name, name)).for('update');
		if (existing) {
			await tx.update(importTemplates).set({ mapping: stored }).where(eq(importTemplates.id, existing.id));
			await recordAudit(tx, { userId: user.id, action: 'update', entityType: 'import_template', entityId: existing.id, before: existing, after: { ...existing, mapping: stored } });
			return { id: existing.id, replaced: true };
		}
		const [created] = await tx.insert(importTemplates).values({ name, mapping: stored, createdBy: user.id }).$returningId();
		await recordAudit(tx, { userId: user.id, action: 'create', entityType: 'import_template', entityId: created.id, after: { name, mapping: stored } });
		return { id: created.id, replaced: false };
	});
}

export async function deleteTemplate(db: Executor, id: number, user: AppUser) {
	return db.transaction(async (tx) => {
		const [existing] = await tx.select().from(importTemplates).where(eq(importTemplates.id, id)).for('update');
		if (!existing) return false;
		await tx.delete(importTemplates).where(eq(importTemplates.id, id));
		await recordAudit(tx, { userId: user.id, action: 'delete', entityType: 'import_template', entityId: id, before: existing });
		return true;
	});
}
