/**
 * WHO MAY USE EACH ROUTE — the table behind the role × route checks:
 *   tests/e2e/role-matrix.e2e.ts          every route × each role and anonymous, against the built app
 *   tests/integration/route-guards.test.ts every load, action and endpoint refuses on its own (no hook)
 * Both read the route tree from src/routes (tests/support/route-tree.ts). A page, form action or
 * endpoint method without an entry here FAILS them, with a message naming what to add.
 *
 * One entry per route id — the folder under src/routes, groups included, as SvelteKit names it:
 *
 *   '/(app)/rigs/[id]': {
 *     path: `/rigs/${MISSING_ID}`,              // URL to request; required when the id has [params]
 *     page: 'viewer',                          // +page.svelte: lowest role that may GET the page
 *     actions: { updateRig: 'analyst' },       // +page.server.ts actions by name ('default' if unnamed)
 *     methods: { GET: 'viewer', POST: 'lead' } // +server.ts: lowest role per exported HTTP method
 *   },
 *
 * Access values: 'anyone' (anonymous visitors too) or the lowest role that may
 * (viewer < range_officer < analyst < lead < admin; roles are cumulative).
 *
 * What is expected (statuses as designed in src/lib/server/guards.ts):
 *   - allowed: anything but 401/403, a redirect to /signin or a 5xx. A placeholder id answers
 *     404 for an allowed role: that still proves the guards let the request through.
 *   - anonymous, not allowed: a page redirects (303) to /signin?next=…, and so does a GET of a
 *     download outside /api (e.g. /sessions/1/shots.csv); an action, an API call or any other
 *     method answers 401.
 *   - signed in with too low a role: 403.
 * Form actions are posted with an EMPTY form. An action must refuse an empty form (400) or be
 * harmless with it; that is why routes with [id] use placeholders that match no record, so an
 * action such as "deleteRig" cannot touch the demo data.
 */
import type { Role } from '../../src/lib/roles';
import type { HttpMethod } from './route-tree';

export type Access = 'anyone' | Role;

export type RouteAccess = {
	path?: string;
	page?: Access;
	actions?: Record<string, Access>;
	methods?: Partial<Record<HttpMethod, Access>>;
};

/** A numeric id no record has (the matrix expects 404 from allowed roles). */
export const MISSING_ID = 999_999_999;

