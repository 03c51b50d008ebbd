// API benchmark (npm run bench:api): shot POSTs to /api/v1/sessions/:id/shots from CLIENTS
// concurrent clients on loopback for RUN_MS, against the built app on a database of its own
// ("shotwright_bench": dropped, migrated and seeded with the demo lab on every run, dropped at
// the end). Prints throughput and latency percentiles as a markdown table for the README.
// Target: p99 < 50 ms on this machine (reported, not enforced).
//
// A 5 s pass with one client comes first, for the service time of one request without queueing.
//
// Self-contained: starts Shotwright's MariaDB if it is not running, builds the app when build/
// is missing or older than src/ (or with --build), serves it with `node build` on 127.0.0.1:BENCH_PORT and stops it
// afterwards. Each client sends one shot at a time and waits for the answer (closed loop), so the
// figures are per-request latencies under CLIENTS-way concurrency, all on one session: the case
// of several tablets on one firing line, where the session row lock serialises the sequence
// numbers.

import { spawn, type ChildProcess } from 'node:child_process';
import { randomUUID } from 'node:crypto';
import { existsSync, readdirSync, statSync } from 'node:fs';
import { availableParallelism, cpus, loadavg } from 'node:os';
import path from 'node:path';
import { performance } from 'node:perf_hooks';
import { build } from '../lib/bootstrap.mjs';
import { ensureDatabase, ensureServer } from '../lib/db.mjs';
import { localSecret, main, portInUse, ROOT, SetupError, step } from '../lib/common.mjs';
import { DEMO_PASSWORD, DEMO_USERS } from '../lib/demo-users.mjs';
import { createDatabase } from '../../src/lib/server/db/client.ts';
import { migrateDatabase } from '../../src/lib/server/db/migrate.ts';
import { seedDemo } from '../../src/lib/server/db/seed.ts';

const CLIENTS = 20;
const RUN_MS = 20_000;
/** The single-client pass before it (service time without queueing). */
const SINGLE_CLIENT_MS = 5_000;
/** Requests before the measurement (JIT, connection pools, InnoDB buffer pool), not counted. */
const WARM_UP_MS = 2_000;
/** Upper bound on shots per run, whatever the speed: the run ends at RUN_MS or here. */
const MAX_SHOTS = 200_000;
const TARGET_P99_MS = 50;
const BENCH_DATABASE = 'shotwright_bench';
/** Not 4190: that is ManageSieve, one of the ports fetch() refuses to call (Fetch standard, "bad port"). */
const BENCH_PORT = Number(process.env.SHOTWRIGHT_BENCH_PORT ?? 4191);
const HOST = '127.0.0.1';
const ORIGIN = `http://${HOST}:${BENCH_PORT}`;
const SERVER_START_TIMEOUT_MS = 60_000;
const REQUEST_TIMEOUT_MS = 10_000;

type Sample = { ms: number; status: number };

/** Thrown rather than exiting, so a started server is still stopped on the way out. */
function fail(message: string, fix?: string): never {
	throw new SetupError(message, fix);
}

async function prepareDatabase(): Promise<string> {
	const server = await ensureServer();
	step(`Creating a fresh database "${BENCH_DATABASE}" (migrated, demo lab seeded)…`);
	const url: string = await ensureDatabase(server, BENCH_DATABASE, { fresh: true });
	await migrateDatabase(url);
	const { db, pool } = createDatabase(url, 2);
	try {
		await seedDemo(db);
	} finally {
		await pool.end();
	}
	return url;
}

async function dropDatabase() {
	const server = await ensureServer();
	const { default: mysql } = await import('mysql2/promise');
	const c = await mysql.createConnection(server);
	await c.query(`DROP DATABASE IF EXISTS \`${BENCH_DATABASE}\``);
	await c.end();
}

/** Newest modification time under a folder, ms. */
function newestIn(dir: string): number {
	let newest = 0;
	for (const entry of readdirSync(dir, { withFileTypes: true })) {
		const full = path.join(dir, entry.name);
		newest = Math.max(newest, entry.isDirectory() ? newestIn(full) : statSync(full).mtimeMs);
	}
	return newest;
}

/** Build when build/ is missing, older than src/ (it would measure old code), or on --build. */
function ensureBuild(force: boolean) {
	const entry = path.join(ROOT, 'build', 'index.js');
	const builtAt = existsSync(entry) ? statSync(entry).mtimeMs : 0;
	const stale = builtAt > 0 && newestIn(path.join(ROOT, 'src')) > builtAt;
	if (builtAt > 0 && !stale && !force) {
		step(`Using the existing build/ (built ${new Date(builtAt).toISOString()}; pass --build to rebuild).`);
		return;
	}
	if (stale) step('src/ changed since the last build.');
	build(process.env);
}

