// The built app (adapter-node's build/, made by `npm test` before vitest runs) served on a free
// port against a scratch database with the demo lab seeded, and a mail sink in this process
// whose behaviour a test can switch (accept, refuse, hang). For integration tests that must see
// what a client sees: HTTP status codes, cookies, headers.
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync } from 'node:fs';
import { createServer, type AddressInfo } from 'node:net';
import path from 'node:path';
import { SMTPServer } from 'smtp-server';
import { DEMO_PASSWORD, DEMO_USERS } from '../../scripts/lib/demo-users.mjs';
import { seedDemo } from '../../src/lib/server/db/seed';
import { scratchDatabase } from './db';

const BUILD = path.resolve(process.env.E2E_BUILD_DIR ?? 'build');

export type MailMode = 'accept' | 'refuse' | 'hang';
export type ReceivedMail = { to: string[]; raw: string };

async function freePort() {
	const server = createServer();
	await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
	const { port } = server.address() as AddressInfo;
	await new Promise((resolve) => server.close(resolve));
	return port;
}

/** An SMTP sink on loopback; `mode` decides what it does with the next message. */
async function startMailSink() {
	const received: ReceivedMail[] = [];
	const state = { mode: 'accept' as MailMode };
	const server = new SMTPServer({
		authOptional: true,
		disabledCommands: ['STARTTLS', 'AUTH'],
		onData(stream, session, callback) {
			const chunks: Buffer[] = [];
			stream.on('data', (c: Buffer) => chunks.push(c));
			stream.on('end', () => {
				// A hung server never answers the message; the client's timeout has to give up.
				if (state.mode === 'hang') return;
				if (state.mode === 'refuse') return callback(Object.assign(new Error('mailbox unavailable'), { responseCode: 451 }));
				received.push({ to: session.envelope.rcptTo.map((r) => r.address), raw: Buffer.concat(chunks).toString('utf8') });
				callback();
			});
		}
	});
	const port = await freePort();
	await new Promise<void>((resolve) => server.listen(port, '127.0.0.1', resolve));
	return { port, received, state, close: () => new Promise<void>((resolve) => server.close(() => resolve())) };
}

async function waitForHealth(base: string, child: ChildProcess, output: () => string) {
	const deadline = Date.now() + 60_000;
	while (Date.now() < deadline) {
		if (child.exitCode !== null) throw new Error(`the built app exited (${child.exitCode}):\n${output()}`);
		try {
			if ((await fetch(`${base}/api/v1/health`)).ok) return;
		} catch {
			// not listening yet
		}
		await new Promise((r) => setTimeout(r, 200));
	}
	throw new Error(`the built app did not answer at ${base} within 60 s:\n${output()}`);
}

/** Serve the built app on a scratch database with the demo lab; stop() removes both. */
export async function startBuiltApp() {
	if (!existsSync(path.join(BUILD, 'index.js'))) throw new Error(`no built app in ${BUILD}: run \`npm test\` (it builds first) or \`npx vite build\`.`);
	const scratch = await scratchDatabase();
	await seedDemo(scratch.db);
	const mail = await startMailSink();
	const port = await freePort();
	const base = `http://127.0.0.1:${port}`;
	let log = '';
	const child = spawn(process.execPath, [BUILD], {
		env: {
			...process.env,
			DATABASE_URL: scratch.url,
			HOST: '127.0.0.1',
			PORT: String(port),
			ORIGIN: base,
			PUBLIC_BASE_URL: base,
			AUTH_SECRET: 'integration-test-secret-integration-test-secret',
			AUTH_TRUST_HOST: 'true',
			SMTP_URL: `smtp://127.0.0.1:${mail.port}`,
			BODY_SIZE_LIMIT: '64M'
		},
		stdio: ['ignore', 'pipe', 'pipe']
	});
	child.stdout!.on('data', (c) => (log += c));
	child.stderr!.on('data', (c) => (log += c));
	await waitForHealth(base, child, () => log);
	return {
		base,
		db: scratch.db,
		pool: scratch.pool,
		mail,
		log: () => log,
		async stop() {
			// Killed outright: a graceful stop would wait for idle keep-alive connections.
			const exited = new Promise((r) => (child.exitCode !== null ? r(null) : child.once('exit', r)));
			child.kill('SIGKILL');
			await exited;
			await mail.close();
			await scratch.drop();
		}
	};
}

export type BuiltApp = Awaited<ReturnType<typeof startBuiltApp>>;

export function demoEmail(role: string) {
	const user = DEMO_USERS.find((u) => u.role === role);
	if (!user) throw new Error(`no demo user with role ${role}`);
	return user.email;
}

/** The Set-Cookie headers of a response as one Cookie header (name=value pairs). */
export function cookieHeaderOf(response: Response) {
	return response.headers
		.getSetCookie()
		.map((c) => c.split(';')[0])
		.filter((pair) => !pair.endsWith('='))
		.join('; ');
}

/** Submit the sign-in form as a browser would (same-origin, no JavaScript). */
export function postSignIn(app: BuiltApp, email: string, password: string, next = '') {
	return fetch(`${app.base}/signin?${next ? `next=${encodeURIComponent(next)}&` : ''}/signIn`, {
		method: 'POST',
		headers: { origin: app.base, accept: 'text/html', 'content-type': 'application/x-www-form-urlencoded' },
		body: new URLSearchParams({ email, password }),
		redirect: 'manual'
	});
}

/** Sign a demo user in; returns the Cookie header that carries the session. */
export async function signInCookie(app: BuiltApp, role: string, password = DEMO_PASSWORD) {
	const response = await postSignIn(app, demoEmail(role), password);
	if (response.status !== 303) throw new Error(`sign-in as ${role} answered ${response.status}: ${await response.text()}`);
	const cookie = cookieHeaderOf(response);
	if (!cookie.includes('authjs.session-token')) throw new Error(`sign-in as ${role} set no session cookie`);
	return cookie;
}

/** A bearer token for a demo user (through POST /api/v1/tokens). */
export async function bearerFor(app: BuiltApp, role: string) {
	const response = await fetch(`${app.base}/api/v1/tokens`, {
		method: 'POST',
		headers: { 'content-type': 'application/json' },
		body: JSON.stringify({ email: demoEmail(role), password: DEMO_PASSWORD, name: `tests ${role}` })
	});
	if (response.status !== 201) throw new Error(`token for ${role} answered ${response.status}`);
	return ((await response.json()) as { token: string }).token;
}

export { DEMO_PASSWORD };
