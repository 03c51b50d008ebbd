// Hand-written SQL for the few hot paths, with rows typed and converted by the Drizzle schema.
//
// Why not Drizzle's query builder there: logging one shot took ≈ 19 round trips, and building
// each statement (its SQL text rebuilt from the column objects on every call) cost as much CPU as
// the database work itself; with 20 tablets on one session the app was CPU-bound (npm run
// bench:api, README). Statements here are written once as text; column names and value
// conversions still come from the Drizzle tables (getTableColumns, the columns' own
// mapFromDriverValue/mapToDriverValue), so they cannot drift from schema.ts.
//
// It runs on mysql2's callback API: the promise wrapper captures a stack trace for every
// statement, which was a measurable share of the same benchmark. Single statements with values
// are server-side prepared statements (mysql2's execute: prepared once per pooled connection and
// cached there, then sent as binary values): MariaDB parses each text once.
//
// Transactions run on a pool of their own (client.ts: autocommit off, several statements per
// request) and send their statements in batches: one write, run by MariaDB one after the other,
// answered together. A row lock taken by a batch's first statement is then held while MariaDB
// runs the rest, not while the app's busy event loop gets round to sending each next statement
// (measured: 20 tablets on one session queued on its row lock, whose holder sat idle between
// statements). Batches use the text protocol, values escaped by mysql2 as in any query; their
// statement texts are constants of the modules that use them, never built from input.
import { getTableColumns, getTableName, sql, type Column, type InferInsertModel, type InferSelectModel, type SQL, type Table } from 'drizzle-orm';
import { toSnakeCase } from 'drizzle-orm/casing';
import type { Pool as CorePool, PoolConnection as CorePoolConnection, QueryOptions } from 'mysql2';
import { transactionPool } from './index';

/** A pooled connection (inside a transaction) or the pool itself (one statement, autocommit). */
export type Queryable = Pick<CorePoolConnection, 'query' | 'execute'> | Pick<CorePool, 'query' | 'execute'>;
export type Connection = CorePoolConnection;

/** The column's name in MariaDB (the app's Drizzle client uses snake_case casing). */
export function columnName(column: Column): string {
	return column.keyAsName ? toSnakeCase(column.name) : column.name;
}

/** Date-time values as text, converted by the column (as Drizzle's mysql2 driver does). */
function typeCast(field: { type: string; string(): string | null }, next: () => unknown) {
	return field.type === 'TIMESTAMP' || field.type === 'DATETIME' || field.type === 'DATE' ? field.string() : next();
}

function run<T>(on: Queryable, options: QueryOptions): Promise<T> {
	const done = (resolve: (value: T) => void, reject: (err: Error) => void) => (err: Error | null, result: unknown) =>
		err ? reject(err) : resolve(result as T);
	return new Promise((resolve, reject) => {
		if (options.values && (options.values as unknown[]).length > 0) (on as CorePool).execute(options, done(resolve, reject));
		else (on as CorePool).query(options, done(resolve, reject));
	});
}

/** One statement with `?` placeholders, run with the app's type conversions (prepared when it has values). */
export function query<Row = Record<string, unknown>>(
	on: Queryable,
	sqlText: string,
	values: unknown[] = [],
	options: { nestTables?: boolean } = {}
): Promise<Row[]> {
	return run<Row[]>(on, { sql: sqlText, values, typeCast, nestTables: options.nestTables });
}

/** One statement of a batch: constant text with `?` placeholders, and its values. */
export type Statement = { sql: string; values?: unknown[] };

/** A statement as Drizzle SQL, to run it in a Drizzle transaction (its text has no `?` but its placeholders). */
export function asDrizzle(statement: Statement): SQL {
	const parts = statement.sql.split('?');
	const values = statement.values ?? [];
	if (parts.length - 1 !== values.length) throw new Error(`asDrizzle: ${parts.length - 1} placeholders, ${values.length} values`);
	return sql.join(parts.flatMap((part, i) => (i < values.length ? [sql.raw(part), sql`${values[i]}`] : [sql.raw(part)])));
}

/**
 * Several statements in one write on a transaction's connection (transaction() below), run in
 * order; one result per statement (rows, nested by table alias — "" for computed columns — or a
 * write result). MariaDB stops at the first failing statement, and the whole batch fails.
 */
export function batch(connection: Connection, statements: Statement[]): Promise<unknown[]> {
	const options: QueryOptions = {
		sql: statements.map((s) => s.sql).join(';\n'),
		values: statements.flatMap((s) => s.values ?? []),
		typeCast,
		nestTables: true
	};
	return new Promise((resolve, reject) =>
		connection.query(options, (err: Error | null, result: unknown) =>
			err ? reject(err) : resolve(statements.length === 1 ? [result] : (result as unknown[]))
		)
	);
}

