// The bootstrap shared by `npm start`, `npm test` and `npm run dev`: dependencies, MariaDB,
// the mail sink, a database (migrated, with the invented demo lab seeded), and the app's environment.
import { spawnSync } from 'node:child_process';
import { mkdirSync, rmSync } from 'node:fs';
import path from 'node:path';
import { DATA_DIR, ROOT, SetupError, ensureDependencies, localSecret, mustRun, parsePort, step } from './common.mjs';
import { ensureDatabase, ensureServer, parseDatabaseUrl } from './db.mjs';
import { ensureMailSink } from './mail.mjs';

/**
 * @param {{ mode: 'demo' | 'test', appPort: number }} options
 * demo: the database named in DATABASE_URL (default "shotwright"), kept between runs.
 * test: "<name>_test", dropped and created fresh on every run.
 */
export async function bootstrap({ mode, appPort }) {
	ensureDependencies();
	const server = await ensureServer();
	const baseName = process.env.DATABASE_URL ? parseDatabaseUrl(process.env.DATABASE_URL).database : 'shotwright';
	const database = mode === 'test' ? `${baseName}_test` : baseName;
	step(mode === 'test' ? `Creating a fresh test database "${database}"…` : `Using database "${database}"…`);
	const databaseUrl = await ensureDatabase(server, database, { fresh: mode === 'test' });

	const mailDir = path.join(DATA_DIR, 'mail', mode);
	if (mode === 'test') rmSync(mailDir, { recursive: true, force: true });
	mkdirSync(mailDir, { recursive: true });
	const defaultSmtpPort = mode === 'test' ? 2526 : 2525;
	const smtpPort = parsePort(process.env.SHOTWRIGHT_SMTP_PORT, 'SHOTWRIGHT_SMTP_PORT', defaultSmtpPort);
	const smtpUrl = process.env.SMTP_URL ?? (await ensureMailSink(mode === 'test' ? defaultSmtpPort : smtpPort, mailDir));

	const env = {
		...process.env,
		DATABASE_URL: databaseUrl,
		// The server (and scratch databases made by integration tests) without a database chosen.
		SHOTWRIGHT_DB_SERVER_URL: server,
		SMTP_URL: smtpUrl,
		MAIL_DIR: mailDir,
		AUTH_SECRET: process.env.AUTH_SECRET ?? localSecret(`auth-secret-${mode}`),
		AUTH_TRUST_HOST: 'true',
		PORT: String(appPort),
		HOST: process.env.HOST ?? '127.0.0.1',
		PUBLIC_BASE_URL: process.env.PUBLIC_BASE_URL ?? `http://127.0.0.1:${appPort}`,
		// adapter-node compares a form's Origin with this (CSRF check); without it, it assumes https.
		ORIGIN: process.env.ORIGIN ?? process.env.PUBLIC_BASE_URL ?? `http://127.0.0.1:${appPort}`,
		// adapter-node refuses request bodies above 512 kB by default; CSV uploads go up to 25 MB
		// (the import answers larger ones itself, with its own message, up to this cap).
		BODY_SIZE_LIMIT: process.env.BODY_SIZE_LIMIT ?? '64M',
		SHOTWRIGHT_MODE: mode
	};
	step('Applying migrations…');
	mustRun(path.join(ROOT, 'node_modules', '.bin', 'tsx'), ['scripts/migrate.ts'], 'migration', { env });
	step('Seeding the demo lab (skipped when already there)…');
	mustRun(path.join(ROOT, 'node_modules', '.bin', 'tsx'), ['scripts/seed.ts'], 'seeding', { env });
	return env;
}

/** Warnings about third-party packages' own circular imports (printed by adapter-node's bundler). */
const HARMLESS = /^Circular dependency: node_modules\/|^Generated an empty chunk/;

export function build(env) {
	step('Building the app…');
	const result = spawnSync(path.join(ROOT, 'node_modules', '.bin', 'vite'), ['build', '--logLevel', 'warn'], {
		cwd: ROOT,
		env,
		encoding: 'utf8',
		maxBuffer: 64 * 1024 * 1024
	});
	const output = `${result.stdout ?? ''}${result.stderr ?? ''}`
		.split('\n')
		.filter((line) => line.trim() && !HARMLESS.test(line.trim()))
		.join('\n');
	if (output) console.log(output);
	if (result.status !== 0) throw new SetupError(`vite build failed (exit code ${result.status}); see the output above.`);
}
