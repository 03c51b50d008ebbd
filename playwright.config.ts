import { defineConfig, devices } from '@playwright/test';

// Browser tests run against the built app (adapter-node) on the test database, in Debian's chromium.
// npm test prepares the environment (DATABASE_URL, SMTP_URL, AUTH_SECRET, …) and builds first.
// E2E_PORT lets a developer run one spec beside a full `npm test` (which uses 4173).
const PORT = Number(process.env.E2E_PORT ?? 4173);

export default defineConfig({
	testDir: 'tests/e2e',
	testMatch: '**/*.e2e.ts',
	fullyParallel: false,
	workers: 1,
	retries: 0,
	timeout: 60_000,
	reporter: [['list'], ['json']],
	use: {
		baseURL: `http://127.0.0.1:${PORT}`,
		trace: 'retain-on-failure',
		launchOptions: {
			executablePath: '/usr/bin/chromium',
			args: [
				'--no-sandbox',
				'--disable-gpu',
				'--disable-background-networking',
				'--disable-component-update',
				'--no-first-run',
				'--disable-sync',
				'--disable-quic'
			]
		}
	},
	projects: [{ name: 'chromium', use: { ...devices['Desktop Chrome'], channel: undefined } }],
	webServer: {
		command: `node ${process.env.E2E_BUILD_DIR ?? 'build'}`,
		url: `http://127.0.0.1:${PORT}/api/v1/health`,
		reuseExistingServer: false,
		timeout: 60_000,
		env: { ...(process.env as Record<string, string>), PORT: String(PORT), HOST: '127.0.0.1' }
	}
});