/** `table` as a quoted identifier. */
export function tableName(table: Table): string {
	return `\`${getTableName(table)}\``;
}

/** `column` as a quoted identifier, optionally qualified by a table alias. */
export function name(column: Column, alias?: string): string {
	return (alias ? `\`${alias}\`.` : '') + `\`${columnName(column)}\``;
}

/** Per table: [property, column, column name] for every column, worked out once. */
const layouts = new WeakMap<Table, [string, Column, string][]>();
function layoutOf(table: Table) {
	let layout = layouts.get(table);
	if (!layout) {
		layout = Object.entries(getTableColumns(table)).map(([key, column]) => [key, column, columnName(column)]);
		layouts.set(table, layout);
	}
	return layout;
}

/** Every column of a table for a SELECT list, optionally qualified by an alias: "`s`.`id`, …". */
export function selectList(table: Table, alias?: string): string {
	return layoutOf(table)
		.map(([, column]) => name(column, alias))
		.join(', ');
}

/** A raw row (keyed by column name) as the table's typed row, converted as Drizzle would. */
export function rowOf<T extends Table>(table: T, raw: Record<string, unknown>): InferSelectModel<T> {
	const out: Record<string, unknown> = {};
	for (const [key, column, dbName] of layoutOf(table)) {
		const value = raw[dbName];
		out[key] = value === null || value === undefined ? null : column.mapFromDriverValue(value);
	}
	return out as InferSelectModel<T>;
}

/** The columns given in `values` (undefined ones left out), their property keys and their values converted by the columns. */
export function insertColumns<T extends Table>(table: T, values: InferInsertModel<T>): { keys: string[]; names: string[]; params: unknown[] } {
	const keys: string[] = [];
	const names: string[] = [];
	const params: unknown[] = [];
	const given = values as Record<string, unknown>;
	for (const [key, column, dbName] of layoutOf(table)) {
		const value = given[key];
		if (value === undefined) continue;
		keys.push(key);
		names.push(`\`${dbName}\``);
		params.push(value === null ? null : column.mapToDriverValue(value));
	}
	return { keys, names, params };
}

/**
 * The row an INSERT of `values` stored, without reading it back: every column of the table from
 * `values`, null where not given. Only for inserts that give every column with a default (a
 * column left to the database's default would be unknown here): it throws otherwise, so a
 * default added to the schema later is caught by the first test that takes this path.
 */
export function insertedRow<T extends Table>(table: T, values: InferInsertModel<T>): InferSelectModel<T> {
	const out: Record<string, unknown> = {};
	const given = values as Record<string, unknown>;
	for (const [key, column] of layoutOf(table)) {
		const value = given[key];
		if (value === undefined && (column.hasDefault || column.onUpdateFn))
			throw new Error(`insertedRow(${getTableName(table)}): ${key} has a database default; give it a value`);
		out[key] = value ?? null;
	}
	return out as InferSelectModel<T>;
}

function connect(): Promise<Connection> {
	return new Promise((resolve, reject) =>
		transactionPool().pool.getConnection((err, connection) => (err ? reject(err) : resolve(connection)))
	);
}

/** The COMMIT a transaction's work may send as the last statement of its last batch. */
export type Commit = () => Statement;

/**
 * Run `work` in a transaction on a connection of the transaction pool: committed when it
 * returns, rolled back when it throws (and the error passed on); the connection goes back to the
 * pool either way. The connections have autocommit off (client.ts), so `work`'s first statement
 * opens the transaction: no START TRANSACTION round trip.
 *
 * `work` may end its last batch with `commit()`, so the locks go with that batch's answer rather
 * than a round trip later. Should a statement before it fail, MariaDB stops there: the COMMIT is
 * not run, and the transaction is rolled back here.
 */
export async function transaction<T>(work: (connection: Connection, commit: Commit) => Promise<T>): Promise<T> {
	const connection = await connect();
	// A connection whose ROLLBACK or COMMIT failed is in an unknown state: closed, not pooled.
	let usable = true;
	let committedByWork = false;
	const commit: Commit = () => {
		committedByWork = true;
		return { sql: 'COMMIT' };
	};
	try {
		let result: T;
		try {
			result = await work(connection, commit);
		} catch (err) {
			await batch(connection, [{ sql: 'ROLLBACK' }]).catch(() => (usable = false));
			throw err;
		}
		if (!committedByWork) {
			try {
				await batch(connection, [{ sql: 'COMMIT' }]);
			} catch (err) {
				usable = false;
				throw err;
			}
		}
		return result;
	} finally {
		if (usable) connection.release();
		else connection.destroy();
	}
}
