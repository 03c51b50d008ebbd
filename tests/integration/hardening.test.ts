// Issue 14, "Sign-in and request hardening", against the built app (what a client sees: status
// codes, cookies, redirects) on a scratch database with the demo lab. Each block fails on the code
// before the fix: the numbers in the titles are the issue's items.
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { encode } from '@auth/core/jwt';
import { stringify } from 'devalue';
import { and, count, eq, sql } from 'drizzle-orm';
import { auditEvents, mailOutbox, rangeSessions, rigs, signInLimits, testPlans, users } from '../../src/lib/server/db/schema';
import { BCRYPT_COST } from '../../src/lib/server/accounts/passwords';
import { MAX_FAILURES_PER_ACCOUNT } from '../../src/lib/server/accounts/rate-limit';
import { bearerFor, cookieHeaderOf, DEMO_PASSWORD, demoEmail, postSignIn, signInCookie, startBuiltApp, type BuiltApp } from '../support/app-server';

let app: BuiltApp;
let adminToken: string;
let leadToken: string;
let officerToken: string;

beforeAll(async () => {
	app = await startBuiltApp();
	[adminToken, leadToken, officerToken] = [await bearerFor(app, 'admin'), await bearerFor(app, 'lead'), await bearerFor(app, 'range_officer')];
}, 120_000);
afterAll(async () => {
	await app?.stop();
});
// Every test signs in from 127.0.0.1: start each with no attempts counted.
beforeEach(async () => {
	await app.db.delete(signInLimits);
});

const api = (path: string, init: RequestInit & { token?: string; cookie?: string } = {}) => {
	const headers = new Headers(init.headers);
	if (init.token) headers.set('authorization', `Bearer ${init.token}`);
	if (init.cookie) headers.set('cookie', init.cookie);
	if (typeof init.body === 'string' && !headers.has('content-type')) headers.set('content-type', 'application/json');
	return fetch(`${app.base}${path}`, { ...init, headers, redirect: 'manual' });
};
const json = (value: unknown) => JSON.stringify(value);
/** A form post as superforms sends it with dataType: 'json' (the data as devalue text). */
const superformBody = (data: Record<string, unknown>) => new URLSearchParams({ __superform_json: stringify(data) }).toString();

async function userId(role: string) {
	const [row] = await app.db.select({ id: users.id }).from(users).where(eq(users.email, demoEmail(role)));
	return row.id;
}

async function newSession(token = officerToken) {
	const [rig] = await app.db.select({ id: rigs.id }).from(rigs).where(sql`${rigs.deletedAt} IS NULL`).limit(1);
	const [session] = await app.db.select().from(rangeSessions).limit(1);
	const response = await api('/api/v1/sessions', {
		method: 'POST',
		token,
		body: json({
			title: `Hardening ${Math.random().toString(36).slice(2)}`,
			rigId: rig.id,
			projectileId: session.projectileId,
			startedAt: new Date().toISOString(),
			targetDistanceM: 5,
			elevationDeg: 1,
			launchHeightM: 1.2,
			aimHeightM: 1.2,
			temperatureC: 15,
			pressurePa: 101_325,
			relativeHumidity: 0.5
		})
	});
	expect(response.status, await response.clone().text()).toBe(201);
	return (await response.json()) as { id: number };
}

async function logShot(sessionId: number) {
	const response = await api(`/api/v1/sessions/${sessionId}/shots`, {
		method: 'POST',
		token: officerToken,
		body: json({ clientUuid: crypto.randomUUID(), fillGaugePa: 300_000, muzzleSpeedMps: 25 })
	});
	expect(response.status).toBe(201);
	return (await response.json()) as { id: number };
}

async function auditCount(action: string, entityType?: string, entityId?: number) {
	const [row] = await app.db
		.select({ n: count() })
		.from(auditEvents)
		.where(and(eq(auditEvents.action, action), entityType ? eq(auditEvents.entityType, entityType) : undefined, entityId ? eq(auditEvents.entityId, String(entityId)) : undefined));
	return row.n;
}

