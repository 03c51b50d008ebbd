// The firing line on a 10-inch tablet (issue 15, items 1–4): the logging page kept offline when
// reached by in-app navigation, the offline page for pages not kept, a fill above the rig's rating
// confirmed as a safety event, void and re-shoot, the stop notice, and an audited correction.
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { expect, test, type Page } from '@playwright/test';
import { openSession, signIn } from './support';
import { withDatabase } from './accounts-support';

const PLAN = 'Hail 25 mm at 23.0 m/s';

test.use({ viewport: { width: 800, height: 1280 }, hasTouch: true });


/** One shot; the downrange speed decides the verdict against the plan's 23.0 m/s ± 5 %. */
async function logShot(page: Page, downrange: string, fill = '0.83') {
	await page.getByLabel(/^Fill pressure/).fill(fill);
	await page.getByLabel(/^Muzzle speed/).fill('25.1');
	await page.getByLabel(/^Downrange speed/).fill(downrange);
	await page.getByLabel(/^Impact x/).fill('2');
	await page.getByLabel(/^Impact y/).fill('-1');
	await page.getByRole('button', { name: 'Save shot' }).click();
}

test('reached by in-app navigation, the logging page reloads offline; 5 queued shots are each stored once; a page not kept shows the offline page', async ({ page, context }) => {
	await signIn(page, 'range_officer');
	const title = `Navigated drill ${Date.now()}`;
	const sessionId = await openSession(page, title, PLAN);

	// Sign-in → Sessions → the session → Log shots, all in-app.
	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Sessions' }).click();
	await page.getByRole('link', { name: title }).click();
	await page.getByRole('link', { name: 'Log shots' }).click();
	await expect(page.getByRole('heading', { name: 'Log shots' })).toBeVisible();
	await expect.poll(() => page.evaluate(() => navigator.serviceWorker.controller !== null), { timeout: 15_000 }).toBe(true);
	await expect.poll(() => page.evaluate(async (id) => (await caches.match(`/sessions/${id}/log`)) !== undefined, sessionId), { timeout: 15_000 }).toBe(true);

	await context.setOffline(true);
	await page.reload();
	await expect(page.getByRole('heading', { name: 'Log shots' })).toBeVisible();
	for (let n = 1; n <= 5; n++) {
		await logShot(page, '23.0');
		await expect(page.getByTestId('queue-count')).toHaveText(`${n} waiting to send`);
	}
	await page.reload();
	await expect(page.getByTestId('queue-count')).toHaveText('5 waiting to send');

	// A page this tablet never kept: the app's offline page, listing the shots waiting.
	await page.goto('/rigs');
	await expect(page.getByRole('heading', { name: '▲ Offline' })).toBeVisible();
	await expect(page.getByTestId('offline-queue')).toContainText('5 shots');
	await page.getByRole('link', { name: 'Log shots' }).click();
	await expect(page.getByTestId('queue-count')).toHaveText('5 waiting to send');

	await context.setOffline(false);
	await expect(page.getByTestId('queue-count')).toHaveText('0 waiting to send', { timeout: 20_000 });
	const list = await (await page.request.get(`/api/v1/sessions/${sessionId}/shots?pageSize=100`)).json();
	expect(list.rows.map((s: { sequence: number }) => s.sequence).sort()).toEqual([1, 2, 3, 4, 5]);
	expect(new Set(list.rows.map((s: { clientUuid: string }) => s.clientUuid)).size).toBe(5);
});

test('a fill above the rig’s rating is held as a likely typo; confirmed, it is kept as a safety event and mailed to the leads', async ({ page }) => {
	await signIn(page, 'range_officer');
	const title = `Over-rating ${Date.now()}`;
	const sessionId = await openSession(page, title, PLAN);
	await page.goto(`/sessions/${sessionId}/log`);

	// 12 bar on the 8 bar H1 rig.
	await logShot(page, '23.0', '12');
	const held = page.getByTestId('above-rating');
	await expect(held).toContainText('most likely a typo');
	await expect(page.getByTestId('queue-count')).toHaveText('0 waiting to send');
	await held.getByRole('button', { name: 'Confirm: it was fired so' }).click();
	await expect(page.getByTestId('feedback')).toContainText('Saved');
	await expect(page.getByTestId('recent-shot').first()).toContainText('▲ above rating');
	await expect(page.getByTestId('verdict')).toContainText('safety event');

	const shotsList = await (await page.request.get(`/api/v1/sessions/${sessionId}/shots`)).json();
	expect(shotsList.rows[0]).toMatchObject({ aboveRating: true, fillGaugePa: 1_200_000 });
	const mailDir = process.env.MAIL_DIR;
	if (!mailDir) throw new Error('MAIL_DIR is not set: run through npm test');
	await expect
		.poll(() => readdirSync(mailDir).some((f) => readFileSync(path.join(mailDir, f), 'utf8').includes(`Safety: shot above rated pressure in ${title}`)))
		.toBe(true);

	// The API refuses the same without the acknowledgement, naming the field.
	const refused = await page.request.post(`/api/v1/sessions/${sessionId}/shots`, {
		headers: { origin: new URL(page.url()).origin },
		data: { clientUuid: crypto.randomUUID(), fillGaugePa: 1_200_000 }
	});
	expect(refused.status()).toBe(422);
	expect((await refused.json()).issues[0].path).toBe('fillGaugePa');
});

