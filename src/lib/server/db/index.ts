// The one database client of the app. Created on first use from DATABASE_URL, so that importing
// a module does not need a database (builds, unit tests).
import { createDatabase, type Database } from './client';

let instance: ReturnType<typeof createDatabase> | undefined;

function connection() {
	if (!instance) {
		const url = process.env.DATABASE_URL;
		if (!url) throw new Error('DATABASE_URL is not set: start the app with `npm start`, or set it.');
		instance = createDatabase(url);
	}
	return instance;
}

/** The Drizzle client (lazy proxy: the pool opens on first query). */
export const db: Database = new Proxy({} as Database, {
	get: (_target, property) => Reflect.get(connection().db, property)
});

export function pool() {
	return connection().pool;
}

export type { Database };
export type Transaction = Parameters<Parameters<Database['transaction']>[0]>[0];
