import { sql } from 'drizzle-orm';
import journal from '../../../drizzle/meta/_journal.json';
import { db } from './db';

type JournalEntry = { idx: number; when: number; tag: string };

/** Database reachability and the migration state, for GET /api/v1/health. */
export async function health() {
	const entries = (journal.entries as JournalEntry[]).slice().sort((a, b) => a.idx - b.idx);
	const expected = entries.at(-1)?.tag ?? null;
	try {
		const [rows] = (await db.execute(
			sql`SELECT created_at AS createdAt FROM __drizzle_migrations ORDER BY created_at DESC LIMIT 1`
		)) as unknown as [{ createdAt: number | string }[]];
		const appliedWhen = rows[0] ? Number(rows[0].createdAt) : null;
		const applied = entries.find((e) => e.when === appliedWhen)?.tag ?? null;
		return {
			ok: applied !== null && applied === expected,
			database: 'reachable' as const,
			migration: { applied, expected, pending: applied !== expected }
		};
	} catch (err) {
		const code = (err as { code?: string }).code;
		const reason = code === 'ER_NO_SUCH_TABLE' ? 'no migration applied yet (run npm run db:migrate)' : 'database unreachable';
		return { ok: false, database: reason, migration: { applied: null, expected, pending: true } };
	}
}
