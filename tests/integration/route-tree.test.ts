// The route scanner behind the role × route checks (tests/support/route-tree.ts). No database.
import { describe, expect, it } from 'vitest';
import { paramsOf, parseActionNames, parseMethods, plainPath, scanRoutes } from '../support/route-tree';

describe('parseActionNames', () => {
	it('reads property, method and shorthand forms, quoted names and the default action', () => {
		const source = `
			import { x } from 'y';
			// export const actions = { commented: 1 }
			export const actions: Actions = {
				createRig: async (event) => { const o = { nested: 1, '}': 2 }; return o; },
				async closeSession(event) { return \`\${'{'}\`; },
				'approve-calibration': handler,
				signIn,
				default: async () => {}
			};`;
		expect(parseActionNames(source)).toEqual(['createRig', 'closeSession', 'approve-calibration', 'signIn', 'default']);
	});

	it('reads a one-line object of handlers from elsewhere', () => {
		expect(parseActionNames('export const actions = { updateRig: r.update, deleteRig: r.remove };')).toEqual(['updateRig', 'deleteRig']);
	});

	it('finds no actions in a file without them, and refuses what it cannot read', () => {
		expect(parseActionNames('export const load = () => ({});')).toEqual([]);
		expect(() => parseActionNames('export const actions = { ...shared, own: 1 };')).toThrow(/spread/);
		expect(() => parseActionNames('export const actions = makeActions({ a: 1 });')).toThrow(/cannot read/);
	});
});

describe('parseMethods', () => {
	it('reads exported consts, functions and export lists', () => {
		const source = `export const GET = () => {}; export async function POST() {}; const del = 1; export { del as DELETE }; export const helper = 1;`;
		expect(parseMethods(source)).toEqual(['GET', 'POST', 'DELETE']);
	});
});

describe('route ids and paths', () => {
	it('drops groups for the URL and needs a path for params', () => {
		expect(plainPath('/(app)/(admin)/users')).toBe('/users');
		expect(plainPath('/(app)')).toBe('/');
		expect(plainPath('/(app)/rigs/[id]')).toBeNull();
		expect(paramsOf('/(app)/sessions/[id]/edit', '/sessions/42/edit')).toEqual({ id: '42' });
	});

	it('the real tree has the account routes, with their actions', () => {
		const routes = scanRoutes();
		const profile = routes.find((r) => r.id === '/(app)/profile');
		expect(profile?.actions).toEqual(['changePassword', 'saveUnits', 'createToken', 'revokeToken']);
		expect(routes.find((r) => r.id === '/api/v1/tokens')?.methods).toEqual(['POST']);
		expect(routes.find((r) => r.id === '/signout')).toMatchObject({ page: true, actions: ['default'] });
	});
});
