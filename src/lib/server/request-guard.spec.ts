import { describe, expect, it } from 'vitest';
import { routeZone } from './request-guard';

describe('routeZone: which check the hook applies before a route runs', () => {
	it.each([
		['/(app)', '/', 'user'],
		['/(app)/profile', '/profile', 'user'],
		['/(app)/rigs/[id]', '/rigs/1', 'user'],
		['/(app)/(admin)', '/', 'admin'],
		['/(app)/(admin)/users', '/users', 'admin'],
		['/(app)/(admin)/users/[id]', '/users/3', 'admin'],
		['/(app)/(admin)/mail/[id]', '/mail/x', 'admin'],
		['/(admin)/users', '/users', 'admin'],
		['/(public)/signin', '/signin', 'public'],
		['/(public)/set-password/[token]', '/set-password/abc', 'public'],
		['/signout', '/signout', 'public'],
		['/api/v1/health', '/api/v1/health', 'public'],
		['/api/v1/tokens', '/api/v1/tokens', 'public'],
		['/api/v1/me', '/api/v1/me', 'user'],
		['/api/v1/rigs/[id]', '/api/v1/rigs/2', 'user']
	] as const)('%s → %s', (routeId, pathname, zone) => {
		expect(routeZone(routeId, pathname)).toBe(zone);
	});

	it('matches whole group names only: "(apple)" is not "(app)", "(administration)" is not "(admin)"', () => {
		expect(routeZone('/(apple)/x', '/x')).toBe('public');
		expect(routeZone('/(app)/(administration)/x', '/x')).toBe('user');
		expect(routeZone('/apix', '/apix')).toBe('public');
	});

	it('a token route below a public one is not public: "/api/v1/tokens/[id]" needs a user', () => {
		expect(routeZone('/api/v1/tokens/[id]', '/api/v1/tokens/5')).toBe('user');
	});

	it('an unmatched path under /api is a 404 for the API; other unmatched paths fall through to the 404 page', () => {
		expect(routeZone(null, '/api/v1/nothing')).toBe('unknown-api');
		expect(routeZone(null, '/api')).toBe('unknown-api');
		expect(routeZone(null, '/nothing')).toBe('public');
	});
});
