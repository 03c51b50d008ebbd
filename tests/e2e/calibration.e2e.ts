// Calibration review and setup sheets (issue 8) in the browser, on the demo lab: an analyst fits
// H2 with the 45 mm ice ball, a lead approves it, and the setup sheet for the 45 mm plan follows
// it; a viewer reads everything and can do neither. Other specs share this database, so nothing
// here assumes the demo is untouched: the fill pressure is read before and after our own approval.
import { expect, test, type Browser, type Page } from '@playwright/test';
import { signIn, type DemoRole } from './support';

const RIG = 'H2 · 45 mm hail launcher';
const PROJECTILE = 'Ice ball 45 mm';
const PLAN = 'Hail 45 mm at 30.7 m/s';

async function signedIn(browser: Browser, role: DemoRole) {
	const context = await browser.newContext();
	const page = await context.newPage();
	await signIn(page, role);
	return page;
}

/** The pair page of H2 with the 45 mm ice ball, reached from the calibrations list. */
async function openPair(page: Page) {
	await page.goto('/calibrations');
	await page.getByTestId('pairs-table').getByRole('row').filter({ hasText: RIG }).filter({ hasText: PROJECTILE }).getByRole('link', { name: PROJECTILE }).click();
	await expect(page.getByRole('heading', { level: 1, name: `${RIG} with ${PROJECTILE}` })).toBeVisible();
	return page.url();
}

/** The setup sheet's fill pressure and the calibration it used, once the sheet is solved. */
async function readSheet(page: Page) {
	await page.goto('/setup');
	await page.getByLabel('Test plan').selectOption({ label: PLAN });
	await page.getByLabel('Rig', { exact: true }).selectOption({ label: RIG });
	await page.getByLabel('Projectile', { exact: true }).selectOption({ label: PROJECTILE });
	await expect(page.getByTestId('sheet-state')).toHaveText('✓ Up to date', { timeout: 20_000 });
	await expect(page.getByTestId('fill-pressure')).toBeVisible();
	return { fill: (await page.getByTestId('fill-pressure').innerText()).trim(), calibration: await page.getByTestId('calibration-used').innerText() };
}

test('an analyst fits a calibration, a lead approves it, and the setup sheet follows it', async ({ browser }) => {
	const lead = await signedIn(browser, 'lead');
	const before = await readSheet(lead);
	expect(before.fill).toMatch(/^\d/);

	const analyst = await signedIn(browser, 'analyst');
	await openPair(analyst);
	// Fit something other than what is in force (C_D toggled), so a rerun on the same database
	// still changes the sheet.
	const inForce = (await analyst.getByTestId('approved-calibration').getAttribute('data-fitted')) ?? '';
	await analyst.getByRole('radio', { name: /^Gas work/ }).check();
	const dragBox = analyst.getByRole('checkbox', { name: /Drag coefficient C_D/ });
	if (inForce.split(',').includes('dragCoefficient')) await dragBox.uncheck();
	else await dragBox.check();
	await analyst.getByRole('button', { name: 'Fit and save as draft' }).click();
	await analyst.waitForURL(/\/calibrations\/\d+\/\d+\/\d+\?fitted=1$/, { timeout: 60_000 });
	await expect(analyst.getByTestId('calibration-status')).toHaveText('◇ Draft');
	await expect(analyst.getByText('Fitted and saved as a draft')).toBeVisible();
	const table = analyst.getByTestId('parameter-table');
	await expect(table.locator('tr[data-parameter="eta0"]')).toContainText('✓ fitted');
	await expect(table.locator('tr[data-parameter="eta0"]')).toContainText(/± 0\.\d+/);
	await expect(analyst.getByTestId('rms-table')).toContainText('Muzzle speed');
	await expect(analyst.getByTestId('muzzle-curve')).toBeVisible();
	await expect(analyst.getByTestId('residuals-pressure')).toBeVisible();
	// An analyst may fit but not approve.
	await expect(analyst.getByRole('button', { name: /Approve calibration/ })).toHaveCount(0);
	const draftUrl = new URL(analyst.url());
	const id = draftUrl.pathname.split('/').at(-1)!;

	await lead.goto(draftUrl.pathname);
	await lead.getByRole('button', { name: `Approve calibration #${id}` }).click();
	await lead.waitForURL(/\?approved=1$/);
	await expect(lead.getByTestId('calibration-status')).toHaveText('● Approved');

	const after = await readSheet(lead);
	expect(after.calibration).toContain(`calibration #${id}`);
	expect(after.fill).not.toBe(before.fill);

	// The lead's rig health page lists H2 with a status in words and a shape.
	await lead.goto('/rig-health');
	const glance = lead.getByTestId('rig-glance').getByRole('listitem').filter({ hasText: RIG });
	await expect(glance).toContainText(/(Needs attention|Watch|In good order|No recent sessions)/);
	await expect(glance.locator('[data-level]')).toHaveText(/^[▲◆●○] /);
});

test('a viewer reads the calibration pages but can neither fit nor approve, not even by posting directly', async ({ browser, baseURL }) => {
	const viewer = await signedIn(browser, 'viewer');
	const pairUrl = await openPair(viewer);
	await expect(viewer.getByText('Analysts fit calibrations and leads approve them')).toBeVisible();
	await expect(viewer.getByRole('button', { name: 'Fit and save as draft' })).toHaveCount(0);
	await expect(viewer.getByTestId('fit-form')).toHaveCount(0);

	// Any calibration of the lab: the list links the approved ones and the drafts.
	await viewer.goto('/calibrations');
	await viewer.getByTestId('pairs-table').getByRole('link', { name: /^(✓ #\d+|◇ \d+ drafts? awaiting review)$/ }).first().click();
	await expect(viewer.getByTestId('parameter-table')).toBeVisible();
	await expect(viewer.getByRole('button', { name: /Approve calibration/ })).toHaveCount(0);
	const detailUrl = new URL(viewer.url()).pathname;

	// The server refuses the actions themselves (the hidden button is not the check).
	const headers = { origin: baseURL! };
	const fit = await viewer.request.post(`${new URL(pairUrl).pathname}?/fitCalibration`, { form: { sessionIds: '1' }, headers, maxRedirects: 0 });
	expect(fit.status()).toBe(403);
	const approve = await viewer.request.post(`${detailUrl}?/approveCalibration`, { form: {}, headers, maxRedirects: 0 });
	expect(approve.status()).toBe(403);
	expect((await viewer.request.get('/rig-health', { maxRedirects: 0 })).status()).toBe(403);

	// A viewer may ask for a setup sheet: it reads and writes nothing.
	const sheet = await readSheet(viewer);
	expect(sheet.fill).toMatch(/^\d/);
});
