import { expect, type Page } from '@playwright/test';
import { DEMO_PASSWORD, DEMO_USERS } from '../../scripts/lib/demo-users.mjs';

export type DemoRole = 'admin' | 'lead' | 'analyst' | 'range_officer' | 'viewer';

export function demoUser(role: DemoRole) {
	const user = DEMO_USERS.find((u) => u.role === role);
	if (!user) throw new Error(`no demo user with role ${role}`);
	return user;
}

export async function signIn(page: Page, role: DemoRole, password = DEMO_PASSWORD) {
	const user = demoUser(role);
	await page.goto('/signin');
	await page.getByLabel('E-mail').fill(user.email);
	await page.getByLabel('Password').fill(password);
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page.getByRole('navigation', { name: 'Main' })).toBeVisible();
	return user;
}

/** A new open session on the demo H1 rig with 25 mm ice balls (and, when named, a demo plan), through the API. */
export async function openSession(page: Page, title: string, planName?: string) {
	const rigs = await (await page.request.get('/api/v1/rigs')).json();
	const projectiles = await (await page.request.get('/api/v1/projectiles')).json();
	const plans = planName ? await (await page.request.get('/api/v1/plans')).json() : null;
	const response = await page.request.post('/api/v1/sessions', {
		// As the app's own pages send it: a cookie-authenticated write must name its origin.
		headers: { origin: new URL(page.url()).origin },
		data: {
			title,
			rigId: rigs.rows.find((r: { name: string }) => r.name.startsWith('H1')).id,
			projectileId: projectiles.rows.find((p: { name: string }) => p.name === 'Ice ball 25 mm').id,
			...(plans ? { testPlanId: plans.rows.find((p: { name: string }) => p.name === planName).id } : {}),
			startedAt: new Date().toISOString(),
			targetDistanceM: 5,
			elevationDeg: 2.3,
			launchHeightM: 1.2,
			aimHeightM: 1.2,
			downrangeChronoM: 4.5,
			temperatureC: 5,
			pressurePa: 101_000,
			relativeHumidity: 0.7
		}
	});
	expect(response.status(), await response.text()).toBe(201);
	return (await response.json()).id as number;
}
