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
