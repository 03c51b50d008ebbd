import { expect, test } from '@playwright/test';
import { signIn } from './support';

test('an anonymous visitor is sent to sign in', async ({ page }) => {
	await page.goto('/');
	await expect(page).toHaveURL(/\/signin\?next=%2F/);
	await expect(page.getByRole('heading', { name: 'Sign in to Shotwright' })).toBeVisible();
});

test('a wrong password is refused with a clear message', async ({ page }) => {
	await page.goto('/signin');
	await page.getByLabel('E-mail').fill('viewer@northfold-range.test');
	await page.getByLabel('Password').fill('not-the-password');
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page.getByText('That e-mail and password do not match an active account.')).toBeVisible();
});

test('the overview reads the demo lab from MariaDB', async ({ page }) => {
	await signIn(page, 'viewer');
	await expect(page.getByRole('heading', { name: 'Range overview' })).toBeVisible();
	// Other specs add rigs and sessions to the same test database: compare with what MariaDB holds now.
	const rigs = await (await page.request.get('/api/v1/rigs?pageSize=1')).json();
	const open = await (await page.request.get('/api/v1/sessions?status=open&pageSize=1')).json();
	expect(rigs.total).toBeGreaterThanOrEqual(3);
	await expect(page.getByTestId('rig-count')).toHaveText(String(rigs.total));
	await expect(page.getByTestId('open-session-count')).toHaveText(String(open.total));
	const shotsThisWeek = Number(await page.getByTestId('shots-this-week').textContent());
	expect(shotsThisWeek).toBeGreaterThan(0);
	await expect(page.getByRole('cell', { name: 'H1 qualification run B' })).toBeVisible();
});

test('health reports the database and the applied migration', async ({ request }) => {
	const response = await request.get('/api/v1/health');
	expect(response.status()).toBe(200);
	const body = await response.json();
	expect(body).toMatchObject({ ok: true, database: 'reachable', migration: { pending: false } });
	expect(body.migration.applied).toMatch(/^0\d{3}_/);
});

test('an unknown API route answers 404', async ({ request }) => {
	expect((await request.get('/api/v1/no-such-thing')).status()).toBe(404);
});
