// Helpers for integration tests: the real MariaDB started by `npm test` (never a mock).
import { randomBytes } from 'node:crypto';
import mysql from 'mysql2/promise';
import { createDatabase } from '../../src/lib/server/db/client';
import { migrateDatabase } from '../../src/lib/server/db/migrate';

export function serverUrl() {
	const url = process.env.SHOTWRIGHT_DB_SERVER_URL;
	if (!url) throw new Error('SHOTWRIGHT_DB_SERVER_URL is not set: run the tests through `npm test`.');
	return url;
}

function withDatabase(database: string) {
	const url = new URL(serverUrl());
	url.pathname = '/' + database;
	return url.toString();
}

/** A new, empty database of its own for one test file; drop() removes it. */
export async function scratchDatabase(migrate = true) {
	const name = `shotwright_scratch_${randomBytes(4).toString('hex')}`;
	const admin = await mysql.createConnection(serverUrl());
	await admin.query(`CREATE DATABASE \`${name}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci`);
	await admin.end();
	const url = withDatabase(name);
	if (migrate) await migrateDatabase(url);
	const { db, pool } = createDatabase(url, 5);
	return {
		name,
		url,
		db,
		pool,
		async drop() {
			await pool.end();
			const c = await mysql.createConnection(serverUrl());
			await c.query(`DROP DATABASE IF EXISTS \`${name}\``);
			await c.end();
		}
	};
}
