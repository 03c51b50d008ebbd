// The one database client of the app. Created on first use from DATABASE_URL, so that importing
// a module does not need a database (builds, unit tests).
import { createDatabase, createTransactionPool, type Database } from './client';

let instance: ReturnType<typeof createDatabase> | undefined;
let transactions: ReturnType<typeof createTransactionPool> | undefined;

function databaseUrl() {
	const url = process.env.DATABASE_URL;
	if (!url) throw new Error('DATABASE_URL is not set: start the app with `npm start`, or set it.');
	return url;
}

function connection() {
	if (!instance) instance = createDatabase(databaseUrl());
	return instance;
}

/** The Drizzle client (lazy proxy: the pool opens on first query). */
export const db: Database = new Proxy({} as Database, {
	get: (_target, property) => Reflect.get(connection().db, property)
});

export function pool() {
	return connection().pool;
}

/** The autocommit-off pool behind db/raw.ts's transaction() (client.ts). */
export function transactionPool() {
	if (!transactions) transactions = createTransactionPool(databaseUrl());
	return transactions;
}

/** Close both pools (tests and scripts that are done with the database). */
export async function closeDatabase() {
	const open = [instance?.pool, transactions];
	instance = undefined;
	transactions = undefined;
	await Promise.all(open.map((p) => p?.end()));
}

export type { Database };
export type Transaction = Parameters<Parameters<Database['transaction']>[0]>[0];
