// npm test: the start bootstrap on a fresh test database, then every test: vitest (unit +
// integration against the real MariaDB) and Playwright (e2e on Debian's chromium, built app).
import { existsSync, readFileSync, rmSync } from 'node:fs';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import { DATA_DIR, ROOT, SetupError, isRoot, main, portInUse, run, step } from './lib/common.mjs';
import { bootstrap, build } from './lib/bootstrap.mjs';

export const TEST_APP_PORT = 4173;
const CHROMIUM = '/usr/bin/chromium';

function ensureChromium() {
	if (existsSync(CHROMIUM)) return;
	const command = 'apt-get update && apt-get install -y chromium';
	if (!isRoot()) throw new SetupError('Debian’s chromium is needed for the browser tests.', `run: sudo sh -c '${command}'`);
	step('Installing Debian’s chromium for the browser tests (apt-get install chromium)…');
	const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
	for (const args of [['update'], ['install', '-y', 'chromium']]) {
		if (spawnSync('apt-get', args, { stdio: 'inherit', env }).status !== 0)
			throw new SetupError(`apt-get ${args.join(' ')} failed.`, `run: ${command}`);
	}
}

function readJson(file) {
	try {
		return JSON.parse(readFileSync(file, 'utf8'));
	} catch {
		return null;
	}
}

await main(async () => {
	if (await portInUse(TEST_APP_PORT))
		throw new SetupError(`port ${TEST_APP_PORT} on 127.0.0.1 is in use; the browser tests serve the app there.`,
			'stop the program that uses it (an earlier test run?) and run npm test again.');
	ensureChromium();
	const env = await bootstrap({ mode: 'test', appPort: TEST_APP_PORT });
	build(env);

	const vitestReport = path.join(DATA_DIR, 'vitest-report.json');
	const playwrightReport = path.join(DATA_DIR, 'playwright-report.json');
	rmSync(vitestReport, { force: true });
	rmSync(playwrightReport, { force: true });

	step('Unit and integration tests (vitest)…');
	const bin = (name) => path.join(ROOT, 'node_modules', '.bin', name);
	const vitest = run(bin('vitest'), ['run', '--reporter=default', '--reporter=json', `--outputFile.json=${vitestReport}`], { env });
	step('Browser tests (Playwright on Debian’s chromium)…');
	const playwright = run(bin('playwright'), ['test'], { env: { ...env, PLAYWRIGHT_JSON_OUTPUT_NAME: playwrightReport } });

	const v = readJson(vitestReport);
	const p = readJson(playwrightReport);
	const passed = (v?.numPassedTests ?? 0) + (p?.stats?.expected ?? 0);
	const failed = (v?.numFailedTests ?? 0) + (p?.stats?.unexpected ?? 0) + (p?.stats?.flaky ?? 0);
	const skipped = (v?.numPendingTests ?? 0) + (v?.numTodoTests ?? 0) + (p?.stats?.skipped ?? 0);
	console.log(`\nvitest: ${v?.numPassedTests ?? 0} passed, ${v?.numFailedTests ?? 0} failed; playwright: ${p?.stats?.expected ?? 0} passed, ${p?.stats?.unexpected ?? 0} failed`);
	console.log(`Tests: ${passed} passed, ${failed} failed${skipped ? `, ${skipped} skipped` : ''}`);
	if (vitest !== 0 || playwright !== 0 || !v || !p || failed > 0 || passed === 0) process.exit(1);
});
