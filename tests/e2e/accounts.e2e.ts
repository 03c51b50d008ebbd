// Accounts end to end: invitations and password links through the mail sink, sessions that end
// when an account is disabled, API tokens, the sign-in rate limit, the session cookie's flags.
import { expect, test } from '@playwright/test';
import { DEMO_PASSWORD } from '../../scripts/lib/demo-users.mjs';
import { demoUser, signIn } from './support';
import {
	choosePassword,
	clearSignInFailures,
	inviteAndActivate,
	openUserPage,
	setPasswordLink,
	settled,
	signInWith,
	submitSignIn,
	uniqueEmail,
	waitForMail
} from './accounts-support';

const RESET_ANSWER = 'If an active account uses that address, a link to set a new password is on its way.';

test('the session cookie set at sign-in is HttpOnly and SameSite=Lax', async ({ request, baseURL }) => {
	const viewer = demoUser('viewer');
	const response = await request.post('/signin?/signIn', {
		form: { email: viewer.email, password: DEMO_PASSWORD },
		headers: { origin: baseURL!, accept: 'text/html' },
		maxRedirects: 0
	});
	expect(response.status()).toBe(303);
	const cookies = response.headersArray().filter((h) => h.name.toLowerCase() === 'set-cookie').map((h) => h.value);
	const session = cookies.find((c) => /^(__Secure-)?authjs\.session-token=/.test(c));
	expect(session, cookies.join('\n')).toBeDefined();
	expect(session).toMatch(/;\s*HttpOnly/i);
	expect(session).toMatch(/;\s*SameSite=Lax/i);
});

test('signing out ends the session and returns to the sign-in page', async ({ page }) => {
	await signIn(page, 'viewer');
	await page.getByRole('button', { name: 'Sign out' }).click();
	await expect(page).toHaveURL(/\/signin$/);
	expect((await page.context().cookies()).map((c) => c.name)).not.toContain('authjs.session-token');
	await page.goto('/profile');
	await expect(page).toHaveURL(/\/signin\?next=%2Fprofile$/);
});

test('an invitation e-mail arrives, its link sets a password that signs in, and it works only once', async ({ browser, page }) => {
	const person = await inviteAndActivate(browser, 'range_officer', 'invitee');
	const [mail] = await waitForMail(person.email);
	expect(mail.subject).toBe('Your Shotwright account: choose a password');
	expect(mail.text).toContain('role: Range officer');

	await page.goto('/signin?password=set');
	await expect(page.getByRole('status')).toHaveText('Your password is saved. Sign in with it now.');
	await signInWith(page, person.email, person.password);
	await expect(page.getByRole('link', { name: new RegExp(person.name) })).toBeVisible();

	const again = await browser.newPage();
	await again.goto(person.link);
	await expect(again.getByRole('heading', { name: 'This link no longer works' })).toBeVisible();
	await again.close();
});

test('an admin sees the invitation on the Mail page and can open it', async ({ browser, page }) => {
	const person = await inviteAndActivate(browser, 'viewer', 'mailcheck');
	await signIn(page, 'admin');
	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Mail' }).click();
	await expect(page.getByRole('heading', { name: 'Mail sent by Shotwright' })).toBeVisible();
	const row = page.getByRole('row').filter({ hasText: person.email });
	await row.getByRole('link', { name: 'Your Shotwright account: choose a password' }).click();
	await expect(page.getByTestId('mail-body')).toContainText('/set-password/');
	await expect(page.getByTestId('mail-body')).toContainText(person.name);
});

test('password reset: same answer for any address, the link sets a new password once', async ({ browser, page }) => {
	const person = await inviteAndActivate(browser, 'analyst', 'resetter');

	await page.goto('/signin');
	await page.getByRole('link', { name: 'Forgot your password?' }).click();
	await expect(page.getByRole('heading', { name: 'Set a new password' })).toBeVisible();
	await page.getByLabel('E-mail').fill(uniqueEmail('nobody'));
	await page.getByRole('button', { name: 'E-mail me a link' }).click();
	await expect(page.getByRole('status')).toContainText(RESET_ANSWER);
	const answerForUnknown = await page.getByRole('status').textContent();

	await page.goto('/forgot-password');
	await page.getByLabel('E-mail').fill(person.email);
	await page.getByRole('button', { name: 'E-mail me a link' }).click();
	await expect(page.getByRole('status')).toHaveText(answerForUnknown!);

	const messages = await waitForMail(person.email, 2);
	const reset = messages.find((m) => m.subject === 'Shotwright: set a new password');
	expect(reset, messages.map((m) => m.subject).join(', ')).toBeDefined();
	const link = setPasswordLink(reset!);
	const newPassword = 'a fresh password after reset';
	await choosePassword(page, link, newPassword);

	await submitSignIn(page, person.email, person.password);
	await expect(page.getByText('That e-mail and password do not match an active account.')).toBeVisible();
	await signInWith(page, person.email, newPassword);

	const again = await browser.newPage();
	await again.goto(link);
	await expect(again.getByRole('heading', { name: 'This link no longer works' })).toBeVisible();
	await again.close();
});

