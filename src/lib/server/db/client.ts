import { drizzle } from 'drizzle-orm/mysql2';
import mysql from 'mysql2/promise';
import * as schema from './schema';

export type Database = ReturnType<typeof drizzleFor>;

function drizzleFor(pool: mysql.Pool) {
	return drizzle(pool, { schema, mode: 'default', casing: 'snake_case' });
}

function createPool(url: string, connectionLimit: number, session: string, multipleStatements = false) {
	const pool = mysql.createPool({
		uri: url,
		multipleStatements,
		timezone: 'Z',
		connectionLimit,
		supportBigNumbers: true,
		decimalNumbers: true,
		connectTimeout: 5000
	});
	// Queued before anything else the connection is asked to do.
	pool.pool.on('connection', (connection) => {
		connection.query(session);
	});
	return pool;
}

/** A pool and its Drizzle client. Every connection works in UTC, whatever the server's zone. */
export function createDatabase(url: string, connectionLimit = 20) {
	const pool = createPool(url, connectionLimit, "SET time_zone = '+00:00'");
	return { pool, db: drizzleFor(pool) };
}

/**
 * A pool for db/raw.ts's transaction() alone: autocommit off, so its first statement opens the
 * transaction (no START TRANSACTION round trip), and several statements per request, so a
 * transaction sends its statements in batches (raw.ts says why). Nothing else may use it: a
 * statement outside transaction() would hold its locks.
 */
export function createTransactionPool(url: string, connectionLimit = 20) {
	return createPool(url, connectionLimit, "SET time_zone = '+00:00', autocommit = 0", true);
}
