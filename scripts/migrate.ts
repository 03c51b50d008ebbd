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
	console.error(`✗ Migration failed: ${(err as Error).message}`);
	process.exit(1);
}
