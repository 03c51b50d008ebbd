// The start, test and database scripts end bad set-ups with one clear message and a non-zero exit,
// never a stack trace (issue: foundation, "Bad input and faults").
import { spawnSync } from 'node:child_process';
import { copyFileSync, cpSync, mkdirSync, mkdtempSync, rmSync, statSync, symlinkSync, utimesSync, writeFileSync } from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

const ROOT = path.resolve(__dirname, '..', '..');

function runScript(script: string, args: string[], env: Record<string, string>, root = ROOT) {
	const result = spawnSync(process.execPath, [path.join(root, 'scripts', script), ...args], {
		cwd: root,
		env: { ...process.env, ...env },
		encoding: 'utf8',
		timeout: 60_000
	});
	return { status: result.status, output: `${result.stdout}${result.stderr}` };
}

function expectNoStackTrace(output: string) {
	expect(output).not.toMatch(/^\s+at .+\(.+:\d+:\d+\)$/m);
}

let busy: net.Server;
let busyPort: number;

beforeAll(async () => {
	// Something that accepts connections and says nothing: neither a MariaDB nor a free port.
	busy = net.createServer((socket) => socket.on('error', () => {}));
	await new Promise<void>((resolve) => busy.listen(0, '127.0.0.1', resolve));
	busyPort = (busy.address() as net.AddressInfo).port;
});
afterAll(() => new Promise<void>((resolve) => busy.close(() => resolve())));

describe('set-up faults end in one clear message', () => {
	it('a malformed DATABASE_URL', () => {
		const { status, output } = runScript('db.mjs', ['start'], { DATABASE_URL: 'not a url' });
		expect(status).toBe(1);
		expect(output).toContain('DATABASE_URL is not a valid URL');
		expect(output).toContain('Fix:');
		expectNoStackTrace(output);
	});

	it('a DATABASE_URL of another kind of database', () => {
		const { status, output } = runScript('db.mjs', ['start'], { DATABASE_URL: 'postgres://u:p@127.0.0.1:5432/x' });
		expect(status).toBe(1);
		expect(output).toContain('DATABASE_URL must start with mysql://');
	});

	it('a server that refuses connections', () => {
		const { status, output } = runScript('db.mjs', ['start'], { DATABASE_URL: 'mysql://u:p@127.0.0.1:1/shotwright' });
		expect(status).toBe(1);
		expect(output).toContain('refuses connections');
		expectNoStackTrace(output);
	});

	it('the app port already taken', () => {
		const { status, output } = runScript('start.mjs', [], { PORT: String(busyPort) });
		expect(status).toBe(1);
		expect(output).toContain(`port ${busyPort} on 127.0.0.1 is already in use`);
		expect(output).toContain('PORT=');
		expectNoStackTrace(output);
	});

	it('the private database port taken by another program', () => {
		// A second checkout (its own .data/, no server of its own) finds the port taken by a stranger.
		const other = mkdtempSync(path.join(os.tmpdir(), 'shotwright-checkout-'));
		cpSync(path.join(ROOT, 'scripts'), path.join(other, 'scripts'), { recursive: true });
		copyFileSync(path.join(ROOT, 'package-lock.json'), path.join(other, 'package-lock.json'));
		// Older than the installed marker, so the copy does not reinstall: a second earlier, as
		// setting it to the marker's own time can round a fraction of a millisecond past it.
		const lockTime = new Date(statSync(path.join(ROOT, 'node_modules', '.package-lock.json')).mtimeMs - 1000);
		utimesSync(path.join(other, 'package-lock.json'), lockTime, lockTime);
		symlinkSync(path.join(ROOT, 'node_modules'), path.join(other, 'node_modules'));
		mkdirSync(path.join(other, '.svelte-kit'));
		writeFileSync(path.join(other, '.svelte-kit', 'tsconfig.json'), '{}');
		const env: Record<string, string> = { SHOTWRIGHT_DB_PORT: String(busyPort) };
		const { status, output } = runScript('db.mjs', ['start'], { ...env, DATABASE_URL: '' }, other);
		rmSync(other, { recursive: true, force: true });
		expect(status).toBe(1);
		expect(output).toContain(`port ${busyPort} on 127.0.0.1 is taken by another program`);
		expect(output).toContain('SHOTWRIGHT_DB_PORT');
		expectNoStackTrace(output);
	});

	it('a port number that is not a port', () => {
		const { status, output } = runScript('start.mjs', [], { PORT: 'eighty' });
		expect(status).toBe(1);
		expect(output).toContain('PORT="eighty" is not a TCP port');
	});
});