test('a disabled user’s open session is refused on its next request, and works again once enabled', async ({ browser }) => {
	const person = await inviteAndActivate(browser, 'analyst', 'disabled');
	const userContext = await browser.newContext();
	const userPage = await userContext.newPage();
	await signInWith(userPage, person.email, person.password);
	await userPage.goto('/profile');
	await expect(userPage.getByRole('heading', { name: 'Your profile' })).toBeVisible();

	const adminContext = await browser.newContext();
	const adminPage = await adminContext.newPage();
	await signIn(adminPage, 'admin');
	await openUserPage(adminPage, person.name);
	await adminPage.getByRole('button', { name: 'Disable account' }).click();
	await expect(adminPage.getByRole('status')).toContainText('Account disabled');
	await expect(adminPage.getByTestId('account-status')).toContainText('Disabled');

	await userPage.reload();
	await expect(userPage).toHaveURL(/\/signin\?next=%2Fprofile$/);
	await expect(userPage.getByRole('heading', { name: 'Sign in to Shotwright' })).toBeVisible();

	await adminPage.getByRole('button', { name: 'Enable account' }).click();
	await expect(adminPage.getByTestId('account-status')).toContainText('Active');
	// Signing in from the page the guard sent them to brings them back where they were.
	await userPage.getByLabel('E-mail').fill(person.email);
	await userPage.getByLabel('Password').fill(person.password);
	await userPage.getByRole('button', { name: 'Sign in' }).click();
	await expect(userPage).toHaveURL(/\/profile$/);
	await userContext.close();
	await adminContext.close();
});

test('API tokens: created on the profile page, shown once, act with the user’s current role, 401 once revoked', async ({ browser, page, request }) => {
	const person = await inviteAndActivate(browser, 'viewer', 'scripter');
	await signInWith(page, person.email, person.password);
	await page.goto('/profile');
	await page.getByLabel('Token name').fill('chronograph uploader');
	await page.getByRole('button', { name: 'Create token' }).click();
	const token = (await page.getByTestId('new-token').textContent())!.trim();
	expect(token).toMatch(/^swt_[A-Za-z0-9_-]{43}$/);

	const me = () => request.get('/api/v1/me', { headers: { authorization: `Bearer ${token}` } });
	let response = await me();
	expect(response.status()).toBe(200);
	expect(await response.json()).toMatchObject({ email: person.email, role: 'viewer', authenticatedBy: 'token' });

	// An admin promotes the person: the same token now acts as a lead, on the very next request.
	const adminContext = await browser.newContext();
	const adminPage = await adminContext.newPage();
	await signIn(adminPage, 'admin');
	await openUserPage(adminPage, person.name);
	await adminPage.getByLabel('Role', { exact: true }).selectOption({ label: 'Lead' });
	await adminPage.getByRole('button', { name: 'Save role' }).click();
	await expect(adminPage.getByRole('status')).toContainText('Role changed to Lead');
	await adminContext.close();
	expect(await (await me()).json()).toMatchObject({ role: 'lead' });

	// The role change ended the person's browser session: they sign in again, under the new role.
	await page.reload();
	await expect(page).toHaveURL(/\/signin\?next=%2Fprofile$/);
	await signInWith(page, person.email, person.password);
	await page.goto('/profile');
	await expect(page.getByTestId('new-token')).toHaveCount(0);
	const row = page.getByRole('row').filter({ hasText: 'chronograph uploader' });
	await expect(row).toContainText(token.slice(0, 10));
	await expect(row.getByRole('cell').nth(3)).not.toHaveText('never');
	await row.getByRole('button', { name: 'Revoke token chronograph uploader' }).click();
	await expect(row).toContainText('Revoked');

	response = await me();
	expect(response.status()).toBe(401);
	expect(await response.json()).toMatchObject({ message: 'The API token is unknown or revoked.' });
});

