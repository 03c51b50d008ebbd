import { expect, test } from '@playwright/test';
import { signIn } from './support';

test('an analyst describes a rig in bar, litres and millimetres; it is stored in SI and shown back in those units', async ({ page }) => {
	await signIn(page, 'analyst');
	const name = `T-${Date.now()} test rig`;
	await page.goto('/rigs/new');
	await expect(page.getByText('Compressed gas stores energy')).toBeVisible();
	await page.getByLabel(/^Name/).fill(name);
	await page.getByLabel(/^Valve type/).fill('Solenoid poppet');
	await page.getByLabel(/^Reservoir gas volume/).fill('1,5');
	await page.getByLabel(/^Dead volume/).fill('0.04');
	await page.getByLabel(/^Bore diameter/).fill('-25');
	await page.getByLabel(/^Projectile travel/).fill('1.1');
	await page.getByLabel(/^Rated working pressure/).fill('8');
	await page.getByRole('button', { name: 'Create rig' }).click();
	// A negative bore is refused with a message naming the field; nothing is stored.
	await expect(page.getByText('Bore diameter must be more than 0 m.').first()).toBeVisible();
	await page.getByLabel(/^Bore diameter/).fill('25.4');
	await page.getByRole('button', { name: 'Create rig' }).click();
	await expect(page).toHaveURL(/\/rigs\/\d+\?saved=1/);
	await expect(page.getByText('✓ Rig created.')).toBeVisible();

	const id = Number(new URL(page.url()).pathname.split('/').pop());
	const stored = await (await page.request.get(`/api/v1/rigs/${id}`)).json();
	// Exact SI values: 1.5 L = 1.5e-3 m³, 25.4 mm = 0.0254 m, 8 bar = 8e5 Pa (SI Brochure; NIST SP 811).
	expect(stored.reservoirM3).toBeCloseTo(1.5e-3, 12);
	expect(stored.boreDiameterM).toBeCloseTo(0.0254, 12);
	expect(stored.ratedPressurePa).toBeCloseTo(8e5, 6);
	await expect(page.getByLabel(/^Bore diameter/)).toHaveValue('25.4');

	// A second rig with the same name is refused on the name field.
	await page.goto('/rigs/new');
	await page.getByLabel(/^Name/).fill(name);
	await page.getByLabel(/^Valve type/).fill('x');
	await page.getByLabel(/^Reservoir gas volume/).fill('1');
	await page.getByLabel(/^Bore diameter/).fill('20');
	await page.getByLabel(/^Projectile travel/).fill('1');
	await page.getByLabel(/^Rated working pressure/).fill('5');
	await page.getByRole('button', { name: 'Create rig' }).click();
	await expect(page.getByText(/A rig with this name already exists/).first()).toBeVisible();

	// Soft delete, then restore from the deleted list.
	await page.goto(`/rigs/${id}`);
	await page.getByRole('button', { name: /Delete rig/ }).click();
	await expect(page).toHaveURL(/\/rigs$/);
	await expect(page.getByRole('link', { name })).toHaveCount(0);
	await page.goto('/rigs?deleted=1');
	await page.getByRole('link', { name }).click();
	await page.getByRole('button', { name: 'Restore rig' }).click();
	await expect(page.getByRole('button', { name: /Delete rig/ })).toBeVisible();
	await page.goto('/rigs');
	await expect(page.getByRole('link', { name })).toBeVisible();
});

test('a viewer reads the registries but is offered no editing, and the server refuses the form post', async ({ page }) => {
	await signIn(page, 'viewer');
	await page.goto('/rigs');
	await expect(page.getByRole('link', { name: 'New rig' })).toHaveCount(0);
	const response = await page.request.post('/rigs/new?/createRig', {
		form: { name: 'x' },
		headers: { origin: new URL(page.url()).origin, 'x-sveltekit-action': 'true' }
	});
	expect(response.status()).toBe(403);
});

test('the new-session form computes air density live with the CIPM-2007 formula', async ({ page }) => {
	await signIn(page, 'range_officer');
	await page.goto('/sessions/new');
	await page.getByLabel(/^Air temperature/).fill('20');
	await page.getByLabel(/^Barometric pressure/).fill('1.01325');
	await page.getByLabel(/^Relative humidity/).fill('0.5');
	// Picard et al., Metrologia 45 (2008) 149; reference sheet §3: 20 °C, 101 325 Pa, 50 % → 1.199 314 kg/m³.
	await expect(page.getByTestId('air-density')).toHaveText('1.1993 kg/m³');
});
