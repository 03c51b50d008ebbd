// An analyst imports a chronograph file into a session of their own: uploads it, maps a column
// the suggestion could not name (and corrects its unit when the check says the speeds look like
// ft/s), reads the invalid cell in the preview, imports the valid rows, and finds the shots with
// their residuals on the session page. The session is made here through the API, on the demo's
// H1 launcher and 25 mm ice ball, so no other test's state matters.
import { expect, test, type APIRequestContext } from '@playwright/test';
import { signIn } from './support';

/** Shots from the model for H1 with an ice ball (fill gauge Pa, muzzle m/s, impact x and y m). */
const SHOTS: [number, number, number, number][] = [
	[149823, 20.681, 0.002, 0.0033],
	[200298, 29.812, -0.0045, -0.0016],
	[250052, 38.655, 0.0146, 0.0002],
	[150452, 20.694, 0.0129, -0.0061],
	[199716, 29.803, 0.0031, 0.0057],
	[249561, 38.47, -0.0067, 0.0012],
	[150124, 20.61, 0.0008, -0.0029],
	[200510, 29.95, -0.0012, 0.0044]
];
const BAD_ROW = 4;

/** A chronograph's own layout: bar, ft/s under a header that names neither field nor unit, millimetres. */
function chronographFile(runId: string) {
	const lines = ['Shot,Pressure (bar),Geschw.,X (mm),Y (mm),Remarks'];
	SHOTS.forEach(([fillPa, speed, x, y], i) => {
		const pressure = i + 2 === BAD_ROW ? 'abc' : (fillPa / 1e5).toFixed(4);
		lines.push([i + 1, pressure, (speed / 0.3048).toFixed(2), (x * 1000).toFixed(1), (y * 1000).toFixed(1), i === 0 ? `run ${runId}` : ''].join(','));
	});
	return Buffer.from(lines.join('\r\n') + '\r\n');
}

async function idOf(request: APIRequestContext, registry: 'rigs' | 'projectiles', name: string) {
	const response = await request.get(`/api/v1/${registry}?q=${encodeURIComponent(name)}`);
	expect(response.ok()).toBe(true);
	const { rows } = (await response.json()) as { rows: { id: number; name: string }[] };
	const found = rows.find((r) => r.name === name);
	expect(found, `${name} in the demo ${registry}`).toBeTruthy();
	return found!.id;
}

test('an analyst uploads a file, fixes the mapping, sees the preview errors, imports and sees the residuals', async ({ page }) => {
	await signIn(page, 'analyst');
	const runId = `${Date.now()}`;
	const title = `E2E import ${runId}`;
	const created = await page.request.post('/api/v1/sessions', {
		// As the app's own pages send it: a cookie-authenticated write must name its origin.
		headers: { origin: new URL(page.url()).origin },
		data: {
			title,
			rigId: await idOf(page.request, 'rigs', 'H1 · 25 mm hail launcher'),
			projectileId: await idOf(page.request, 'projectiles', 'Ice ball 25 mm'),
			startedAt: new Date(Date.now() - 3600_000).toISOString(),
			targetDistanceM: 5,
			elevationDeg: 1,
			azimuthDeg: 0,
			launchHeightM: 1.2,
			aimHeightM: 1.2,
			downrangeChronoM: 4.5,
			temperatureC: 6,
			pressurePa: 101900,
			relativeHumidity: 0.7,
			windXMps: 0,
			windZMps: 0
		}
	});
	expect(created.status()).toBe(201);
	const session = (await created.json()) as { id: number };

	await page.goto(`/sessions/${session.id}`);
	await page.getByRole('link', { name: 'Import CSV' }).click();
	await expect(page).toHaveURL(new RegExp(`/imports/new\\?sessionId=${session.id}$`));
	await expect(page.getByLabel('Session', { exact: true })).toHaveValue(String(session.id));

	await page.getByLabel(/^CSV file/).setInputFiles({ name: 'chronograph.csv', mimeType: 'text/csv', buffer: chronographFile(runId) });
	await page.getByRole('button', { name: 'Upload and check' }).click();

	// The suggestion maps what it can name; the speed column it cannot is left for the person.
	const mapping = page.getByTestId('mapping-table');
	await expect(mapping.getByLabel('Field for column Pressure (bar)')).toHaveValue('fillPressure');
	await expect(mapping.getByLabel('Unit of column Pressure (bar)')).toHaveValue('bar');
	await expect(mapping.getByLabel('Field for column Geschw.')).toHaveValue('');
	await expect(mapping.getByLabel('Unit of column X (mm)')).toHaveValue('mm');

	await mapping.getByLabel('Field for column Geschw.').selectOption('muzzleSpeed');
	// Read in the analyst's m/s, the speeds are three times what the model predicts.
	const finding = page.getByRole('alert').filter({ hasText: 'Units look wrong in “Geschw.”' });
	await expect(finding).toContainText('Is the column in ft/s');
	await mapping.getByLabel('Unit of column Geschw.').selectOption('ft/s');
	await expect(finding).toHaveCount(0);

	// The preview: the rows as they will be stored, and the one invalid cell with row, column, reason.
	await expect(page.getByTestId('check-counts')).toHaveText('8 rows: ✓ 7 valid, ✕ 1 invalid');
	const errors = page.getByTestId('import-errors');
	await expect(errors.getByRole('row').nth(1)).toHaveText(/^\s*4\s*Pressure \(bar\)\s*abc\s*Not a number: “abc”\.\s*$/);
	const preview = page.getByTestId('import-preview');
	await expect(preview.getByRole('row')).toHaveCount(8);
	await expect(preview.getByRole('row').nth(1)).toContainText('20.68 m/s');
	await expect(preview.getByRole('row').nth(1)).toContainText('1.498 bar');

	await page.getByLabel('Import the valid rows; keep the rejected ones with their reasons in the import record').check();
	await page.getByRole('button', { name: 'Import 7 valid rows' }).click();
	const result = page.getByTestId('import-result');
	await expect(result).toContainText('✓ Imported 7 of 8 rows; 1 rejected.', { timeout: 30_000 });
	await expect(result).toContainText('Predictions and residuals computed for 7 shots');

	await page.getByRole('link', { name: title }).click();
	await expect(page).toHaveURL(new RegExp(`/sessions/${session.id}$`));
	const shots = page.getByTestId('shots-table');
	await expect(shots.getByRole('row')).toHaveCount(8);
	const first = shots.getByRole('row').nth(1).getByRole('cell');
	await expect(first.nth(0)).toHaveText('1');
	await expect(first.nth(3)).toHaveText('20.68 m/s');
	// Predicted and residual muzzle speed: numbers with their unit, not the "—" of a missing prediction.
	await expect(first.nth(4)).toHaveText(/^\d+\.\d{2} m\/s$/);
	await expect(first.nth(5)).toHaveText(/^[+-]?\d+\.\d{2} m\/s$/);

	// The import record: who, the file's SHA-256, the counts and the rejected row.
	await page.goto('/imports');
	await page.getByRole('link', { name: 'chronograph.csv' }).first().click();
	await expect(page.getByTestId('import-counts')).toHaveText('8 read · ✓ 7 imported · ✕ 1 rejected');
	await expect(page.getByTestId('import-sha256')).toHaveText(/^[0-9a-f]{64}$/);
	await expect(page.getByTestId('import-errors')).toContainText('Not a number: “abc”.');
});
