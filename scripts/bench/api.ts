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
import http from 'node:http';
import { existsSync, readdirSync, readFileSync, statSync } from 'node:fs';
import { availableParallelism, cpus, loadavg } from 'node:os';
import path from 'node:path';
import { performance } from 'node:perf_hooks';
import { build } from '../lib/bootstrap.mjs';
import { ensureDatabase, ensureServer, privateServer } from '../lib/db.mjs';
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
	// SHOTWRIGHT_BENCH_NODE_ARGS passes flags to the server's node, e.g. "--cpu-prof" for a profile.
	const nodeArgs = (process.env.SHOTWRIGHT_BENCH_NODE_ARGS ?? '').split(/\s+/).filter(Boolean);
	const child = spawn(process.execPath, [...nodeArgs, 'build'], {
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

/** One POST on a kept-alive connection of `agent`; resolves with the status (0 on a network error or timeout). */
function post(agent: http.Agent, url: URL, headers: Record<string, string>, body: string): Promise<number> {
	return new Promise((resolve) => {
		const request = http.request(
			url,
			{ method: 'POST', agent, headers: { ...headers, 'content-length': Buffer.byteLength(body) }, timeout: REQUEST_TIMEOUT_MS },
			(response) => {
				response.resume();
				response.once('end', () => resolve(response.statusCode ?? 0));
				response.once('error', () => resolve(0));
			}
		);
		request.once('timeout', () => request.destroy(new Error('timeout')));
		request.once('error', () => resolve(0));
		request.end(body);
	});
}

/**
 * `clients` closed-loop clients posting shots until `until` (performance.now() ms) or the shot
 * bound. Node's own http client with one kept-alive connection per client, as a tablet holds:
 * the load generator shares the machine's two cores with the app and MariaDB, and fetch() cost
 * about twice its CPU per request.
 */
async function load(token: string, sessionId: number, clients: number, until: number, counter: { sent: number }) {
	const url = new URL(`${ORIGIN}/api/v1/sessions/${sessionId}/shots`);
	const headers = { 'content-type': 'application/json', accept: 'application/json', authorization: `Bearer ${token}` };
	const agent = new http.Agent({ keepAlive: true, maxSockets: clients });
	const samples: Sample[] = [];
	const client = async () => {
		while (performance.now() < until && counter.sent < MAX_SHOTS) {
			const body = JSON.stringify(shotBody(counter.sent++));
			const started = performance.now();
			const status = await post(agent, url, headers, body);
			samples.push({ ms: performance.now() - started, status });
		}
	};
	try {
		await Promise.all(Array.from({ length: clients }, client));
	} finally {
		agent.destroy();
	}
	return samples;
}

function percentile(sorted: number[], p: number) {
	if (sorted.length === 0) return NaN;
	const rank = Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1));
	return sorted[rank];
}

/** CPU seconds (user + system) a process has used so far, from /proc (Linux); null elsewhere. */
function cpuSecondsOf(pid: number | undefined): number | null {
	if (!pid) return null;
	try {
		// Fields after the command name (which may hold spaces) start at field 3; utime and stime are 14 and 15.
		const fields = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1].split(' ');
		return (Number(fields[11]) + Number(fields[12])) / 100; // USER_HZ is 100 on Linux
	} catch {
		return null;
	}
}

function mariadbPid(): number | undefined {
	try {
		return Number(readFileSync(privateServer().pidFile, 'utf8').trim()) || undefined;
	} catch {
		return undefined;
	}
}

/** Busy and total CPU seconds of the whole machine (all cores), from /proc/stat; null elsewhere. */
function machineCpu(): { busy: number; total: number } | null {
	try {
		const [, ...ticks] = readFileSync('/proc/stat', 'utf8').split('\n')[0].trim().split(/\s+/).map(Number);
		const total = ticks.slice(0, 8).reduce((a, b) => a + b, 0);
		const idle = ticks[3] + ticks[4]; // idle + iowait
		return { busy: (total - idle) / 100, total: total / 100 };
	} catch {
		return null;
	}
}

/**
 * CPU used by the app, MariaDB and this load generator over a pass, and the whole machine's busy
 * share: where the two cores went (the rest of "busy" is the kernel's network stack and other
 * programs).
 */
type CpuUse = { app: number | null; mariadb: number | null; loadGenerator: number; machine: { busy: number; total: number } | null };

function cpuSnapshot(appPid: number | undefined): CpuUse {
	const own = process.cpuUsage();
	return { app: cpuSecondsOf(appPid), mariadb: cpuSecondsOf(mariadbPid()), loadGenerator: (own.user + own.system) / 1e6, machine: machineCpu() };
}

function cpuBetween(a: CpuUse, b: CpuUse): CpuUse {
	const diff = (x: number | null, y: number | null) => (x === null || y === null ? null : y - x);
	return {
		app: diff(a.app, b.app),
		mariadb: diff(a.mariadb, b.mariadb),
		loadGenerator: b.loadGenerator - a.loadGenerator,
		machine: a.machine && b.machine ? { busy: b.machine.busy - a.machine.busy, total: b.machine.total - a.machine.total } : null
	};
}

type Pass = { clients: number; seconds: number; stored: number; failed: number; latencies: number[]; cpu: CpuUse };

async function measure(
	token: string,
	sessionId: number,
	clients: number,
	runMs: number,
	counter: { sent: number },
	appPid: number | undefined
): Promise<Pass> {
	step(`Measuring: ${clients} client${clients === 1 ? '' : 's'} posting shots for ${runMs / 1000} s…`);
	const cpuBefore = cpuSnapshot(appPid);
	const started = performance.now();
	const samples = await load(token, sessionId, clients, started + runMs, counter);
	const seconds = (performance.now() - started) / 1000;
	const cpu = cpuBetween(cpuBefore, cpuSnapshot(appPid));
	const stored = samples.filter((s) => s.status === 201);
	return {
		clients,
		seconds,
		stored: stored.length,
		failed: samples.length - stored.length,
		latencies: stored.map((s) => s.ms).sort((a, b) => a - b),
		cpu
	};
}

/** CPU milliseconds per stored shot of each process, e.g. "app 2.1 · MariaDB 0.9 · load 0.4". */
function cpuPerShot(p: Pass) {
	const per = (s: number | null) => (s === null || p.stored === 0 ? 'n/a' : ((1000 * s) / p.stored).toFixed(2));
	const machine = p.cpu.machine ? ` · whole machine ${per(p.cpu.machine.busy)} (${((100 * p.cpu.machine.busy) / p.cpu.machine.total).toFixed(0)} % busy)` : '';
	return `app ${per(p.cpu.app)} · MariaDB ${per(p.cpu.mariadb)} · load generator ${per(p.cpu.loadGenerator)}${machine}`;
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
		const single = await measure(token, sessionId, 1, SINGLE_CLIENT_MS, counter, child.pid);
		const main = await measure(token, sessionId, CLIENTS, RUN_MS, counter, child.pid);

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
		console.log(`CPU ms per shot (${CLIENTS} clients): ${cpuPerShot(main)}; one client: ${cpuPerShot(single)}.`);
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