async function startServer(databaseUrl: string): Promise<{ child: ChildProcess; log: () => string }> {
	if (await portInUse(BENCH_PORT))
		fail(`port ${BENCH_PORT} on ${HOST} is in use.`, 'stop the program that uses it, or choose another port with SHOTWRIGHT_BENCH_PORT=<port>.');
	step(`Starting the app on ${ORIGIN}…`);
	let output = '';
	const child = spawn(process.execPath, ['build'], {
		cwd: ROOT,
		env: {
			...process.env,
			DATABASE_URL: databaseUrl,
			AUTH_SECRET: localSecret('auth-secret-bench'),
			AUTH_TRUST_HOST: 'true',
			ORIGIN,
			PUBLIC_BASE_URL: ORIGIN,
			PORT: String(BENCH_PORT),
			HOST,
			NODE_ENV: 'production'
		},
		stdio: ['ignore', 'pipe', 'pipe']
	});
	const keep = (chunk: Buffer) => {
		output = (output + chunk.toString()).slice(-20_000);
	};
	child.stdout!.on('data', keep);
	child.stderr!.on('data', keep);
	const deadline = Date.now() + SERVER_START_TIMEOUT_MS;
	while (Date.now() < deadline) {
		if (child.exitCode !== null) fail(`the app exited with code ${child.exitCode} while starting:\n${output}`);
		try {
			const r = await fetch(`${ORIGIN}/api/v1/health`);
			if (r.ok) return { child, log: () => output };
		} catch {
			// Not listening yet.
		}
		await new Promise((resolve) => setTimeout(resolve, 250));
	}
	child.kill('SIGTERM');
	fail(`the app did not answer ${ORIGIN}/api/v1/health within ${SERVER_START_TIMEOUT_MS / 1000} s:\n${output}`);
}

async function stopServer(child: ChildProcess) {
	if (child.exitCode !== null) return;
	const exited = new Promise((resolve) => child.once('exit', resolve));
	child.kill('SIGTERM');
	const timer = setTimeout(() => child.kill('SIGKILL'), 5_000);
	await exited;
	clearTimeout(timer);
}

async function call(method: string, url: string, token: string | null, body?: unknown) {
	const r = await fetch(`${ORIGIN}${url}`, {
		method,
		headers: { 'content-type': 'application/json', accept: 'application/json', ...(token ? { authorization: `Bearer ${token}` } : {}) },
		body: body === undefined ? undefined : JSON.stringify(body),
		signal: AbortSignal.timeout(REQUEST_TIMEOUT_MS)
	});
	const text = await r.text();
	if (!r.ok) fail(`${method} ${url} answered ${r.status}: ${text}`);
	return JSON.parse(text);
}

/** A range officer's token and a fresh open session on the demo's H1 rig. */
async function prepareSession() {
	const officer = DEMO_USERS.find((u) => u.role === 'range_officer')!;
	const { token } = await call('POST', '/api/v1/tokens', null, { email: officer.email, password: DEMO_PASSWORD, name: 'bench:api' });
	const rigs = await call('GET', '/api/v1/rigs?q=H1', token);
	const projectiles = await call('GET', '/api/v1/projectiles?q=Ice%20ball%2025', token);
	if (!rigs.rows[0] || !projectiles.rows[0]) fail('the demo rig "H1" or projectile "Ice ball 25 mm" is missing from the seed.');
	const session = await call('POST', '/api/v1/sessions', token, {
		title: `bench:api ${new Date().toISOString()}`,
		rigId: rigs.rows[0].id,
		projectileId: projectiles.rows[0].id,
		startedAt: new Date().toISOString(),
		targetDistanceM: 5,
		elevationDeg: 0.9,
		launchHeightM: 1.2,
		aimHeightM: 1.2,
		downrangeChronoM: 4.5,
		temperatureC: 12,
		pressurePa: 101_325,
		relativeHumidity: 0.6
	});
	return { token: token as string, sessionId: session.id as number };
}

function shotBody(i: number) {
	// A plausible H1 shot around 2.2 bar (the nominal model says ≈ 98 m/s); the values vary so
	// the predictions are not all alike.
	return {
		clientUuid: randomUUID(),
		fillGaugePa: 220_000 + (i % 17) * 500,
		muzzleSpeedMps: 97.5 + (i % 11) * 0.1,
		downrangeSpeedMps: 95.8 + (i % 7) * 0.1,
		impactXM: ((i % 13) - 6) * 0.001,
		impactYM: ((i % 9) - 4) * 0.001,
		miss: false
	};
}