test('the firing-line guard: verdicts with reasons, the stop notice, void and re-shoot, the valid count, and an audited correction', async ({ page }) => {
	await signIn(page, 'range_officer');
	const sessionId = await openSession(page, `Guard ${Date.now()}`, PLAN);
	await page.goto(`/sessions/${sessionId}/log`);

	for (let n = 1; n <= 3; n++) {
		await logShot(page, '20.0');
		await expect(page.getByTestId('verdict')).toContainText(`✕ Shot #${n}: out of tolerance`);
	}
	await expect(page.getByTestId('verdict')).toContainText('below the required');
	await expect(page.getByTestId('stop-notice')).toContainText('3 shots in a row out of tolerance');
	await expect(page.getByTestId('valid-count')).toHaveText('0 of 11');

	// Void the last one (the chronograph misread) and fire again.
	await page.getByRole('button', { name: '⊘ Void and re-shoot' }).click();
	await page.getByLabel('Why void shot #3?').fill('Chronograph misread');
	await page.getByRole('button', { name: 'Void shot #3' }).click();
	await expect(page.getByTestId('action-done')).toContainText('Shot #3 voided');
	await expect(page.getByTestId('verdict')).toContainText('⊘ Shot #3 voided: Chronograph misread');
	await expect(page.getByTestId('stop-notice')).toHaveCount(0);
	await expect(page.getByTestId('recent-shot').first()).toContainText('voided: Chronograph misread');

	await logShot(page, '23.1');
	await expect(page.getByTestId('verdict')).toContainText('✓ Shot #4: within tolerance');
	await expect(page.getByTestId('valid-count')).toHaveText('1 of 11');
	await expect(page.getByTestId('running')).toContainText('n = 3');

	// Correct shot 4's muzzle speed; the audit keeps before and after.
	await page.getByRole('button', { name: 'Correct shot 4' }).click();
	await page.getByLabel(/^Muzzle speed/).last().fill('25.4');
	await page.getByRole('button', { name: 'Save correction' }).click();
	await expect(page.getByTestId('action-done')).toContainText('Shot #4 corrected');
	const shot4 = (await (await page.request.get(`/api/v1/sessions/${sessionId}/shots`)).json()).rows.find((s: { sequence: number }) => s.sequence === 4);
	expect(shot4.muzzleSpeedMps).toBeCloseTo(25.4, 10);
	const audit = await withDatabase(async (db) => {
		const [rows] = await db.query('SELECT action, user_id, `before`, `after` FROM audit_events WHERE entity_type = ? AND entity_id = ? ORDER BY id', ['shot', String(shot4.id)]);
		return rows as { action: string; user_id: number; before: unknown; after: unknown }[];
	});
	expect(audit.map((a) => a.action)).toContain('update');
	const update = audit.find((a) => a.action === 'update')!;
	const parse = (v: unknown) => (typeof v === 'string' ? JSON.parse(v) : v) as { muzzleSpeedMps: number; enteredBy: number };
	expect(parse(update.before).muzzleSpeedMps).toBeCloseTo(25.1, 10);
	expect(parse(update.after).muzzleSpeedMps).toBeCloseTo(25.4, 10);
	expect(parse(update.after).enteredBy).toBe(update.user_id);

	// A refusal is in words, keeps what was typed, and goes on the next success.
	await page.getByRole('button', { name: 'Correct shot 4' }).click();
	await page.getByLabel(/^Fill pressure/).last().fill('12');
	await page.getByRole('button', { name: 'Save correction' }).click();
	await expect(page.getByTestId('action-error')).toContainText('rated working pressure');
	await expect(page.getByLabel(/^Fill pressure/).last()).toHaveValue('12');
	await page.getByLabel(/^Fill pressure/).last().fill('0.83');
	await page.getByRole('button', { name: 'Save correction' }).click();
	await expect(page.getByTestId('action-error')).toHaveCount(0);
	await expect(page.getByTestId('action-done')).toContainText('Shot #4 corrected');
});