describe('1. one rate-limited way in', () => {
	it('Auth.js’s own credentials callback is closed: no session, whatever the password', async () => {
		for (const path of ['/auth/callback/credentials', '/auth/signin/credentials']) {
			const response = await fetch(`${app.base}${path}`, {
				method: 'POST',
				headers: { 'content-type': 'application/x-www-form-urlencoded', origin: app.base },
				body: new URLSearchParams({ email: demoEmail('viewer'), password: DEMO_PASSWORD }),
				redirect: 'manual'
			});
			expect(response.status, path).toBe(404);
			expect(cookieHeaderOf(response)).not.toContain('session-token');
		}
	});

	it('30 wrong passwords from 8 parallel clients: at most the limit are evaluated (each audited), the rest 429', async () => {
		const email = demoEmail('analyst');
		const before = await auditCount('sign_in_failed');
		const statuses: number[] = [];
		let next = 0;
		await Promise.all(
			Array.from({ length: 8 }, async () => {
				while (next < 30) {
					next++;
					statuses.push((await postSignIn(app, email, `wrong password ${next}`)).status);
				}
			})
		);
		const evaluated = statuses.filter((s) => s === 400).length;
		const limited = statuses.filter((s) => s === 429).length;
		expect(evaluated + limited).toBe(30);
		expect(evaluated).toBeLessThanOrEqual(MAX_FAILURES_PER_ACCOUNT);
		expect(await auditCount('sign_in_failed')).toBe(before + evaluated);
		// The right password is refused too while the account is locked.
		expect((await postSignIn(app, email, DEMO_PASSWORD)).status).toBe(429);
		console.info(`rate limit: ${evaluated} of 30 parallel wrong passwords evaluated (limit ${MAX_FAILURES_PER_ACCOUNT})`);
	});

	it('the token endpoint and the password change count on the same limit', async () => {
		const email = demoEmail('viewer');
		for (let i = 0; i < MAX_FAILURES_PER_ACCOUNT; i++) {
			const r = await api('/api/v1/tokens', { method: 'POST', body: json({ email, password: 'wrong', name: 'x' }) });
			expect(r.status).toBe(401);
		}
		const locked = await api('/api/v1/tokens', { method: 'POST', body: json({ email, password: DEMO_PASSWORD, name: 'x' }) });
		expect(locked.status).toBe(429);
		expect((await postSignIn(app, email, DEMO_PASSWORD)).status).toBe(429);
	});
});

