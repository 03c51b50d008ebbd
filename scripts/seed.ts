// npm run db:seed — seed the invented demo lab into DATABASE_URL (skipped when users exist).
import { createDatabase } from '../src/lib/server/db/client';
import { seedDemo } from '../src/lib/server/db/seed';

const url = process.env.DATABASE_URL;
if (!url) {
	console.error('✗ DATABASE_URL is not set. Fix: run through `npm start` / `npm test`, or set it.');
	process.exit(1);
}
const { db, pool } = createDatabase(url, 2);
try {
	const seeded = await seedDemo(db);
	console.log(seeded ? 'Demo lab seeded.' : 'Demo lab already present; left as it is.');
} catch (err) {
	console.error(`✗ Seeding failed: ${(err as Error).message}`);
	process.exitCode = 1;
} finally {
	await pool.end();
}
