// Joins the route tree (route-tree.ts) with the access table (route-access.ts) into the list of
// requests the role checks make, and lists what the table is missing or has too much of.
import { hasRole, ROLE_ORDER, type Role } from '../../src/lib/roles';
import { ROUTE_ACCESS, type Access } from './route-access';
import { paramsOf, plainPath, scanRoutes, type HttpMethod } from './route-tree';

export type RouteCheck = {
	routeId: string;
	/** "page" (GET of the page), "action" (a named form action) or "endpoint" (+server.ts). */
	kind: 'page' | 'action' | 'endpoint';
	/** Action name or HTTP method. */
	name: string;
	method: HttpMethod;
	/** The URL requested: the page path, plus "?/name" for an action. */
	url: string;
	params: Record<string, string>;
	access: Access;
	/** The module that serves it (for the direct-call test). */
	file: string | undefined;
};

export type Outcome = 'allowed' | 'redirect-to-signin' | 'unauthorized' | 'forbidden';

/** null = anonymous */
export const IDENTITIES: (Role | null)[] = [null, ...ROLE_ORDER];
export const identityName = (role: Role | null) => role ?? 'anonymous';

export function expectedOutcome(check: Pick<RouteCheck, 'kind' | 'access' | 'method' | 'url'>, role: Role | null): Outcome {
	if (check.access === 'anyone') return 'allowed';
	if (role === null) return anonymousOutcome(check);
	return hasRole(role, check.access) ? 'allowed' : 'forbidden';
}

/**
 * guards.requireUser: 401 for the API and for anything but GET; a GET outside the API — a page,
 * or a download a page links to such as /sessions/1/shots.csv — redirects to sign-in.
 */
function anonymousOutcome(check: Pick<RouteCheck, 'kind' | 'method' | 'url'>): Outcome {
	if (check.kind === 'page') return 'redirect-to-signin';
	if (check.kind === 'endpoint' && check.method === 'GET' && !check.url.startsWith('/api/')) return 'redirect-to-signin';
	return 'unauthorized';
}

const TABLE = 'tests/support/route-access.ts';

export function buildRouteChecks() {
	const problems: string[] = [];
	const checks: RouteCheck[] = [];
	const tree = scanRoutes();
	for (const route of tree) {
		const entry = ROUTE_ACCESS[route.id];
		const served = [route.page && 'a page', route.actions.length && `actions ${route.actions.join(', ')}`, route.methods.length && `methods ${route.methods.join(', ')}`]
			.filter(Boolean)
			.join('; ');
		if (!entry) {
			problems.push(`Route ${route.id} (${served}) has no entry in ${TABLE}. Add one saying which role may use it, e.g. '${route.id}': { page: 'viewer' }.`);
			continue;
		}
		const path = entry.path ?? plainPath(route.id);
		if (!path) {
			problems.push(`Route ${route.id} has [params]: give its entry in ${TABLE} a "path" (a fixture id, or MISSING_ID for a 404).`);
			continue;
		}
		const params = paramsOf(route.id, path);
		if (route.page) {
			if (!entry.page) problems.push(`Route ${route.id} is a page, but its entry in ${TABLE} has no "page" access.`);
			else checks.push({ routeId: route.id, kind: 'page', name: 'GET', method: 'GET', url: path, params, access: entry.page, file: route.files.pageServer });
		} else if (entry.page) problems.push(`Route ${route.id} has no page any more: remove "page" from its entry in ${TABLE}.`);

		for (const action of route.actions) {
			const access = entry.actions?.[action];
			if (!access) problems.push(`Action "${action}" of ${route.id} has no entry in ${TABLE}: add actions: { ${action}: '<lowest role>' }.`);
			else {
				const url = action === 'default' ? path : `${path}${path.includes('?') ? '&' : '?'}/${action}`;
				checks.push({ routeId: route.id, kind: 'action', name: action, method: 'POST', url, params, access, file: route.files.pageServer });
			}
		}
		for (const stale of Object.keys(entry.actions ?? {}).filter((a) => !route.actions.includes(a)))
			problems.push(`${TABLE} lists action "${stale}" for ${route.id}, which the route does not have: remove it.`);

		for (const method of route.methods) {
			const access = entry.methods?.[method];
			if (!access) problems.push(`Method ${method} of ${route.id} has no entry in ${TABLE}: add methods: { ${method}: '<lowest role>' }.`);
			else checks.push({ routeId: route.id, kind: 'endpoint', name: method, method, url: path, params, access, file: route.files.server });
		}
		for (const stale of Object.keys(entry.methods ?? {}).filter((m) => !route.methods.includes(m as HttpMethod)))
			problems.push(`${TABLE} lists method ${stale} for ${route.id}, which the route does not export: remove it.`);
	}
	const ids = new Set(tree.map((r) => r.id));
	for (const id of Object.keys(ROUTE_ACCESS).filter((id) => !ids.has(id)))
		problems.push(`${TABLE} has an entry for ${id}, which is not in src/routes (moved or removed?): update or remove it.`);
	return { checks, problems, routeIds: [...ids] };
}
