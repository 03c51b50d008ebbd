// Each load, action and endpoint refuses a caller without the role by itself — called directly,
// without the hook's guard by route group in front (src/lib/server/request-guard.ts). Same table
// as the e2e role matrix (tests/support/route-access.ts). No database: a refusal must come
// before any query, so DATABASE_URL is unset here and a handler that queries first fails loudly.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { isHttpError, isRedirect } from '@sveltejs/kit';
import type { Role } from '../../src/lib/roles';
import { buildRouteChecks, expectedOutcome, IDENTITIES, identityName, type RouteCheck } from '../support/route-checks';

const modules = import.meta.glob('/src/routes/**/+{page.server,server}.ts');
const { checks } = buildRouteChecks();
const refusals = checks.flatMap((check) =>
	IDENTITIES.map((role) => ({ check, role, expected: expectedOutcome(check, role) })).filter((c) => c.expected !== 'allowed')
);

const savedUrl = process.env.DATABASE_URL;
beforeAll(() => {
	process.env.DATABASE_URL = '';
});
afterAll(() => {
	process.env.DATABASE_URL = savedUrl;
});

/** A request event as SvelteKit would pass it, for a caller the hook has identified (or not). */
function eventFor(check: RouteCheck, role: Role | null) {
	const url = new URL(check.url, 'http://127.0.0.1:4173');
	const user = role && { id: 900_000 + IDENTITIES.indexOf(role), email: `${role}@guards.test`, name: `Fake ${role}`, role, unitPreferences: null };
	const body = check.method === 'GET' || check.method === 'HEAD' ? undefined : check.kind === 'action' ? new FormData() : '{}';
	return {
		url,
		params: check.params,
		route: { id: check.routeId },
		request: new Request(url, { method: check.method, body }),
		locals: { user, claimedUserId: user ? user.id : null, apiTokenId: null, auth: async () => null },
		getClientAddress: () => '127.0.0.1',
		cookies: { get: () => undefined, getAll: () => [], set() {}, delete() {}, serialize: () => '' },
		setHeaders() {},
		fetch,
		parent: async () => ({}),
		depends() {},
		untrack: <T>(fn: () => T) => fn(),
		platform: undefined,
		isDataRequest: false,
		isSubRequest: false,
		isRemoteRequest: false
	};
}

async function handlerOf(check: RouteCheck) {
	const load = modules['/' + check.file];
	if (!load) throw new Error(`no module ${check.file} for ${check.routeId}`);
	const mod = (await load()) as Record<string, unknown> & { actions?: Record<string, unknown> };
	const handler = check.kind === 'page' ? mod.load : check.kind === 'action' ? mod.actions?.[check.name] : mod[check.method];
	return handler as ((event: unknown) => unknown) | undefined;
}

describe('every load, action and endpoint checks the caller itself', () => {
	it('the table lists something to refuse', () => {
		expect(refusals.length).toBeGreaterThan(0);
	});

	it.each(refusals.map((r) => [`${r.check.routeId} ${r.check.kind} ${r.check.name} × ${identityName(r.role)} → ${r.expected}`, r] as const))(
		'%s',
		async (_title, { check, role, expected }) => {
			const handler = await handlerOf(check);
			if (!handler) {
				// A page without a server load has nothing to check here; its +page.server.ts is what serves data.
				expect(check.kind, `${check.routeId} has no ${check.kind === 'action' ? 'action ' + check.name : check.name} handler`).toBe('page');
				return;
			}
			let thrown: unknown;
			let returned: unknown;
			try {
				returned = await handler(eventFor(check, role));
			} catch (err) {
				thrown = err;
			}
			if (expected === 'redirect-to-signin') {
				expect(isRedirect(thrown) && thrown.location.startsWith('/signin?next='), `expected a redirect to sign-in, got ${String(thrown)}`).toBe(true);
				return;
			}
			const status = expected === 'unauthorized' ? 401 : 403;
			// A refusal is thrown (error()), or answered as JSON by an endpoint wrapper that turns
			// thrown errors into the API's error shape.
			const refused = isHttpError(thrown, status) || (returned instanceof Response && returned.status === status);
			const got = thrown instanceof Error ? thrown.message : returned instanceof Response ? `HTTP ${returned.status}` : JSON.stringify(thrown ?? returned);
			expect(refused, `expected HTTP ${status} from the handler itself, got ${got}`).toBe(true);
		}
	);
});