describe('2. sessions that end', () => {
	const me = (cookie: string) => api('/api/v1/me', { cookie });

	it('a copy of the cookie stops working after sign-out', async () => {
		const cookie = await signInCookie(app, 'viewer');
		expect((await me(cookie)).status).toBe(200);
		const out = await api('/signout', { method: 'POST', cookie, headers: { origin: app.base, 'content-type': 'application/x-www-form-urlencoded' }, body: '' });
		expect(out.status).toBeLessThan(400);
		expect((await me(cookie)).status).toBe(401);
	});

	it('a role change and disabling end the user’s sessions on the next request', async () => {
		const admin = await signInCookie(app, 'admin');
		const analystId = await userId('analyst');
		const cookie = await signInCookie(app, 'analyst');
		expect((await me(cookie)).status).toBe(200);
		const form = (body: Record<string, string>) => ({
			method: 'POST',
			cookie: admin,
			headers: { origin: app.base, 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html' },
			body: new URLSearchParams(body).toString()
		});
		const changed = await api(`/users/${analystId}?/changeRole`, form({ role: 'lead' }));
		expect(changed.status).toBeLessThan(400);
		expect((await me(cookie)).status).toBe(401);
		await api(`/users/${analystId}?/changeRole`, form({ role: 'analyst' }));

		const again = await signInCookie(app, 'analyst');
		expect((await api(`/users/${analystId}?/disable`, form({}))).status).toBeLessThan(400);
		await api(`/users/${analystId}?/enable`, form({}));
		// Enabled again, the session from before the disabling stays ended.
		expect((await me(again)).status).toBe(401);
		expect((await me(await signInCookie(app, 'analyst'))).status).toBe(200);
	});

	it('a password reset through a link ends the sessions signed in with the old password', async () => {
		const cookie = await signInCookie(app, 'range_officer');
		const email = demoEmail('range_officer');
		const sent = app.mail.received.length;
		await fetch(`${app.base}/forgot-password?/requestReset`, {
			method: 'POST',
			headers: { origin: app.base, 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html' },
			body: new URLSearchParams({ email }),
			redirect: 'manual'
		});
		await expect.poll(() => app.mail.received.length, { timeout: 10_000 }).toBeGreaterThan(sent);
		const raw = app.mail.received.slice(sent).find((m) => m.to.includes(email))!.raw.replace(/=\r?\n/g, '');
		const token = raw.match(/\/set-password\/([A-Za-z0-9_-]{43})/)![1];
		const set = await fetch(`${app.base}/set-password/${token}?/setPassword`, {
			method: 'POST',
			headers: { origin: app.base, 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html' },
			body: new URLSearchParams({ password: DEMO_PASSWORD, confirm: DEMO_PASSWORD }),
			redirect: 'manual'
		});
		expect(set.status).toBe(303);
		expect((await me(cookie)).status).toBe(401);
	});

	it('a session ends 7 days after its sign-in however busy it was (a cookie made with the app’s secret)', async () => {
		const id = await userId('viewer');
		const [row] = await app.db.select({ v: users.sessionVersion }).from(users).where(eq(users.id, id));
		const make = (signedInDaysAgo: number) =>
			encode({
				salt: 'authjs.session-token',
				secret: 'integration-test-secret-integration-test-secret',
				token: { uid: String(id), sv: row.v, sat: Math.floor(Date.now() / 1000) - signedInDaysAgo * 86400 }
			});
		expect((await me(`authjs.session-token=${await make(6.9)}`)).status).toBe(200);
		expect((await me(`authjs.session-token=${await make(7.1)}`)).status).toBe(401);
	});
});

describe('3. no open redirect after sign-in', () => {
	const attacks = ['/\\evil.example', '//evil.example', '/%5Cevil.example', '/%2F/evil.example', '/\t/evil.example', 'https://evil.example', '/%09/evil.example'];
	it.each(attacks)('next=%s goes to the overview', async (next) => {
		const response = await postSignIn(app, demoEmail('viewer'), DEMO_PASSWORD, next);
		expect(response.status).toBe(303);
		expect(response.headers.get('location')).toBe('/');
	});

	it('a signed-in visit to /signin?next=%2F%5Cevil.example stays on the site; a real path is kept', async () => {
		const cookie = await signInCookie(app, 'viewer');
		const evil = await api('/signin?next=%2F%5Cevil.example', { cookie });
		expect(evil.headers.get('location')).toBe('/');
		const fine = await api('/signin?next=%2Fsessions%3Fstatus%3Dopen', { cookie });
		expect(fine.headers.get('location')).toBe('/sessions?status=open');
	});
});

describe('4. origin check on every cookie-authenticated write', () => {
	it('a bodiless cross-site close is refused and the session stays open; same origin and bearer tokens pass', async () => {
		const cookie = await signInCookie(app, 'range_officer');
		const { id } = await newSession();
		for (const headers of [{}, { origin: 'http://evil.example' }, { 'sec-fetch-site': 'same-site' }, { 'sec-fetch-site': 'cross-site' }] as Record<string, string>[]) {
			const refused = await api(`/api/v1/sessions/${id}/close`, { method: 'POST', cookie, headers });
			expect(refused.status, JSON.stringify(headers)).toBe(403);
		}
		const textPlain = await api(`/api/v1/sessions/${id}`, { method: 'DELETE', cookie, headers: { 'content-type': 'text/plain' }, body: 'x' });
		expect(textPlain.status).toBe(403);
		const [stored] = await app.db.select().from(rangeSessions).where(eq(rangeSessions.id, id));
		expect(stored.status).toBe('open');
		expect(stored.deletedAt).toBeNull();

		const sameSite = await api(`/api/v1/sessions/${id}/close`, { method: 'POST', cookie, headers: { 'sec-fetch-site': 'same-origin' } });
		expect(sameSite.status).toBe(200);
		const other = await newSession();
		expect((await api(`/api/v1/sessions/${other.id}/close`, { method: 'POST', cookie, headers: { origin: app.base } })).status).toBe(200);
		const third = await newSession();
		expect((await api(`/api/v1/sessions/${third.id}/close`, { method: 'POST', token: officerToken })).status).toBe(200);
	});
});

describe('5. no 500 for bad input', () => {
	it('dates outside DATETIME, null for NOT NULL fields and huge page numbers → 400 naming the field', async () => {
		const { id } = await newSession();
		for (const firedAt of ['+010000-01-01T00:00:00Z', 8.64e15, '0999-12-31T23:59:59Z']) {
			const r = await api(`/api/v1/sessions/${id}/shots`, { method: 'POST', token: officerToken, body: json({ clientUuid: crypto.randomUUID(), fillGaugePa: 1e5, firedAt }) });
			expect(r.status, String(firedAt)).toBe(400);
			expect((await r.json()).issues.map((i: { path: string }) => i.path)).toContain('firedAt');
		}
		const patchStart = await api(`/api/v1/sessions/${id}`, { method: 'PATCH', token: officerToken, body: json({ startedAt: 8.64e15 }) });
		expect(patchStart.status).toBe(400);
		expect((await patchStart.json()).issues.map((i: { path: string }) => i.path)).toContain('startedAt');

		const shot = await logShot(id);
		const analyst = await bearerFor(app, 'analyst');
		for (const field of ['sequence', 'firedAt', 'miss', 'fillGaugePa']) {
			const r = await api(`/api/v1/shots/${shot.id}`, { method: 'PATCH', token: analyst, body: json({ [field]: null }) });
			expect(r.status, field).toBe(400);
			expect((await r.json()).issues.map((i: { path: string }) => i.path)).toContain(field);
		}
		for (const path of ['/api/v1/rigs?page=1e308', `/api/v1/sessions/${id}/shots?page=1e308`, '/api/v1/sessions?page=99999999999999999999', '/api/v1/sessions?from=+275760-09-13']) {
			const r = await api(path, { token: officerToken });
			expect(r.status, path).toBe(400);
		}
		const cookie = await signInCookie(app, 'viewer');
		for (const path of ['/sessions?page=1e308', `/sessions/${id}?page=1e308`, '/rigs?page=1e308']) {
			const r = await api(path, { cookie, headers: { accept: 'text/html' } });
			expect(r.status, path).toBe(400);
		}
	});

	it('the page action that starts a session refuses a far-future start with 400, not 500', async () => {
		const cookie = await signInCookie(app, 'range_officer');
		const [rig] = await app.db.select({ id: rigs.id }).from(rigs).limit(1);
		const response = await api('/sessions/new?/createSession', {
			method: 'POST',
			cookie,
			headers: { origin: app.base, 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html' },
			body: superformBody({ title: 'far future', rigId: rig.id, projectileId: 1, startedAt: new Date(8.64e15), targetDistanceM: 5, elevationDeg: 1, launchHeightM: 1, aimHeightM: 1, temperatureC: 15, pressurePa: 101325, relativeHumidity: 0.5 })
		});
		expect(response.status).toBe(400);
	});

	it('a 65 MB JSON body → 413', async () => {
		const body = `{"title":"${'x'.repeat(65 * 1024 * 1024)}"}`;
		const r = await api('/api/v1/sessions', { method: 'POST', token: officerToken, body });
		expect(r.status).toBe(413);
	});
});

describe('6. the close-out report is not lost', () => {
	async function reportRows(sessionId: number) {
		return app.db.select().from(mailOutbox).where(and(eq(mailOutbox.kind, 'session_report'), eq(mailOutbox.entityId, String(sessionId))));
	}

	it('with the mail server hung, closing answers at once; with it down the report is retried, then sent', async () => {
		app.mail.state.mode = 'hang';
		const first = await newSession();
		const started = Date.now();
		const closed = await api(`/api/v1/sessions/${first.id}/close`, { method: 'POST', token: officerToken });
		expect(closed.status).toBe(200);
		expect(Date.now() - started).toBeLessThan(2000);
		expect((await closed.json()).leadsMailed).toBeGreaterThan(0);

		app.mail.state.mode = 'refuse';
		const second = await newSession();
		await api(`/api/v1/sessions/${second.id}/close`, { method: 'POST', token: officerToken });
		await expect.poll(async () => (await reportRows(second.id)).every((r) => r.attempts >= 1 && r.status === 'pending' && r.lastError), { timeout: 20_000 }).toBe(true);
		const [row] = await reportRows(second.id);
		expect(row.nextAttemptAt.getTime()).toBeGreaterThan(Date.now());

		// The mail server is back; the pause is over (moved to now instead of waiting it out).
		app.mail.state.mode = 'accept';
		await app.db.update(mailOutbox).set({ nextAttemptAt: new Date() }).where(eq(mailOutbox.status, 'pending'));
		await expect.poll(async () => (await reportRows(second.id)).every((r) => r.status === 'sent'), { timeout: 30_000 }).toBe(true);
		expect(app.mail.received.some((m) => m.to.includes(demoEmail('lead')) && m.raw.includes(`/sessions/${second.id}/report`))).toBe(true);
	}, 60_000);

	it('a lead resends a closed session’s report (API and page); a range officer may not', async () => {
		app.mail.state.mode = 'accept';
		const { id } = await newSession();
		await api(`/api/v1/sessions/${id}/close`, { method: 'POST', token: officerToken });
		const before = (await reportRows(id)).length;
		expect((await api(`/api/v1/sessions/${id}/report-mail`, { method: 'POST', token: officerToken })).status).toBe(403);
		const resent = await api(`/api/v1/sessions/${id}/report-mail`, { method: 'POST', token: leadToken });
		expect(resent.status).toBe(202);
		const cookie = await signInCookie(app, 'lead');
		const page = await api(`/sessions/${id}?/resendReport`, {
			method: 'POST',
			cookie,
			headers: { origin: app.base, 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html' },
			body: ''
		});
		expect(page.status).toBe(303);
		const leads = (await resent.json()).leadsQueued as number;
		expect((await reportRows(id)).length).toBe(before + 2 * leads);
		expect(await auditCount('report_mail_resent', 'range_session', id)).toBe(2);
		const open = await newSession();
		expect((await api(`/api/v1/sessions/${open.id}/report-mail`, { method: 'POST', token: leadToken })).status).toBe(409);
	});
});

describe('7. cookies: Secure exactly when served over https', () => {
	it('over plain http neither the sign-in cookie nor the refreshed one is Secure', async () => {
		const signIn = await postSignIn(app, demoEmail('viewer'), DEMO_PASSWORD);
		const issued = signIn.headers.getSetCookie().find((c) => c.startsWith('authjs.session-token='))!;
		expect(issued).toBeDefined();
		expect(issued).not.toMatch(/;\s*Secure/i);
		const refreshed = (await api('/profile', { cookie: cookieHeaderOf(signIn) })).headers.getSetCookie().find((c) => c.startsWith('authjs.session-token='));
		expect(refreshed).toBeDefined();
		expect(refreshed).not.toMatch(/;\s*Secure/i);
	});
});

describe('8. soft delete, consistently', () => {
	it('a shot of a deleted session is 404; a second DELETE is 404 without a new audit event', async () => {
		const { id } = await newSession();
		const shot = await logShot(id);
		const analyst = await bearerFor(app, 'analyst');
		expect((await api(`/api/v1/shots/${shot.id}`, { method: 'DELETE', token: analyst })).status).toBe(200);
		expect((await api(`/api/v1/shots/${shot.id}`, { method: 'DELETE', token: analyst })).status).toBe(404);
		expect(await auditCount('delete', 'shot', shot.id)).toBe(1);

		const other = await logShot(id);
		expect((await api(`/api/v1/sessions/${id}`, { method: 'DELETE', token: officerToken })).status).toBe(200);
		expect((await api(`/api/v1/sessions/${id}`, { method: 'DELETE', token: officerToken })).status).toBe(404);
		expect(await auditCount('delete', 'range_session', id)).toBe(1);
		expect((await api(`/api/v1/sessions/${id}/shots`, { token: analyst })).status).toBe(404);
		expect((await api(`/api/v1/shots/${other.id}`, { token: analyst })).status).toBe(404);
	});

	it('PATCH of a deleted rig is 404, and so is its second DELETE', async () => {
		const analyst = await bearerFor(app, 'analyst');
		const created = await api('/api/v1/rigs', {
			method: 'POST',
			token: analyst,
			body: json({ name: `Deleted rig ${Date.now()}`, reservoirM3: 0.001, deadM3: 0.0001, boreDiameterM: 0.025, travelM: 1, ratedPressurePa: 1e6, valveType: 'ball', nominalEfficiency: 0.6 })
		});
		expect(created.status, await created.clone().text()).toBe(201);
		const rig = (await created.json()) as { id: number };
		expect((await api(`/api/v1/rigs/${rig.id}`, { method: 'DELETE', token: analyst })).status).toBe(200);
		expect((await api(`/api/v1/rigs/${rig.id}`, { method: 'PATCH', token: analyst, body: json({ valveType: 'solenoid' }) })).status).toBe(404);
		expect((await api(`/api/v1/rigs/${rig.id}`, { method: 'DELETE', token: analyst })).status).toBe(404);
		expect(await auditCount('delete', 'rig', rig.id)).toBe(1);
		expect(await auditCount('update', 'rig', rig.id)).toBe(0);
	});
});

describe('9. seeded users and plan owners', () => {
	it('demo users are hashed at the app’s bcrypt cost', async () => {
		const rows = await app.db.select({ hash: users.passwordHash }).from(users);
		for (const { hash } of rows) expect(hash).toMatch(new RegExp(`^\\$2[aby]\\$${BCRYPT_COST}\\$`));
	});

	it('a test plan created through the API or the page is owned by its creator', async () => {
		const leadId = await userId('lead');
		const plan = { speedAt: 'muzzle', requiredSpeedMps: 25, speedTolerancePct: 3, impactToleranceM: 0.05, targetDistanceM: 5, shotsRequired: 5 };
		const viaApi = await api('/api/v1/plans', { method: 'POST', token: leadToken, body: json({ ...plan, name: `API plan ${Date.now()}` }) });
		expect(viaApi.status).toBe(201);
		expect((await viaApi.json()).ownerId).toBe(leadId);

		const name = `Page plan ${Date.now()}`;
		const viaPage = await api('/plans/new?/createPlan', {
			method: 'POST',
			cookie: await signInCookie(app, 'lead'),
			headers: { origin: app.base, 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html' },
			body: superformBody({ ...plan, name })
		});
		expect(viaPage.status).toBeLessThan(400);
		const [stored] = await app.db.select().from(testPlans).where(eq(testPlans.name, name));
		expect(stored?.ownerId).toBe(leadId);
	});
});
