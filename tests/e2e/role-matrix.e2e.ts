// Every page, form action and API route of the tree × each role and anonymous, against the built
// app: allowed, or refused as designed (redirect to sign-in, 401, 403). The table of who may do
// what is tests/support/route-access.ts; a route missing from it fails the first test here.
import { expect, test } from '@playwright/test';
import type { Role } from '../../src/lib/roles';
import { ROLE_ORDER } from '../../src/lib/roles';
import { buildRouteChecks, expectedOutcome, IDENTITIES, identityName, type Outcome, type RouteCheck } from '../support/route-checks';
import { signIn } from './support';

const { checks, problems } = buildRouteChecks();
const routes = [...new Set(checks.map((c) => c.routeId))];

type StorageState = Awaited<ReturnType<import('@playwright/test').BrowserContext['storageState']>>;

test.describe('role × route matrix', () => {
	const signedIn = new Map<Role, StorageState>();

	async function signInAs(browser: import('@playwright/test').Browser, role: Role) {
		const context = await browser.newContext();
		await signIn(await context.newPage(), role);
		signedIn.set(role, await context.storageState());
		await context.close();
	}

	test.beforeAll(async ({ browser }) => {
		// One sign-in through the form per role; every request of that role reuses its cookies.
		for (const role of ROLE_ORDER) await signInAs(browser, role);
	});

	test('every page, action and endpoint in src/routes has an entry in the access table', () => {
		expect(problems, problems.join('\n')).toEqual([]);
	});

	for (const routeId of routes) {
		test(`${routeId}`, async ({ playwright, baseURL, browser }) => {
			const mismatches: string[] = [];
			for (const role of IDENTITIES) {
				// A fresh client per identity and route: a sign-out or a cookie refresh stays local.
				const client = await playwright.request.newContext({
					baseURL,
					storageState: role ? signedIn.get(role) : undefined,
					// SvelteKit's CSRF check wants a same-origin Origin on form posts, as a browser sends.
					extraHTTPHeaders: { origin: baseURL! }
				});
				for (const check of checks.filter((c) => c.routeId === routeId)) {
					const actual = await outcomeOf(client, check, baseURL!);
					const expected = expectedOutcome(check, role);
					if (actual.outcome !== expected)
						mismatches.push(
							`${identityName(role)} ${check.method} ${check.url} (${check.kind} ${check.name}, needs ${check.access}): expected ${expected}, got ${actual.outcome} (HTTP ${actual.status}${actual.location ? ' → ' + actual.location : ''})`
						);
				}
				await client.dispose();
				// Signing out ends every session of the user (server-side), so sign that role in anew.
				if (role && routeId === '/signout') await signInAs(browser, role);
			}
			expect(mismatches, mismatches.join('\n')).toEqual([]);
		});
	}
});

async function outcomeOf(client: import('@playwright/test').APIRequestContext, check: RouteCheck, baseURL: string) {
	const response = await client.fetch(check.url, {
		method: check.method,
		maxRedirects: 0,
		// Pages and actions as a browser without JavaScript sends them; endpoints as a script does.
		headers: { accept: check.kind === 'endpoint' ? 'application/json' : 'text/html' },
		form: check.kind === 'action' ? {} : undefined,
		data: check.kind === 'endpoint' && check.method !== 'GET' && check.method !== 'HEAD' ? {} : undefined
	});
	const status = response.status();
	const location = response.headers()['location'] ?? '';
	let outcome: Outcome | 'server-error';
	const target = new URL(location || '/', baseURL);
	// The guard's redirect carries ?next= (where to return); sign-out's own redirect to /signin does not.
	if (status >= 300 && status < 400 && target.pathname === '/signin' && target.searchParams.has('next')) outcome = 'redirect-to-signin';
	else if (status === 401) outcome = 'unauthorized';
	else if (status === 403) outcome = 'forbidden';
	else if (status >= 500) outcome = 'server-error';
	else outcome = 'allowed';
	return { outcome, status, location };
}
