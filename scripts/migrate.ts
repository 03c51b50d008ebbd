// npm run db:migrate — apply drizzle/ migrations to DATABASE_URL.
import { migrateDatabase } from '../src/lib/server/db/migrate';

const url = process.env.DATABASE_URL;
if (!url) {
	console.error('✗ DATABASE_URL is not set. Fix: run through `npm start` / `npm test`, or set it.');
	process.exit(1);
}
try {
	await migrateDatabase(url);
	console.log('Migrations applied.');
} catch (err) {
	// Drizzle wraps the server's answer; the cause says what is wrong ("Table … already exists").
	const cause = (err as { cause?: { message?: string } }).cause?.message;
	const query = (err as Error).message.split('\n')[0];
	console.error(`✗ Migration failed: ${cause ?? query}${cause ? `\n  while running: ${query.slice(0, 120)}` : ''}`);
	console.error('  Fix: if this database was made by an older, unreleased schema, drop it (it is rebuilt and reseeded).');
	process.exit(1);
}