test('POST /api/v1/tokens trades e-mail and password for a token; bad bodies and passwords get JSON errors', async ({ request }) => {
	const analyst = demoUser('analyst');
	const bad = await request.post('/api/v1/tokens', { data: { email: 'not-an-address', name: '' } });
	expect(bad.status()).toBe(400);
	const badBody = await bad.json();
	expect(badBody.message).toBe('Some fields are missing or wrong: email, password, name.');
	expect(badBody.issues.map((i: { path: string }) => i.path).sort()).toEqual(['email', 'name', 'password']);

	const notJson = await request.post('/api/v1/tokens', { data: Buffer.from('{"email": '), headers: { 'content-type': 'application/json' } });
	expect(notJson.status()).toBe(400);
	expect(await notJson.json()).toEqual({ message: 'The body is not valid JSON.', issues: [{ path: '', message: 'The body is not valid JSON.' }] });

	const wrong = await request.post('/api/v1/tokens', { data: { email: analyst.email, password: 'not the password', name: 'x' } });
	expect(wrong.status()).toBe(401);
	expect(await wrong.json()).toEqual({ message: 'That e-mail and password do not match an active account.', issues: [] });

	const issued = await request.post('/api/v1/tokens', { data: { email: analyst.email, password: DEMO_PASSWORD, name: 'nightly export' } });
	expect(issued.status()).toBe(201);
	const body = await issued.json();
	expect(body).toMatchObject({ name: 'nightly export', id: expect.any(Number), token: expect.stringMatching(/^swt_/) });
	const me = await request.get('/api/v1/me', { headers: { authorization: `Bearer ${body.token}` } });
	expect(await me.json()).toMatchObject({ email: analyst.email, role: 'analyst' });

	const anonymous = await request.get('/api/v1/me');
	expect(anonymous.status()).toBe(401);
	expect(await anonymous.json()).toMatchObject({ message: expect.stringContaining('Sign in first') });
	await clearSignInFailures([analyst.email]);
});

test('the sign-in rate limit engages after repeated failures and says so clearly', async ({ browser, page }) => {
	const person = await inviteAndActivate(browser, 'viewer', 'locked');
	await clearSignInFailures();
	try {
		for (let attempt = 1; attempt <= 5; attempt++) {
			await submitSignIn(page, person.email, `wrong password ${attempt}`);
			await expect(page.getByText('That e-mail and password do not match an active account.')).toBeVisible();
		}
		// Now even the right password is refused until the window has passed.
		await submitSignIn(page, person.email, person.password);
		await expect(page.getByRole('alert')).toHaveText(
			'Too many failed sign-ins. Wait 15 minutes and try again, or ask an admin to reset your password.'
		);
		await expect(page).toHaveURL(/\/signin/);
	} finally {
		await clearSignInFailures([person.email]);
	}
});

test('the profile page changes the password (with clear field errors) and the display units', async ({ browser, page }) => {
	const person = await inviteAndActivate(browser, 'lead', 'profile');
	await signInWith(page, person.email, person.password);
	await page.goto('/profile');
	await settled(page);

	await page.getByLabel('Current password').fill(person.password);
	await page.getByLabel('New password', { exact: true }).fill('too short');
	await page.getByLabel('New password again').fill('something else');
	await page.getByRole('button', { name: 'Change password' }).click();
	await expect(page.getByText('The new password needs at least 12 characters.')).toBeVisible();
	await expect(page.getByText('The two passwords differ; type the same one twice.')).toBeVisible();

	const next = 'a longer password for the profile test';
	await page.getByLabel('Current password').fill('not my password at all');
	await page.getByLabel('New password', { exact: true }).fill(next);
	await page.getByLabel('New password again').fill(next);
	await page.getByRole('button', { name: 'Change password' }).click();
	await expect(page.getByText('The current password is not right.')).toBeVisible();

	await page.getByLabel('Current password').fill(person.password);
	await page.getByLabel('New password', { exact: true }).fill(next);
	await page.getByLabel('New password again').fill(next);
	await page.getByRole('button', { name: 'Change password' }).click();
	await expect(page.getByRole('status')).toContainText('Password changed.');

	await page.getByLabel('Pressure').selectOption('psi');
	await page.getByLabel('Speed').selectOption('ft/s');
	await page.getByRole('button', { name: 'Save units' }).click();
	await expect(page.getByText('Display units saved.')).toBeVisible();
	await page.reload();
	await settled(page);
	await expect(page.getByLabel('Pressure')).toHaveValue('psi');
	await expect(page.getByLabel('Speed')).toHaveValue('ft/s');

	await page.getByRole('button', { name: 'Sign out' }).click();
	await expect(page).toHaveURL(/\/signin$/);
	await signInWith(page, person.email, next);
	await clearSignInFailures([person.email]);
});

test('the last active admin cannot demote themselves; only admins see Users and Mail', async ({ page, browser }) => {
	const admin = await signIn(page, 'admin');
	const nav = page.getByRole('navigation', { name: 'Main' });
	await expect(nav.getByRole('link', { name: 'Users' })).toBeVisible();
	await expect(nav.getByRole('link', { name: 'Mail' })).toBeVisible();
	await openUserPage(page, admin.name);
	await page.getByLabel('Role', { exact: true }).selectOption({ label: 'Lead' });
	await page.getByRole('button', { name: 'Save role' }).click();
	await expect(page.getByRole('alert')).toContainText('is the last active admin');
	await page.reload();
	await expect(page.getByLabel('Role', { exact: true })).toHaveValue('admin');
	await expect(page.getByText('This is your own account.')).toBeVisible();

	const lead = await browser.newPage();
	await signIn(lead, 'lead');
	await expect(lead.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Users' })).toHaveCount(0);
	const refused = await lead.goto('/users');
	expect(refused?.status()).toBe(403);
	await lead.close();
});
