// Shared helpers for the start/test/db scripts. Built-in modules only: these run before
// `npm ci` has installed anything.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { randomBytes } from 'node:crypto';
import net from 'node:net';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');
export const DATA_DIR = path.join(ROOT, '.data');

/** A failure the user can act on: printed as one message, never as a stack trace. */
export class SetupError extends Error {
	constructor(message, fix) {
		super(message);
		this.fix = fix;
	}
}

export function step(message) {
	console.log(`\x1b[1m›\x1b[0m ${message}`);
}

/** Run a script body; a SetupError (or any error) ends in one clear message and exit code 1. */
export async function main(body) {
	try {
		await body();
	} catch (err) {
		if (err instanceof SetupError) {
			console.error(`\n✗ ${err.message}`);
			if (err.fix) console.error(`  Fix: ${err.fix}`);
		} else {
			console.error(`\n✗ ${err?.message ?? err}`);
		}
		process.exit(1);
	}
}

export function run(cmd, args, options = {}) {
	const result = spawnSync(cmd, args, { stdio: 'inherit', cwd: ROOT, ...options });
	if (result.error) throw new SetupError(`could not run ${cmd}: ${result.error.message}`);
	return result.status ?? 1;
}

export function mustRun(cmd, args, what, options = {}) {
	const status = run(cmd, args, options);
	if (status !== 0) throw new SetupError(`${what} failed (exit code ${status}); see the output above.`);
}

export const isRoot = () => typeof process.getuid === 'function' && process.getuid() === 0;

/** `npm ci` when node_modules is missing or older than package-lock.json. */
export function ensureDependencies() {
	const marker = path.join(ROOT, 'node_modules', '.package-lock.json');
	const lock = path.join(ROOT, 'package-lock.json');
	if (!existsSync(marker) || statSync(marker).mtimeMs < statSync(lock).mtimeMs) {
		step('Installing dependencies (npm ci)…');
		mustRun('npm', ['ci', '--no-audit', '--no-fund'], 'npm ci');
	}
	// Scripts run through tsx resolve $lib with the paths SvelteKit writes into .svelte-kit/.
	if (!existsSync(path.join(ROOT, '.svelte-kit', 'tsconfig.json')))
		mustRun(path.join(ROOT, 'node_modules', '.bin', 'svelte-kit'), ['sync'], 'svelte-kit sync');
}

export function ensureDataDir() {
	mkdirSync(DATA_DIR, { recursive: true });
	return DATA_DIR;
}

/** A secret generated once per checkout and kept under .data/ (demo and test only). */
export function localSecret(name) {
	ensureDataDir();
	const file = path.join(DATA_DIR, name);
	if (existsSync(file)) {
		const value = readFileSync(file, 'utf8').trim();
		if (value.length >= 32) return value;
	}
	const value = randomBytes(32).toString('base64url');
	writeFileSync(file, value + '\n', { mode: 0o600 });
	return value;
}

/** True when something accepts TCP connections on 127.0.0.1:port. */
export function portInUse(port, host = '127.0.0.1') {
	return new Promise((resolve) => {
		const socket = net.connect({ port, host });
		socket.once('connect', () => {
			socket.destroy();
			resolve(true);
		});
		socket.once('error', () => resolve(false));
		socket.setTimeout(1000, () => {
			socket.destroy();
			resolve(false);
		});
	});
}

export const sleep = (ms) => new Promise((r) => setTimeout(r, ms));

export function parsePort(value, name, fallback) {
	if (value === undefined || value === '') return fallback;
	const port = Number(value);
	if (!Number.isInteger(port) || port < 1 || port > 65535)
		throw new SetupError(`${name}="${value}" is not a TCP port.`, `set ${name} to a whole number between 1 and 65535.`);
	return port;
}
