// Starts (or reuses) the local SMTP sink for one mode (demo or test).
import { spawn } from 'node:child_process';
import { existsSync, openSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { DATA_DIR, ROOT, SetupError, ensureDataDir, portInUse, sleep, step } from './common.mjs';

function alive(pid) {
	try {
		process.kill(pid, 0);
		return true;
	} catch {
		return false;
	}
}

function isOurSink(pid) {
	try {
		return readFileSync(`/proc/${pid}/cmdline`, 'utf8').includes(path.join(ROOT, 'scripts', 'mail-sink.mjs'));
	} catch {
		return false;
	}
}

/** Make sure a sink listens on 127.0.0.1:port storing into folder; returns the SMTP URL. */
export async function ensureMailSink(port, folder) {
	ensureDataDir();
	const pidFile = path.join(DATA_DIR, `mail-sink-${port}.pid`);
	const pid = existsSync(pidFile) ? Number(readFileSync(pidFile, 'utf8')) : null;
	const ours = pid !== null && alive(pid) && isOurSink(pid);
	if (ours && (await portInUse(port))) return `smtp://127.0.0.1:${port}`;
	if (!ours) rmSync(pidFile, { force: true });
	if (await portInUse(port))
		throw new SetupError(
			`port ${port} on 127.0.0.1 is taken by another program, so the mail sink cannot start.`,
			'stop that program or set SHOTWRIGHT_SMTP_PORT to a free port.'
		);
	step(`Starting the local mail sink on 127.0.0.1:${port} (messages in ${path.relative(ROOT, folder)}/)…`);
	const log = openSync(path.join(DATA_DIR, `mail-sink-${port}.log`), 'a');
	const child = spawn(process.execPath, [path.join(ROOT, 'scripts', 'mail-sink.mjs'), String(port), folder], {
		detached: true,
		stdio: ['ignore', log, log],
		cwd: ROOT
	});
	child.unref();
	writeFileSync(pidFile, String(child.pid));
	for (let i = 0; i < 100; i++) {
		if (await portInUse(port)) return `smtp://127.0.0.1:${port}`;
		if (!alive(child.pid)) break;
		await sleep(100);
	}
	throw new SetupError(`the mail sink did not start on port ${port}; see .data/mail-sink-${port}.log.`);
}

export function stopMailSink(port) {
	const pidFile = path.join(DATA_DIR, `mail-sink-${port}.pid`);
	if (!existsSync(pidFile)) return;
	const pid = Number(readFileSync(pidFile, 'utf8'));
	if (alive(pid) && isOurSink(pid)) process.kill(pid, 'SIGTERM');
	rmSync(pidFile, { force: true });
}
