// The setup sheet's API before it reaches the database: who may call it and how a bad request is
// answered (400 in the API's one error shape, naming each field). The answers that need the
// registry (404, the refusal above the rated pressure) are in tests/integration/setup-sheet.test.ts.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { setupSheetInput, SETUP_SHEET_SAMPLES } from '$lib/schemas/setup-sheet';
import { setupSheetApi } from './api';

const VALID = {
	testPlanId: 2,
	rigId: 2,
	projectileId: 2,
	launchHeightM: 1.2,
	aimHeightM: 1.2,
	temperatureC: 15,
	pressurePa: 101_325,
	relativeHumidity: 0.5
};

const savedUrl = process.env.DATABASE_URL;
beforeAll(() => {
	// Nothing here may reach the database: a query would fail loudly.
	process.env.DATABASE_URL = '';
});
afterAll(() => {
	process.env.DATABASE_URL = savedUrl;
});

function event(body: string, signedIn = true) {
	const url = new URL('http://127.0.0.1/api/v1/setup-sheet');
	const user = signedIn ? { id: 1, email: 'viewer@example.test', name: 'V', role: 'viewer' as const, unitPreferences: null } : null;
	return {
		url,
		params: {},
		route: { id: '/api/v1/setup-sheet' },
		request: new Request(url, { method: 'POST', body, headers: { 'content-type': 'application/json' } }),
		locals: { user, claimedUserId: user?.id ?? null, apiTokenId: null }
	} as unknown as Parameters<typeof setupSheetApi.create>[0];
}

describe('POST /api/v1/setup-sheet', () => {
	it('needs a signed-in caller (401, JSON)', async () => {
		const response = await setupSheetApi.create(event(JSON.stringify(VALID), false));
		expect(response.status).toBe(401);
		expect(await response.json()).toMatchObject({ message: expect.stringMatching(/Sign in/), issues: [] });
	});

	it('answers a body that is not JSON with 400', async () => {
		const response = await setupSheetApi.create(event('{not json'));
		expect(response.status).toBe(400);
		expect(await response.json()).toEqual({ message: 'The body is not valid JSON.', issues: [{ path: '', message: 'The body is not valid JSON.' }] });
	});

	it('names every missing or out-of-bounds field', async () => {
		const response = await setupSheetApi.create(
			event(JSON.stringify({ ...VALID, testPlanId: undefined, pressurePa: 20_000, relativeHumidity: 1.5, samples: 10 }))
		);
		expect(response.status).toBe(400);
		const body = await response.json();
		const paths = body.issues.map((i: { path: string }) => i.path).sort();
		expect(paths).toEqual(['pressurePa', 'relativeHumidity', 'samples', 'testPlanId']);
		expect(body.issues.find((i: { path: string }) => i.path === 'pressurePa').message).toBe('Barometric pressure must be at least 50000 Pa.');
		expect(body.message).toMatch(/testPlanId/);
	});
});

describe('setupSheetInput', () => {
	it('fills the defaults of a session (no wind, azimuth 0) and the Monte Carlo sample count', () => {
		const parsed = setupSheetInput.parse(VALID);
		expect(parsed).toMatchObject({ windXMps: 0, windZMps: 0, azimuthDeg: 0, samples: SETUP_SHEET_SAMPLES.default });
		expect(parsed.targetDistanceM).toBeUndefined();
	});

	it('drops a fill pressure or elevation sent with the request: the sheet solves for them itself', () => {
		const parsed = setupSheetInput.parse({ ...VALID, fillGaugePa: 9e5, elevationDeg: 3 });
		expect(parsed).not.toHaveProperty('fillGaugePa');
		expect(parsed).not.toHaveProperty('elevationDeg');
	});

	it('refuses ids that are not positive whole numbers', () => {
		const r = setupSheetInput.safeParse({ ...VALID, rigId: 0, projectileId: 1.5 });
		expect(r.success).toBe(false);
		expect(r.error?.issues.map((i) => i.path.join('.')).sort()).toEqual(['projectileId', 'rigId']);
	});
});
