// Helpers for the account tests: read the mail sink's folder, reach the test database, and make a
// throwaway account through the real invitation flow (so demo accounts are never locked or changed).
import { readdir, readFile } from 'node:fs/promises';
import path from 'node:path';
import { expect, type Browser, type Page } from '@playwright/test';
import { simpleParser } from 'mailparser';
import mysql from 'mysql2/promise';
import { ROLE_LABELS, type Role } from '../../src/lib/roles';
import { signIn } from './support';

function mailDir() {
	const dir = process.env.MAIL_DIR;
	if (!dir) throw new Error('MAIL_DIR is not set: run the browser tests through `npm test`.');
	return dir;
}

export type ReceivedMail = { file: string; to: string; subject: string; text: string };

async function mailTo(address: string): Promise<ReceivedMail[]> {
	const dir = mailDir();
	const names = (await readdir(dir)).filter((n) => n.endsWith('.eml')).sort();
	const found: ReceivedMail[] = [];
	for (const name of names) {
		const parsed = await simpleParser(await readFile(path.join(dir, name)));
		const to = [parsed.to ?? []].flat().map((a) => a.text).join(', ');
		if (to.toLowerCase().includes(address.toLowerCase())) found.push({ file: name, to, subject: parsed.subject ?? '', text: parsed.text ?? '' });
	}
	return found;
}

/** Wait until `count` messages to the address have reached the sink; returns them, oldest first. */
export async function waitForMail(address: string, count = 1): Promise<ReceivedMail[]> {
	let messages: ReceivedMail[] = [];
	await expect
		.poll(async () => (messages = await mailTo(address)).length, { timeout: 15_000, message: `mail to ${address} in ${mailDir()}` })
		.toBeGreaterThanOrEqual(count);
	return messages;
}

export function setPasswordLink(mail: ReceivedMail) {
	const link = mail.text.match(/https?:\/\/\S+\/set-password\/[A-Za-z0-9_-]+/)?.[0];
	if (!link) throw new Error(`no set-password link in "${mail.subject}":\n${mail.text}`);
	return link;
}

/** The test database (for clean-up only; the tests act through the app). */
export async function withDatabase<T>(work: (db: mysql.Connection) => Promise<T>) {
	const url = process.env.DATABASE_URL;
	if (!url) throw new Error('DATABASE_URL is not set: run the browser tests through `npm test`.');
	const connection = await mysql.createConnection(url);
	try {
		return await work(connection);
	} finally {
		await connection.end();
	}
}

/**
 * Forget sign-in failures from this machine's address (all browser tests share 127.0.0.1) and for
 * the given accounts, so a test that fails sign-ins on purpose cannot lock out the tests after it.
 */
export async function clearSignInFailures(emails: string[] = []) {
	await withDatabase(async (db) => {
		await db.query("DELETE FROM sign_in_limits WHERE `key` LIKE 'address:%127.0.0.1'");
		for (const email of emails) await db.query('DELETE FROM sign_in_limits WHERE `key` = ?', [`account:${email.toLowerCase()}`]);
	});
}

/** Submit the sign-in form; the caller checks what happened (see signInWith for the usual case). */
export async function submitSignIn(page: Page, email: string, password: string) {
	await page.goto('/signin');
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill(password);
	await page.getByRole('button', { name: 'Sign in' }).click();
}

/** Sign in and wait until the app's shell is there (so the session cookie is set). */
export async function signInWith(page: Page, email: string, password: string) {
	await submitSignIn(page, email, password);
	await expect(page.getByRole('navigation', { name: 'Main' })).toBeVisible();
}

let serial = 0;

/** Different on every call and every run (names and addresses must not repeat between runs). */
function stamp() {
	return `${Date.now().toString(36)}${++serial}`;
}

export function uniqueEmail(what: string) {
	return `${what}-${stamp()}@northfold-range.test`;
}

/**
 * Wait until the page's scripts have loaded and taken over the server-rendered HTML. A choice
 * made in a select before that would be put back to the form's value by hydration.
 */
export async function settled(page: Page) {
	await page.waitForLoadState('networkidle');
}

export async function choosePassword(page: Page, link: string, password: string) {
	await page.goto(link);
	await settled(page);
	await page.getByLabel('New password', { exact: true }).fill(password);
	await page.getByLabel('New password again').fill(password);
	await page.getByRole('button', { name: 'Save the password' }).click();
	await expect(page).toHaveURL(/\/signin\?password=set$/);
}

/**
 * An admin opens a person's page from the user list. A full page load (not a click) so that
 * settled() has something to wait for: after a client-side navigation the page counts as idle
 * already, and a select changed before the new page's scripts finish would be put back.
 */
export async function openUserPage(page: Page, name: string) {
	await page.goto('/users');
	const href = await page.getByRole('link', { name, exact: true }).getAttribute('href');
	if (!href) throw new Error(`no link to ${name} on /users`);
	await page.goto(href);
	await settled(page);
}

/** An admin invites a new person by e-mail; they choose a password through the mailed link. */
export async function inviteAndActivate(browser: Browser, role: Role, what = 'person') {
	const email = uniqueEmail(what);
	const name = `Test ${what} ${stamp()}`;
	const password = `range-test-${what}-password`;
	const admin = await browser.newContext();
	const adminPage = await admin.newPage();
	await signIn(adminPage, 'admin');
	await adminPage.goto('/users');
	await settled(adminPage);
	await adminPage.getByLabel('E-mail').fill(email);
	await adminPage.getByLabel('Name').fill(name);
	await adminPage.getByLabel('Role', { exact: true }).selectOption({ label: ROLE_LABELS[role] });
	await adminPage.getByRole('button', { name: 'Send invitation' }).click();
	await expect(adminPage.getByRole('status')).toContainText(`Invitation sent to ${email}`);
	await admin.close();

	const [mail] = await waitForMail(email);
	const visitor = await browser.newContext();
	await choosePassword(await visitor.newPage(), setPasswordLink(mail), password);
	await visitor.close();
	return { email, name, password, link: setPasswordLink(mail) };
}