/** `clients` closed-loop clients posting shots until `until` (performance.now() ms) or the shot bound. */
async function load(token: string, sessionId: number, clients: number, until: number, counter: { sent: number }) {
	const url = `${ORIGIN}/api/v1/sessions/${sessionId}/shots`;
	const headers = { 'content-type': 'application/json', accept: 'application/json', authorization: `Bearer ${token}` };
	const samples: Sample[] = [];
	const client = async () => {
		while (performance.now() < until && counter.sent < MAX_SHOTS) {
			const body = JSON.stringify(shotBody(counter.sent++));
			const started = performance.now();
			let status = 0;
			try {
				const r = await fetch(url, { method: 'POST', headers, body, signal: AbortSignal.timeout(REQUEST_TIMEOUT_MS) });
				await r.arrayBuffer();
				status = r.status;
			} catch {
				status = 0;
			}
			samples.push({ ms: performance.now() - started, status });
		}
	};
	await Promise.all(Array.from({ length: clients }, client));
	return samples;
}

function percentile(sorted: number[], p: number) {
	if (sorted.length === 0) return NaN;
	const rank = Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1));
	return sorted[rank];
}

type Pass = { clients: number; seconds: number; stored: number; failed: number; latencies: number[] };

async function measure(token: string, sessionId: number, clients: number, runMs: number, counter: { sent: number }): Promise<Pass> {
	step(`Measuring: ${clients} client${clients === 1 ? '' : 's'} posting shots for ${runMs / 1000} s…`);
	const started = performance.now();
	const samples = await load(token, sessionId, clients, started + runMs, counter);
	const seconds = (performance.now() - started) / 1000;
	const stored = samples.filter((s) => s.status === 201);
	return { clients, seconds, stored: stored.length, failed: samples.length - stored.length, latencies: stored.map((s) => s.ms).sort((a, b) => a - b) };
}

function row(p: Pass) {
	const ms = (v: number) => `${v.toFixed(1)} ms`;
	const l = p.latencies;
	return `| ${p.clients} | ${p.seconds.toFixed(1)} s | ${p.stored} | ${(p.stored / p.seconds).toFixed(0)} shots/s | ${ms(percentile(l, 50))} | ${ms(percentile(l, 95))} | ${ms(percentile(l, 99))} | ${ms(l.at(-1) ?? NaN)} | ${p.failed} |`;
}

async function bench() {
	const force = process.argv.includes('--build');
	const databaseUrl = await prepareDatabase();
	ensureBuild(force);
	const { child, log } = await startServer(databaseUrl);
	const stop = async () => {
		await stopServer(child);
		await dropDatabase();
	};
	process.once('SIGINT', () => void stop().then(() => process.exit(130)));
	try {
		const { token, sessionId } = await prepareSession();
		const counter = { sent: 0 };
		step(`Warming up for ${WARM_UP_MS / 1000} s…`);
		const warmUp = await load(token, sessionId, CLIENTS, performance.now() + WARM_UP_MS, counter);
		// One client alone first: the time one request takes when nothing queues behind the lock.
		const single = await measure(token, sessionId, 1, SINGLE_CLIENT_MS, counter);
		const main = await measure(token, sessionId, CLIENTS, RUN_MS, counter);

		const stored = await call('GET', `/api/v1/sessions/${sessionId}/shots?pageSize=1`, token);
		const expected = warmUp.filter((s) => s.status === 201).length + single.stored + main.stored;
		const p99 = percentile(main.latencies, 99);

		console.log('');
		console.log('API benchmark: POST /api/v1/sessions/:id/shots, one session, loopback');
		console.log(`Machine: ${cpus()[0]?.model ?? 'unknown CPU'}, ${availableParallelism()} threads, load ${loadavg().map((l) => l.toFixed(2)).join(' ')}; Node ${process.version}`);
		console.log('');
		console.log('| clients | duration | shots stored | throughput | p50 | p95 | p99 | max | errors |');
		console.log('|---:|---:|---:|---:|---:|---:|---:|---:|---:|');
		console.log(row(single));
		console.log(row(main));
		console.log('');
		console.log(`Target p99 < ${TARGET_P99_MS} ms with ${CLIENTS} clients: ${p99 < TARGET_P99_MS ? 'met' : 'NOT met'} (${p99.toFixed(1)} ms).`);
		console.log(
			stored.total === expected
				? `Check: the session holds ${stored.total} shots, one per successful POST (warm-up included).`
				: `Check FAILED: the session holds ${stored.total} shots, but ${expected} POSTs succeeded.`
		);
		const failed = single.failed + main.failed;
		if (failed > 0) console.log(`${failed} requests failed (status other than 201); server log tail:\n${log().slice(-2000)}`);
		if (stored.total !== expected) process.exitCode = 1;
	} finally {
		await stop();
	}
}

await main(bench);