export const ROUTE_ACCESS: Record<string, RouteAccess> = {
	// Anonymous visitors
	'/(public)/signin': { page: 'anyone', actions: { signIn: 'anyone' } },
	'/(public)/forgot-password': { page: 'anyone', actions: { requestReset: 'anyone' } },
	'/(public)/set-password/[token]': { path: '/set-password/no-such-link', page: 'anyone', actions: { setPassword: 'anyone' } },
	'/signout': { page: 'anyone', actions: { default: 'anyone' } },

	// Everyone signed in
	'/(app)': { page: 'viewer' },
	'/(app)/api-docs': { page: 'viewer' },
	'/(app)/profile': { page: 'viewer', actions: { changePassword: 'viewer', saveUnits: 'viewer', createToken: 'viewer', revokeToken: 'viewer' } },

	// Admins
	'/(app)/(admin)/users': { page: 'admin', actions: { invite: 'admin' } },
	'/(app)/(admin)/users/[id]': {
		path: `/users/${MISSING_ID}`,
		page: 'admin',
		actions: { changeRole: 'admin', disable: 'admin', enable: 'admin', resendInvitation: 'admin', revokeToken: 'admin' }
	},
	'/(app)/(admin)/mail': { page: 'admin' },
	'/(app)/(admin)/mail/[id]': { path: '/mail/no-such-message', page: 'admin' },

	// Range registries: everyone reads; analysts keep rigs and projectiles, leads own test plans.
	'/(app)/rigs': { page: 'viewer' },
	'/(app)/rigs/new': { page: 'analyst', actions: { createRig: 'analyst' } },
	'/(app)/rigs/[id]': { path: `/rigs/${MISSING_ID}`, page: 'viewer', actions: { updateRig: 'analyst', deleteRig: 'analyst', restoreRig: 'analyst' } },
	'/(app)/projectiles': { page: 'viewer' },
	'/(app)/projectiles/new': { page: 'analyst', actions: { createProjectile: 'analyst' } },
	'/(app)/projectiles/[id]': {
		path: `/projectiles/${MISSING_ID}`,
		page: 'viewer',
		actions: { updateProjectile: 'analyst', deleteProjectile: 'analyst', restoreProjectile: 'analyst' }
	},
	'/(app)/plans': { page: 'viewer' },
	'/(app)/plans/new': { page: 'lead', actions: { createPlan: 'lead' } },
	'/(app)/plans/[id]': { path: `/plans/${MISSING_ID}`, page: 'viewer', actions: { updatePlan: 'lead', deletePlan: 'lead', restorePlan: 'lead' } },

	// Range sessions: range officers open and edit them.
	'/(app)/sessions': { page: 'viewer' },
	'/(app)/sessions/new': { page: 'range_officer', actions: { createSession: 'range_officer' } },
	'/(app)/sessions/[id]/edit': { path: `/sessions/${MISSING_ID}/edit`, page: 'range_officer', actions: { updateSession: 'range_officer' } },
	'/(app)/sessions/[id]': {
		path: `/sessions/${MISSING_ID}`,
		page: 'viewer',
		actions: { closeSession: 'range_officer', reopenSession: 'lead', deleteSession: 'range_officer', restoreSession: 'range_officer', resendReport: 'lead' }
	},
	'/(app)/sessions/[id]/log': { path: `/sessions/${MISSING_ID}/log`, page: 'range_officer', actions: { correctShot: 'range_officer', voidShot: 'range_officer' } },
	'/(app)/sessions/[id]/report': { path: `/sessions/${MISSING_ID}/report`, page: 'viewer' },

	// Calibrations: everyone reads; analysts fit drafts, leads approve. Rig health is for leads.
	// The setup sheet only reads, so every signed-in user may ask for one.
	'/(app)/calibrations': { page: 'viewer' },
	'/(app)/calibrations/[rigId]/[projectileId]': {
		path: `/calibrations/${MISSING_ID}/${MISSING_ID}`,
		page: 'viewer',
		actions: { fitCalibration: 'analyst' }
	},
	'/(app)/calibrations/[rigId]/[projectileId]/[id]': {
		path: `/calibrations/${MISSING_ID}/${MISSING_ID}/${MISSING_ID}`,
		page: 'viewer',
		actions: { approveCalibration: 'lead' }
	},
	'/(app)/rig-health': { page: 'lead' },
	'/(app)/setup': { page: 'viewer' },

	// CSV imports (analysts and up) and exports (every signed-in user).
	'/(app)/imports': { page: 'analyst', actions: { deleteTemplate: 'analyst' } },
	'/(app)/imports/new': { page: 'analyst', actions: { saveTemplate: 'analyst' } },
	'/(app)/imports/[id]': { path: `/imports/${MISSING_ID}`, page: 'analyst' },
	'/(app)/imports/[id]/original.csv': { path: `/imports/${MISSING_ID}/original.csv`, methods: { GET: 'analyst' } },
	'/(app)/imports/template.csv': { methods: { GET: 'viewer' } },
	'/(app)/imports/uploads': { methods: { POST: 'analyst' } },
	'/(app)/imports/uploads/[uploadId]/preview': { path: '/imports/uploads/00000000-0000-4000-8000-000000000000/preview', methods: { POST: 'analyst' } },
	'/(app)/imports/uploads/[uploadId]/commit': { path: '/imports/uploads/00000000-0000-4000-8000-000000000000/commit', methods: { POST: 'analyst' } },
	'/(app)/sessions/[id]/shots.csv': { path: `/sessions/${MISSING_ID}/shots.csv`, methods: { GET: 'viewer' } },
	'/(app)/rigs/[id]/shots.csv': { path: `/rigs/${MISSING_ID}/shots.csv`, methods: { GET: 'viewer' } },

	// JSON API (as on the pages: reads for every signed-in user, writes from the same role)
	'/api/v1/health': { methods: { GET: 'anyone' } },
	'/api/v1/openapi.json': { methods: { GET: 'anyone' } },
	'/api/v1/tokens': { methods: { POST: 'anyone' } },
	'/api/v1/me': { methods: { GET: 'viewer' } },
	'/api/v1/rigs': { methods: { GET: 'viewer', POST: 'analyst' } },
	'/api/v1/rigs/[id]': { path: `/api/v1/rigs/${MISSING_ID}`, methods: { GET: 'viewer', PATCH: 'analyst', DELETE: 'analyst' } },
	'/api/v1/projectiles': { methods: { GET: 'viewer', POST: 'analyst' } },
	'/api/v1/projectiles/[id]': { path: `/api/v1/projectiles/${MISSING_ID}`, methods: { GET: 'viewer', PATCH: 'analyst', DELETE: 'analyst' } },
	'/api/v1/plans': { methods: { GET: 'viewer', POST: 'lead' } },
	'/api/v1/plans/[id]': { path: `/api/v1/plans/${MISSING_ID}`, methods: { GET: 'viewer', PATCH: 'lead', DELETE: 'lead' } },
	'/api/v1/sessions': { methods: { GET: 'viewer', POST: 'range_officer' } },
	'/api/v1/sessions/[id]': { path: `/api/v1/sessions/${MISSING_ID}`, methods: { GET: 'viewer', PATCH: 'range_officer', DELETE: 'range_officer' } },
	'/api/v1/sessions/[id]/close': { path: `/api/v1/sessions/${MISSING_ID}/close`, methods: { POST: 'range_officer' } },
	'/api/v1/sessions/[id]/report-mail': { path: `/api/v1/sessions/${MISSING_ID}/report-mail`, methods: { POST: 'lead' } },
	'/api/v1/sessions/[id]/shots': { path: `/api/v1/sessions/${MISSING_ID}/shots`, methods: { GET: 'viewer', POST: 'range_officer' } },
	'/api/v1/shots/[id]': { path: `/api/v1/shots/${MISSING_ID}`, methods: { GET: 'viewer', PATCH: 'analyst', DELETE: 'analyst' } },
	'/api/v1/shots/[id]/void': { path: `/api/v1/shots/${MISSING_ID}/void`, methods: { POST: 'range_officer' } },
	'/api/v1/predictions': { methods: { POST: 'viewer' } },
	'/api/v1/imports': { methods: { POST: 'analyst' } },
	'/api/v1/setup-sheet': { methods: { POST: 'viewer' } },
	'/api/v1/calibrations': { methods: { GET: 'viewer', POST: 'analyst' } },
	'/api/v1/calibrations/[id]': { path: `/api/v1/calibrations/${MISSING_ID}`, methods: { GET: 'viewer' } },
	'/api/v1/calibrations/[id]/approve': { path: `/api/v1/calibrations/${MISSING_ID}/approve`, methods: { POST: 'lead' } }
};
