// The shared shape of the lab's registries (rigs, projectiles, test plans): list with search,
// sort and paging in SQL; create, update, soft delete and restore, each with its audit event in
// the same transaction. One implementation, so the three registries cannot drift apart.
import { error } from '@sveltejs/kit';
import { and, count, eq, isNotNull, isNull, like, type AnyColumn } from 'drizzle-orm';
import type { MySqlColumn, MySqlTable } from 'drizzle-orm/mysql-core';
import { db, type Database, type Transaction } from './db';
import { recordAudit } from './audit';
import { containsPattern, orderBy, pageOf, type ListParams } from './listing';

type RegistryTable = MySqlTable & {
	id: MySqlColumn;
	name: MySqlColumn;
	deletedAt: MySqlColumn;
};

export type RegistryOptions<S extends string> = {
	entityType: string;
	sortable: Record<S, AnyColumn>;
	defaultSort: S;
	/** Runs inside an update's transaction, e.g. to recompute the predictions that depend on the row. */
	afterUpdate?: (tx: Transaction, id: number) => Promise<unknown>;
	/** The column that names who created the row (a test plan's owner), set from the creating user. */
	creatorColumn?: string;
};

/** A duplicate name is the one constraint users can hit by hand: say so in words. */
function isDuplicate(err: unknown) {
	const e = err as { code?: string; cause?: { code?: string } };
	return e?.code === 'ER_DUP_ENTRY' || e?.cause?.code === 'ER_DUP_ENTRY';
}

export class DuplicateNameError extends Error {
	constructor(public readonly entity: string) {
		super(`A ${entity} with this name already exists (perhaps deleted: see the deleted list).`);
	}
}

export function registry<T extends RegistryTable, Row extends { id: number; deletedAt: Date | null }, Input extends Record<string, unknown>, S extends string>(
	table: T,
	options: RegistryOptions<S>
) {
	const t = table as RegistryTable;
	const { entityType } = options;
	const sortKeys = Object.keys(options.sortable) as S[];

	async function find(executor: Database | Transaction, id: number, options: { lock?: boolean } = {}): Promise<Row | null> {
		const query = executor.select().from(t).where(eq(t.id, id)).limit(1);
		const [row] = options.lock ? await query.for('update') : await query;
		return (row as Row | undefined) ?? null;
	}

	return {
		sortKeys,
		defaultSort: options.defaultSort,

		async list(params: ListParams<S>) {
			const where = and(
				params.deleted ? isNotNull(t.deletedAt) : isNull(t.deletedAt),
				params.q ? like(t.name, containsPattern(params.q)) : undefined
			);
			const [rows, [total]] = await Promise.all([
				db
					.select()
					.from(t)
					.where(where)
					.orderBy(orderBy(options.sortable[params.sort], params.dir), orderBy(t.id, params.dir))
					.limit(params.pageSize)
					.offset((params.page - 1) * params.pageSize),
				db.select({ n: count() }).from(t).where(where)
			]);
			return pageOf(rows as Row[], total?.n ?? 0, params);
		},

		/** All live rows (for pickers), by name. */
		async options(): Promise<Row[]> {
			return (await db.select().from(t).where(isNull(t.deletedAt)).orderBy(t.name)) as Row[];
		},

		async get(id: number): Promise<Row | null> {
			return find(db, id);
		},

		/** The row or a 404 naming what was missing. */
		async getOr404(id: number): Promise<Row> {
			const row = await find(db, id);
			if (!row) error(404, { message: `No ${entityType} with id ${id}.` });
			return row;
		},

		async create(input: Input, userId: number): Promise<Row> {
			try {
				return await db.transaction(async (tx) => {
					const values = options.creatorColumn ? { ...input, [options.creatorColumn]: userId } : input;
					const [created] = await tx.insert(t).values(values as never).$returningId();
					const id = (created as { id: number }).id;
					const row = (await find(tx, id))!;
					await recordAudit(tx, { userId, action: 'create', entityType, entityId: id, after: row });
					return row;
				});
			} catch (err) {
				if (isDuplicate(err)) throw new DuplicateNameError(entityType);
				throw err;
			}
		},

		async update(id: number, input: Partial<Input>, userId: number): Promise<Row> {
			try {
				return await db.transaction(async (tx) => {
					// A locking read first: the recomputation's reads then see every shot committed
					// before this row was locked, and a shot being logged (which share-locks the row
					// while it predicts) either finishes first or reads this change.
					const before = await find(tx, id, { lock: true });
					// A deleted row is gone for writers until it is restored.
					if (!before || before.deletedAt) error(404, { message: `No ${entityType} with id ${id}.` });
					await tx.update(t).set(input as never).where(eq(t.id, id));
					await options.afterUpdate?.(tx, id);
					const after = (await find(tx, id))!;
					await recordAudit(tx, { userId, action: 'update', entityType, entityId: id, before, after });
					return after;
				});
			} catch (err) {
				if (isDuplicate(err)) throw new DuplicateNameError(entityType);
				throw err;
			}
		},

		/** Soft delete: the row stays (shots and sessions keep pointing at it) and can be restored. */
		async remove(id: number, userId: number) {
			return setDeleted(id, new Date(), userId, 'delete');
		},

		async restore(id: number, userId: number) {
			return setDeleted(id, null, userId, 'restore');
		}
	};

	async function setDeleted(id: number, at: Date | null, userId: number, action: string): Promise<Row> {
		return db.transaction(async (tx) => {
			const before = await find(tx, id, { lock: true });
			const wasDeleted = Boolean(before && before.deletedAt);
			// Deleting a deleted row finds nothing to delete: 404 and no audit event.
			if (!before || (at !== null && wasDeleted)) error(404, { message: `No ${entityType} with id ${id}.` });
			if (at === null && !wasDeleted) return before;
			await tx.update(t).set({ deletedAt: at } as never).where(eq(t.id, id));
			const after = (await find(tx, id))!;
			await recordAudit(tx, { userId, action, entityType, entityId: id, before, after });
			return after;
		});
	}
}
