import { drizzle } from 'drizzle-orm/mysql2';
import mysql from 'mysql2/promise';
import * as schema from './schema';

export type Database = ReturnType<typeof drizzleFor>;

function drizzleFor(pool: mysql.Pool) {
	return drizzle(pool, { schema, mode: 'default', casing: 'snake_case' });
}

/** A pool and its Drizzle client. Every connection works in UTC, whatever the server's zone. */
export function createDatabase(url: string, connectionLimit = 20) {
	const pool = mysql.createPool({
		uri: url,
		timezone: 'Z',
		connectionLimit,
		supportBigNumbers: true,
		decimalNumbers: true,
		connectTimeout: 5000
	});
	pool.pool.on('connection', (connection) => {
		connection.query("SET time_zone = '+00:00'");
	});
	return { pool, db: drizzleFor(pool) };
}
