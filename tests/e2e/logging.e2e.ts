import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { expect, test, type Page } from '@playwright/test';
import { openSession, signIn } from './support';

// A 10-inch tablet in portrait, with touch (the firing line's device).
test.use({ viewport: { width: 800, height: 1280 }, hasTouch: true });


async function logShot(page: Page, n: number) {
	await page.getByLabel(/^Muzzle speed/).fill((25 + (n % 5) * 0.1).toFixed(2));
	await page.getByLabel(/^Impact x/).fill(String((n % 7) - 3));
	await page.getByLabel(/^Impact y/).fill(String((n % 5) - 2));
	await page.getByRole('button', { name: 'Save shot' }).click();
}

test('a range officer logs 25 shots through a network outage and a reload; each is stored once, and the close-out report reaches the leads', async ({ page, context, browser }) => {
	await signIn(page, 'range_officer');
	const title = `Offline drill ${Date.now()}`;
	const sessionId = await openSession(page, title);

	await page.goto(`/sessions/${sessionId}/log`);
	// Let the service worker take control and cache this page, as a tablet does on its first visit.
	await page.evaluate(async () => {
		await navigator.serviceWorker.ready;
	});
	await page.reload();
	await expect.poll(() => page.evaluate(() => navigator.serviceWorker.controller !== null)).toBe(true);

	await page.getByLabel(/^Fill pressure/).fill('0.83');
	for (let n = 1; n <= 20; n++) {
		await logShot(page, n);
		await expect(page.getByTestId('queue-count')).toHaveText('0 waiting to send');
		await expect(page.getByTestId('feedback')).toContainText('Saved');
		// The page reloads its data after each save; wait for it, as an officer glances at the table.
		await expect(page.getByTestId('recent-shot').first().locator('td').first()).toHaveText(String(n));
	}

	await context.setOffline(true);
	for (let n = 21; n <= 25; n++) {
		await logShot(page, n);
		await expect(page.getByTestId('queue-count')).toHaveText(`${n - 20} waiting to send`);
	}
	await expect(page.getByTestId('feedback')).toContainText('Kept on this tablet');

	// A reload while offline: the page comes from the service worker, the queue from the tablet.
	await page.reload();
	await expect(page.getByTestId('queue-count')).toHaveText('5 waiting to send');

	await context.setOffline(false);
	await expect(page.getByTestId('queue-count')).toHaveText('0 waiting to send', { timeout: 20_000 });

	const list = await (await page.request.get(`/api/v1/sessions/${sessionId}/shots?pageSize=100`)).json();
	const sequences = list.rows.map((s: { sequence: number }) => s.sequence).sort((a: number, b: number) => a - b);
	expect(sequences).toEqual(Array.from({ length: 25 }, (_, i) => i + 1));
	expect(new Set(list.rows.map((s: { clientUuid: string }) => s.clientUuid)).size).toBe(25);

	await page.goto(`/sessions/${sessionId}`);
	await expect(page.getByTestId('shot-count')).toHaveText('25');
	await expect(page.getByTestId('shots-table').locator('tbody tr')).toHaveCount(25);

	// The lead closes the session; the report goes out by e-mail.
	const leadContext = await browser.newContext();
	const lead = await leadContext.newPage();
	await signIn(lead, 'lead');
	await lead.goto(`/sessions/${sessionId}`);
	await lead.getByRole('button', { name: 'Close session' }).click();
	await expect(lead.getByTestId('session-status')).toHaveText('■ Closed');
	await expect(lead.getByText(/The report is on its way to \d+ lead/)).toBeVisible();

	const mailDir = process.env.MAIL_DIR;
	if (!mailDir) throw new Error('MAIL_DIR is not set: run through npm test');
	await expect
		.poll(() =>
			readdirSync(mailDir)
				.map((f) => readFileSync(path.join(mailDir, f), 'utf8'))
				.some((m) => m.includes(`Session closed: ${title}`) && m.includes(`/sessions/${sessionId}/report`))
		)
		.toBe(true);
	await leadContext.close();

	// A closed session refuses a range officer's shot.
	const refused = await page.request.post(`/api/v1/sessions/${sessionId}/shots`, {
		headers: { origin: new URL(page.url()).origin },
		data: { clientUuid: crypto.randomUUID(), fillGaugePa: 83_000, muzzleSpeedMps: 25 }
	});
	expect(refused.status()).toBe(403);
});
