// CSV import and export against the real MariaDB (a scratch database of its own): the fixtures in
// fixtures/imports (good files in other units and CSV conventions; malformed ones that must each
// be refused with a clear message and leave the database as it was), a generated file over the
// size limit, a generated 100 000-row file, the same file twice, sessions from a column, formula
// injection in exports, and the blank template's round trip. Test data are invented; chronograph
// files come from the model (src/lib/server/imports/synthetic.ts) so their units check out.
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import Papa from 'papaparse';
import { and, count, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { prefsFor } from '../../src/lib/format';
import { auditEvents, imports, projectiles, rangeSessions, rigs, shotPredictions, shots, users } from '../../src/lib/server/db/schema';
import { commitImport, previewImport, type ImportRequest } from '../../src/lib/server/imports/commit';
import { ImportRefused } from '../../src/lib/server/imports/errors';
import { blankTemplate, shotsCsv, TEMPLATE_COLUMNS } from '../../src/lib/server/imports/export';
import { getImport, rawFile } from '../../src/lib/server/imports/records';
import { syntheticShots } from '../../src/lib/server/imports/synthetic';
import { MAX_IMPORT_BYTES, type ImportMappingInput, type ImportTarget } from '../../src/lib/schemas/imports';
import { scratchDatabase } from '../support/db';

const FIXTURES = path.resolve('fixtures/imports');
let scratch: Awaited<ReturnType<typeof scratchDatabase>>;
const db = () => scratch.db;

const RIG = { reservoirM3: 2.0e-3, deadM3: 0.05e-3, boreDiameterM: 0.0254, travelM: 1.2 };
const BALL = { massKg: 7.53e-3, diameterM: 0.025 };
const CONDITIONS = { temperatureC: 6, pressurePa: 101_900, relativeHumidity: 0.7 };
const SYNTHETIC = { rig: RIG, projectile: { ...BALL, dragCoefficient: 0.5 }, conditions: CONDITIONS, downrangeM: 4.5, efficiency: 0.64, setPointsPa: [1.5e5, 2e5, 2.5e5] };
const STARTED = new Date(Date.UTC(2026, 10, 2, 8, 0, 0));
const MISSING = 999_999_999;

const ids = { rig: 0, ball: 0 };
let analyst: AppUser;
let lead: AppUser;
let serial = 0;

async function makeUser(role: 'analyst' | 'lead'): Promise<AppUser> {
	const email = `${role}@imports.test`;
	const [row] = await db().insert(users).values({ email, name: `Import ${role}`, role, passwordHash: 'x' }).$returningId();
	return { id: row.id, email, name: `Import ${role}`, role, unitPreferences: null };
}

async function makeSession(title = `Import session ${++serial}`, over: Partial<typeof rangeSessions.$inferInsert> = {}) {
	const [row] = await db()
		.insert(rangeSessions)
		.values({
			title,
			rigId: ids.rig,
			projectileId: ids.ball,
			startedAt: STARTED,
			targetDistanceM: 5,
			elevationDeg: 1,
			launchHeightM: 1.2,
			aimHeightM: 1.2,
			downrangeChronoM: 4.5,
			...CONDITIONS,
			...over
		})
		.$returningId();
	return row.id;
}

const fixture = (name: string) => new Uint8Array(readFileSync(path.join(FIXTURES, name)));

function request(target: ImportTarget, over: Partial<ImportRequest> = {}): ImportRequest {
	return { target, mode: 'all-or-nothing', force: false, prefs: prefsFor(null), ...over };
}

async function importInto(sessionId: number, bytes: Uint8Array, fileName: string, over: Partial<ImportRequest> = {}, user = analyst) {
	return commitImport(db(), { bytes, fileName }, request({ kind: 'session', sessionId }, over), user);
}

async function counts() {
	const [[s], [i], [p], [r], [a]] = await Promise.all([
		db().select({ n: count() }).from(shots),
		db().select({ n: count() }).from(imports),
		db().select({ n: count() }).from(shotPredictions),
		db().select({ n: count() }).from(rangeSessions),
		db().select({ n: count() }).from(auditEvents)
	]);
	return { shots: s.n, imports: i.n, predictions: p.n, sessions: r.n, audit: a.n };
}

async function refusalOf(run: () => Promise<unknown>): Promise<ImportRefused> {
	try {
		await run();
	} catch (err) {
		if (err instanceof ImportRefused) return err;
		throw err;
	}
	throw new Error('expected the import to be refused');
}

async function sessionShots(sessionId: number) {
	return db().select().from(shots).where(eq(shots.sessionId, sessionId)).orderBy(shots.sequence);
}

async function csvOf(stream: ReadableStream<Uint8Array>) {
	return new Response(stream).text();
}

beforeAll(async () => {
	scratch = await scratchDatabase();
	analyst = await makeUser('analyst');
	lead = await makeUser('lead');
	const [rig] = await db().insert(rigs).values({ name: 'IT H1', ...RIG, ratedPressurePa: 8e5, valveType: 'diaphragm', nominalEfficiency: 0.6 }).$returningId();
	const [ball] = await db().insert(projectiles).values({ name: 'IT ice ball', ...BALL, lengthM: 0.025, shape: 'sphere', nominalDragCoefficient: 0.47 }).$returningId();
	ids.rig = rig.id;
	ids.ball = ball.id;
});
afterAll(async () => {
	await scratch?.drop();
});

describe('good files in other units and CSV conventions', () => {
	// [file, rows, first row's fill pressure (Pa) and muzzle speed (m/s) as the file states them, converted by hand]
	const cases: [string, number, number, number][] = [
		['ours-si.csv', 12, 149823, 72.402],
		['chronograph-psi-fps-inch-crlf.csv', 12, 21.8585 * 6894.757293168361, 238.262 * 0.3048],
		['semicolon-decimal-comma-bar.csv', 12, 1.4924e5, 72.151],
		['bom-crlf-kpa-kmh.csv', 12, 150.7569e3, 261.861 / 3.6],
		['tab-with-title-lines.tsv', 10, 1.5061e5, 72.841],
		['blank-lines-quoted-fields.csv', 10, NaN, NaN],
		['utf8-non-ascii-notes.csv', 12, 149823, 72.402]
	];
	it.each(cases)('%s imports every row, in SI, with predictions', async (name, rows, fillPa, muzzleMps) => {
		const sessionId = await makeSession();
		const before = await counts();
		const record = await importInto(sessionId, fixture(`good/${name}`), name);
		expect(record).toMatchObject({ rowCount: rows, importedCount: rows, rejectedCount: 0, errors: [] });
		const stored = await sessionShots(sessionId);
		expect(stored).toHaveLength(rows);
		if (Number.isFinite(fillPa)) {
			expect(stored[0].fillGaugePa).toBeCloseTo(fillPa, 6);
			expect(stored[0].muzzleSpeedMps).toBeCloseTo(muzzleMps, 9);
		}
		expect(stored.every((s) => s.importId === record.id && /^[0-9a-f-]{36}$/.test(s.clientUuid))).toBe(true);
		const after = await counts();
		expect(after.shots - before.shots).toBe(rows);
		expect(after.predictions - before.predictions).toBe(rows);
		expect(after.imports - before.imports).toBe(1);
		expect(record.predictions.shots).toBe(rows);
	});

	it('keeps quoted notes with commas, doubled quotes and line breaks, and counts blank lines', async () => {
		const sessionId = await makeSession();
		const record = await importInto(sessionId, fixture('good/blank-lines-quoted-fields.csv'), 'quoted.csv', { force: true });
		const notes = (await sessionShots(sessionId)).map((s) => s.note);
		expect(notes).toContain('seal "A" replaced, then re-fired');
		expect(notes).toContain('two-line note:\nchronograph re-armed');
		expect(record.mapping.notices.join(' ')).toMatch(/4 blank lines were skipped/);
	});

	it('keeps non-ASCII notes as written (UTF-8)', async () => {
		const sessionId = await makeSession();
		await importInto(sessionId, fixture('good/utf8-non-ascii-notes.csv'), 'utf8.csv', { force: true });
		const notes = (await sessionShots(sessionId)).map((s) => s.note);
		expect(notes).toEqual(expect.arrayContaining(['Temperatur 6 °C – trocken', 'Ø 25 mm ball, “new mould”', 'ä ö ü ß']));
	});

	it('places times of day on the session’s date and converts per-shot °F and kPa; rows get sequence numbers', async () => {
		const sessionId = await makeSession();
		const record = await importInto(sessionId, fixture('good/time-of-day-per-shot-conditions.csv'), 'tod.csv');
		expect(record.importedCount).toBe(8);
		const stored = await sessionShots(sessionId);
		expect(stored.map((s) => s.sequence)).toEqual([1, 2, 3, 4, 5, 6, 7, 8]);
		expect(stored[1].firedAt.toISOString()).toBe('2026-11-02T08:01:07.000Z');
		// 42.8 °F = 6 °C exactly (NIST SP 811 B.9: t/°C = (t/°F − 32)/1.8).
		expect(stored[0].temperatureC).toBeCloseTo(6, 9);
		expect(stored[0].pressurePa).toBeCloseTo(101_900, 6);
	});

	it('needs a mapping for a file without a header row, and takes one by column index', async () => {
		const sessionId = await makeSession();
		const before = await counts();
		const refused = await refusalOf(() => importInto(sessionId, fixture('good/no-header.csv'), 'no-header.csv'));
		expect(refused.message).toMatch(/No column is mapped to fill pressure/);
		expect(await counts()).toEqual(before);
		const mapping: ImportMappingInput = {
			columns: [
				{ index: 0, field: 'sequence' },
				{ index: 1, field: 'time' },
				{ index: 2, field: 'fillPressure', unit: 'bar' },
				{ index: 3, field: 'muzzleSpeed', unit: 'm/s' }
			]
		};
		const record = await importInto(sessionId, fixture('good/no-header.csv'), 'no-header.csv', { mapping });
		expect(record.importedCount).toBe(6);
	});

	it('writes nothing for a preview, and shows the first rows as they will be stored', async () => {
		const sessionId = await makeSession();
		const before = await counts();
		const preview = await previewImport(db(), { bytes: fixture('good/chronograph-psi-fps-inch-crlf.csv'), fileName: 'p.csv' }, request({ kind: 'session', sessionId }), analyst);
		expect(await counts()).toEqual(before);
		expect(preview.problem).toBeNull();
		expect(preview.counts).toEqual({ rows: 12, valid: 12, rejected: 0 });
		expect(preview.file.newline).toMatch(/CRLF/);
		expect(preview.mapping.columns.find((c) => c.header === 'V0 (ft/s)')).toMatchObject({ field: 'muzzleSpeed', unit: 'ft/s' });
		expect(preview.rows[0].muzzleSpeedMps).toBeCloseTo(238.262 * 0.3048, 9);
		expect(preview.rows[4].miss).toBe(true);
	});
});

describe('sessions from a column', () => {
	it('adds rows to the session whose title matches and creates the others from the template', async () => {
		const template = await makeSession('IT template session', { targetDistanceM: 6, elevationDeg: 1.5, temperatureC: 3 });
		const existing = await makeSession('import it session');
		const before = await counts();
		const record = await commitImport(
			db(),
			{ bytes: fixture('good/sessions-from-column.csv'), fileName: 'column.csv' },
			request({ kind: 'column', templateSessionId: template }),
			analyst
		);
		expect(record).toMatchObject({ sessionId: null, importedCount: 9, rejectedCount: 0 });
		const byTitle = Object.fromEntries(record.mapping.sessions.map((s) => [s.title, s]));
		expect(byTitle['Batch 7 panel A']).toMatchObject({ created: true, rows: 4 });
		expect(byTitle['Batch 7 panel B']).toMatchObject({ created: true, rows: 3 });
		expect(byTitle['import it session']).toMatchObject({ id: existing, created: false, rows: 2 });
		const [created] = await db().select().from(rangeSessions).where(eq(rangeSessions.id, byTitle['Batch 7 panel A'].id));
		expect(created).toMatchObject({ rigId: ids.rig, projectileId: ids.ball, targetDistanceM: 6, elevationDeg: 1.5, temperatureC: 3, status: 'open' });
		expect(created.startedAt.toISOString()).toBe('2026-11-02T08:00:00.000Z');
		const after = await counts();
		expect(after.sessions - before.sessions).toBe(2);
		const audits = await db().select().from(auditEvents).where(and(eq(auditEvents.action, 'create'), eq(auditEvents.entityType, 'range_session')));
		expect(audits.map((a) => a.entityId)).toContain(String(created.id));
	});
});

describe('malformed files: a clear message, and the database unchanged', () => {
	let sessionId = 0;
	beforeAll(async () => {
		sessionId = await makeSession('IT malformed target');
		// Shots that hold sequence numbers 900–905 (one deleted: it keeps its number).
		await db()
			.insert(shots)
			.values(
				Array.from({ length: 6 }, (_, i) => ({
					sessionId,
					sequence: 900 + i,
					clientUuid: `00000000-0000-4000-8000-00000000090${i}`,
					firedAt: STARTED,
					fillGaugePa: 2e5,
					muzzleSpeedMps: 97,
					deletedAt: i === 5 ? new Date() : null
				}))
			);
	});

	const cases: [string, RegExp, number][] = [
		['empty.csv', /^The file is empty\.$/, 400],
		['only-blank-lines.csv', /only blank lines/, 400],
		['header-only.csv', /header row but no data rows/, 400],
		['missing-fill-pressure-column.csv', /No column is mapped to fill pressure/, 400],
		['text-in-numbers.csv', /Not a number: “fast”/, 422],
		['negative-fill-pressure.csv', /Fill pressure must be at least 0 Pa/, 422],
		['absurd-muzzle-speed.csv', /Muzzle speed must be at most 2000 m\/s/, 422],
		['negative-speed.csv', /Muzzle speed must be more than 0 m\/s/, 422],
		['absurd-impact-offset.csv', /Impact x must be at most 20 m/, 422],
		['above-rated-pressure.csv', /above the rig’s rated working pressure/, 422],
		['binary-garbage.bin', /not a text file/, 400],
		['utf16-le-with-bom.csv', /UTF-16 text/, 400],
		['utf16-le-without-bom.csv', /UTF-16 text without a byte-order mark/, 400],
		['latin1-degree-sign.csv', /not UTF-8: byte 0xB0 on line 1/, 400],
		['windows-1252-note.csv', /not UTF-8: byte 0xE9 on line 3/, 400],
		['excel-workbook.xlsx', /ZIP archive \(an Excel \.xlsx workbook/, 400],
		['document.pdf', /PDF document/, 400],
		['gzip-compressed.csv.gz', /gzip-compressed/, 400],
		['ragged-row-too-short.csv', /This row has 6 values; the header has 9/, 422],
		['ragged-row-unquoted-comma.csv', /This row has 10 values; the header has 9/, 422],
		['unclosed-quote.csv', /Row 4: a value opened with a quote/, 400],
		['duplicate-sequence-in-file.csv', /Duplicate sequence: 3 also appears in row 6/, 422],
		['duplicate-sequence-existing-shot.csv', /Duplicate sequence: 900 is already taken in session “IT malformed target”/, 422],
		['speeds-in-fps-labelled-mps.csv', /Units look wrong: read as m\/s.*Is the column in ft\/s \(or km\/h, which fits as well\)\?/, 422],
		['pressures-in-psi-labelled-kpa.csv', /Units look wrong: read as kPa.*Is the column in psi\?/, 422],
		['bad-miss-flag.csv', /Not a yes\/no value: “perhaps”/, 422],
		['miss-with-impact-offset.csv', /A miss has no impact offset/, 422],
		['impact-x-without-y.csv', /Impact y \(up \+\) is missing while the other offset is given/, 422],
		['downrange-faster-than-muzzle.csv', /downrange speed \(130 m\/s\) is more than 2 % above the muzzle speed/, 422],
		['ambiguous-slashed-date.csv', /The date “03\/11\/2026 08:00” is ambiguous/, 422],
		['date-in-the-future.csv', /2031-05-01T10:00:00.000Z is in the future/, 422],
		['date-before-2000.csv', /before the year 2000/, 422],
		['impossible-date.csv', /Not a real date and time: “2026-02-30T10:00:00Z”/, 422],
		['fractional-sequence.csv', /Sequence must be a whole number/, 422],
		['fill-pressure-missing-in-row.csv', /Fill pressure is missing; every shot needs one/, 422],
		['note-too-long.csv', /Note is at most 1000 characters/, 422],
		['unit-written-in-cell.csv', /write the unit in the header, not in the cell/, 422],
		['too-many-columns.csv', /The file has 250 columns; at most 200 are read/, 400],
		['decimal-comma-in-point-file.csv', /Not a number: “97,448” \(this file writes decimals with a point/, 422]
	];

	it('has at least 30 malformed fixtures, each with a case here', () => {
		const files = readdirSync(path.join(FIXTURES, 'malformed'));
		expect(files.length).toBeGreaterThanOrEqual(30);
		expect(files.sort()).toEqual(cases.map(([f]) => f).sort());
	});

	it.each(cases)('%s', async (name, message, status) => {
		const before = await counts();
		const refused = await refusalOf(() => importInto(sessionId, fixture(`malformed/${name}`), name));
		const text = [refused.message, ...refused.errors.map((e) => `row ${e.row} ${e.column ?? ''}: ${e.reason}`)].join('\n');
		expect(text).toMatch(message);
		expect(refused.status).toBe(status);
		if (status === 422) expect(refused.errors.length).toBeGreaterThan(0);
		expect(refused.errors.every((e) => e.row >= 2 && e.reason.length > 10)).toBe(true);
		expect(await counts()).toEqual(before);
	});

	it('refuses a file over the size limit before reading it (generated, not committed)', async () => {
		const before = await counts();
		const line = '1,2026-11-02T08:00:00Z,200000,97.4,88.7,0.001,0.002,no,\n';
		const big = new TextEncoder().encode('sequence,fired_at_utc,fill_pressure_pa,muzzle_speed_m_per_s,downrange_speed_m_per_s,impact_x_m,impact_y_m,miss,note\n' + line.repeat(Math.ceil((MAX_IMPORT_BYTES + 1024) / line.length)));
		expect(big.length).toBeGreaterThan(MAX_IMPORT_BYTES);
		const refused = await refusalOf(() => importInto(sessionId, big, 'huge.csv'));
		expect(refused.status).toBe(413);
		expect(refused.message).toMatch(/The file is 25\.0 MB; files up to 25\.0 MB are accepted\. Split it/);
		expect(await counts()).toEqual(before);
	});

	it('in "valid-rows" mode imports the valid rows and keeps the rejected ones with reasons', async () => {
		const target = await makeSession();
		const record = await importInto(target, fixture('malformed/text-in-numbers.csv'), 'partly.csv', { mode: 'valid-rows' });
		expect(record).toMatchObject({ rowCount: 6, importedCount: 5, rejectedCount: 1 });
		expect(record.errors).toEqual([{ row: 4, column: 'muzzle_speed_m_per_s', field: 'muzzleSpeed', value: 'fast', reason: 'Not a number: “fast”.' }]);
		const stored = await getImport(db(), record.id);
		expect(stored?.errors).toHaveLength(1);
		expect((await sessionShots(target)).map((s) => s.sequence)).toEqual([1, 2, 4, 5, 6]);
	});

	it('in "valid-rows" mode still refuses a file without a single valid row', async () => {
		const before = await counts();
		const refused = await refusalOf(() => importInto(sessionId, fixture('malformed/speeds-in-fps-labelled-mps.csv'), 'x.csv', { mode: 'valid-rows' }));
		expect(refused.message).toMatch(/No row is valid/);
		expect(await counts()).toEqual(before);
	});

	it('suggests ft/s for speeds that fit ft/s when m/s was chosen', async () => {
		const preview = await previewImport(db(), { bytes: fixture('malformed/speeds-in-fps-labelled-mps.csv'), fileName: 'f.csv' }, request({ kind: 'session', sessionId }), analyst);
		expect(preview.findings.map((f) => [f.field, f.chosen, f.suggested])).toEqual([
			['muzzleSpeed', 'm/s', 'ft/s'],
			['downrangeSpeed', 'm/s', 'ft/s']
		]);
		// One line per column: the whole run of rows.
		expect(preview.errors.find((e) => e.field === 'muzzleSpeed')).toMatchObject({ row: 2, toRow: 11, count: 10 });
	});

	it('refuses an analyst’s import into a closed session, and lets a lead', async () => {
		const closed = await makeSession('IT closed session', { status: 'closed', closedAt: new Date() });
		const before = await counts();
		const refused = await refusalOf(() => importInto(closed, fixture('good/ours-si.csv'), 'closed.csv'));
		expect(refused).toMatchObject({ status: 403, message: 'Session “IT closed session” is closed; only a lead may add shots to it now.' });
		expect(await counts()).toEqual(before);
		const record = await importInto(closed, fixture('good/ours-si.csv'), 'closed.csv', { force: true }, lead);
		expect(record.importedCount).toBe(12);
	});
});

describe('imports at the same time', () => {
	it('into one session hand out distinct sequence numbers (the session row lock serialises them)', async () => {
		const sessionId = await makeSession();
		const file = (tag: string) =>
			new TextEncoder().encode('fill_pressure_bar,muzzle_speed_m_per_s,note\n' + Array.from({ length: 30 }, (_, i) => `2.0,${(97 + i / 100).toFixed(2)},${tag}`).join('\n') + '\n');
		const [a, b] = await Promise.all([importInto(sessionId, file('a'), 'a.csv'), importInto(sessionId, file('b'), 'b.csv')]);
		expect(a.importedCount + b.importedCount).toBe(60);
		const sequences = (await sessionShots(sessionId)).map((s) => s.sequence);
		expect(sequences).toEqual(Array.from({ length: 60 }, (_, i) => i + 1));
	});
});

describe('the same file twice', () => {
	it('is refused unless forced; the raw bytes and SHA-256 are kept', async () => {
		const bytes = new TextEncoder().encode(syntheticShots(SYNTHETIC, { rows: 5, seed: 99 }));
		const first = await makeSession();
		const record = await importInto(first, bytes, 'twice.csv');
		const raw = await rawFile(db(), record.id);
		expect(Buffer.compare(raw!.rawBytes, Buffer.from(bytes))).toBe(0);
		expect(record.sha256).toMatch(/^[0-9a-f]{64}$/);

		const before = await counts();
		const refused = await refusalOf(() => importInto(first, bytes, 'twice-again.csv'));
		expect(refused.status).toBe(409);
		expect(refused.message).toMatch(new RegExp(`This file was imported before: import #${record.id} .* by Import analyst into “Import session \\d+” \\(same SHA-256\\)`));
		expect(await counts()).toEqual(before);

		const second = await makeSession();
		const forced = await importInto(second, bytes, 'twice-again.csv', { force: true });
		expect(forced.mapping.forced).toBe(true);
		expect(forced.importedCount).toBe(5);
		const audit = await db().select().from(auditEvents).where(and(eq(auditEvents.action, 'import'), eq(auditEvents.entityId, String(forced.id))));
		expect(audit).toHaveLength(1);
	});
});

describe('exports', () => {
	it('neutralise text cells that would start a formula, and write numbers as plain numbers (design/product.md)', async () => {
		const sessionId = await makeSession('=HYPERLINK("http://evil.example","open")');
		// Leading tabs and line breaks cannot reach a note (every input trims it); values.spec.ts checks them.
		const notes = ['=1+1', '+41 79 000 00 00', '-2 dB', '@SUM(A1:A9)', '=cmd|" /C calc"!A0', 'plain, with a comma'];
		const csv =
			'sequence,fill_pressure_bar,muzzle_speed_m_per_s,impact_x_mm,impact_y_mm,note\n' +
			notes.map((n, i) => `${i + 1},2.0,97.5,-${i + 1}.5,${i}.25,"${n.replace(/"/g, '""')}"`).join('\n') +
			'\n';
		await importInto(sessionId, new TextEncoder().encode(csv), 'formulas.csv');
		const text = await csvOf(shotsCsv(db(), { sessionId }));
		const parsed = Papa.parse<Record<string, string>>(text, { header: true, skipEmptyLines: true });
		expect(parsed.data.map((r) => r.note)).toEqual(["'=1+1", "'+41 79 000 00 00", "'-2 dB", "'@SUM(A1:A9)", `'=cmd|" /C calc"!A0`, 'plain, with a comma']);
		expect(parsed.data[0].session_title).toBe(`'=HYPERLINK("http://evil.example","open")`);
		expect(parsed.data.map((r) => r.impact_x_m)).toEqual(['-0.0015', '-0.0025', '-0.0035', '-0.0045', '-0.0055', '-0.0065']);
		expect(text.split('\r\n')[1]).toMatch(/^1,2026-11-02T08:00:00.000Z,200000,97.5,,-0.0015,0.00025,no,'=1\+1,/);

		// Read back, the notes are what was written: the import drops the ' an export added.
		const again = await makeSession();
		await importInto(again, new TextEncoder().encode(text), 'roundtrip.csv', { force: true });
		expect((await sessionShots(again)).map((s) => s.note)).toEqual(notes);
	});

	it('per rig keep to the date range', async () => {
		const early = await makeSession('IT range early', { startedAt: new Date(Date.UTC(2026, 5, 1, 9)) });
		const csv = (day: string) => `sequence,fired_at_utc,fill_pressure_bar,muzzle_speed_m_per_s\n1,${day}T09:00:00Z,2.0,97.5\n2,${day}T10:00:00Z,2.0,97.1\n`;
		await importInto(early, new TextEncoder().encode(csv('2026-06-01')), 'june.csv');
		const late = await makeSession('IT range late');
		await importInto(late, new TextEncoder().encode(csv('2026-06-20')), 'june20.csv');
		const rows = async (from: string | null, to: string | null) =>
			Papa.parse<Record<string, string>>(
				await csvOf(shotsCsv(db(), { rigId: ids.rig, from: from ? new Date(from) : null, to: to ? new Date(to) : null })),
				{ header: true, skipEmptyLines: true }
			).data;
		const june = await rows('2026-06-01T00:00:00Z', '2026-06-10T23:59:59.999Z');
		expect(june.map((r) => [r.session_title, r.sequence])).toEqual([
			['IT range early', '1'],
			['IT range early', '2']
		]);
		expect((await rows('2026-06-20T09:30:00Z', '2026-06-20T23:59:59.999Z')).map((r) => r.fired_at_utc)).toEqual(['2026-06-20T10:00:00.000Z']);
	});

	it('carry predictions and residuals', async () => {
		const sessionId = await makeSession();
		await importInto(sessionId, fixture('good/ours-si.csv'), 'residuals.csv', { force: true });
		const [row] = Papa.parse<Record<string, string>>(await csvOf(shotsCsv(db(), { sessionId })), { header: true, skipEmptyLines: true }).data;
		const predicted = Number(row.predicted_muzzle_speed_m_per_s);
		expect(predicted).toBeGreaterThan(50);
		expect(Number(row.muzzle_speed_residual_m_per_s)).toBeCloseTo(72.402 - predicted, 9);
		expect(row.calibration_id).toBe('');
	});
});

describe('the blank template', () => {
	it('round-trips: its columns map to themselves in SI, and an export of what it imported imports back unchanged', async () => {
		const header = blankTemplate();
		expect(header).toBe(TEMPLATE_COLUMNS.join(',') + '\r\n');
		const filled =
			header +
			'1,2026-11-02T08:00:00Z,150000,72.5,66.1,0.002,-0.001,no,first,,\r\n' +
			'2,2026-11-02T08:00:30Z,200000,97.4,88.6,,,yes,miss,,\r\n' +
			'3,2026-11-02T08:01:00Z,250000,117.3,106.9,-0.0045,0.0031,no,,5.5,101800\r\n';
		const first = await makeSession();
		const preview = await previewImport(db(), { bytes: new TextEncoder().encode(filled), fileName: 't.csv' }, request({ kind: 'session', sessionId: first }), analyst);
		expect(preview.mapping.columns.map((c) => c.field)).toEqual(['sequence', 'time', 'fillPressure', 'muzzleSpeed', 'downrangeSpeed', 'impactX', 'impactY', 'miss', 'note', 'airTemperature', 'barometricPressure']);
		expect(preview.mapping.columns.filter((c) => c.unit).map((c) => c.unit)).toEqual(['Pa', 'm/s', 'm/s', 'm', 'm', 'degC', 'Pa']);
		expect(preview.counts).toEqual({ rows: 3, valid: 3, rejected: 0 });
		await importInto(first, new TextEncoder().encode(filled), 't.csv');

		const exported = await csvOf(shotsCsv(db(), { sessionId: first }));
		const second = await makeSession();
		await importInto(second, new TextEncoder().encode(exported), 'export.csv');
		const shotColumns = (text: string) =>
			Papa.parse<string[]>(text, { skipEmptyLines: true }).data.map((r) => r.slice(0, TEMPLATE_COLUMNS.length).join(','));
		const reexported = await csvOf(shotsCsv(db(), { sessionId: second }));
		expect(shotColumns(reexported)).toEqual(shotColumns(exported));
		expect(shotColumns(exported)[3]).toBe('3,2026-11-02T08:01:00.000Z,250000,117.3,106.9,-0.0045,0.0031,no,,5.5,101800');
	});
});

describe('POST /api/v1/imports (multipart, as a script sends it)', () => {
	// The handler uses the app's one client, which reads DATABASE_URL on first use.
	let api: typeof import('../../src/lib/server/imports/api');
	let appDb: typeof import('../../src/lib/server/db');
	let savedUrl: string | undefined;
	beforeAll(async () => {
		savedUrl = process.env.DATABASE_URL;
		process.env.DATABASE_URL = scratch.url;
		api = await import('../../src/lib/server/imports/api');
		appDb = await import('../../src/lib/server/db');
	});
	afterAll(async () => {
		await appDb?.closeDatabase();
		process.env.DATABASE_URL = savedUrl;
	});

	async function post(fields: Record<string, string | Blob>) {
		const body = new FormData();
		for (const [name, value] of Object.entries(fields)) {
			if (value instanceof Blob) body.set(name, value, 'chrono.csv');
			else body.set(name, value);
		}
		const url = new URL('http://127.0.0.1/api/v1/imports');
		const event = {
			url,
			params: {},
			route: { id: '/api/v1/imports' },
			request: new Request(url, { method: 'POST', body }),
			locals: { user: analyst, claimedUserId: analyst.id, apiTokenId: null }
		};
		const response = await api.importApi.create(event as never);
		return { status: response.status, body: await response.json() };
	}

	it('imports with a mapping sent as JSON and answers the record (201)', async () => {
		const sessionId = await makeSession();
		const csv = 'n;p;v\n1;2,0;97,4\n2;2,5;117,3\n';
		const mapping = { columns: [{ header: 'n', field: 'sequence' }, { header: 'p', field: 'fillPressure', unit: 'bar' }, { index: 2, field: 'muzzleSpeed', unit: 'm/s' }] };
		const { status, body } = await post({ file: new Blob([csv], { type: 'text/csv' }), sessionId: String(sessionId), mapping: JSON.stringify(mapping), mode: 'valid-rows' });
		expect(status).toBe(201);
		expect(body).toMatchObject({ sessionId, fileName: 'chrono.csv', rowCount: 2, importedCount: 2, rejectedCount: 0, errors: [], predictions: { shots: 2 } });
		expect(body.mapping.columns.map((c: { field: string | null }) => c.field)).toEqual(['sequence', 'fillPressure', 'muzzleSpeed']);
		expect((await sessionShots(sessionId)).map((s) => s.fillGaugePa)).toEqual([200000, 250000]);
	});

	it('answers a refusal in the API’s error shape with every invalid cell (422)', async () => {
		const sessionId = await makeSession();
		const before = await counts();
		// Imported before (in "valid-rows" mode), so forced: the rows are what is refused here.
		const { status, body } = await post({ file: new Blob([fixture('malformed/text-in-numbers.csv')]), sessionId: String(sessionId), force: 'true' });
		expect(status).toBe(422);
		expect(body.message).toMatch(/^1 row is invalid, so the file was refused/);
		expect(body.issues).toEqual([{ path: 'row 4 · muzzle_speed_m_per_s', message: 'Not a number: “fast”.' }]);
		expect(body.errors).toHaveLength(1);
		expect(await counts()).toEqual(before);
	});

	it('names the field at fault in a bad request (400)', async () => {
		expect(await post({ sessionId: '1' })).toMatchObject({ status: 400, body: { issues: [{ path: 'file' }] } });
		const noTarget = await post({ file: new Blob(['a,b\n1,2\n']) });
		expect(noTarget.status).toBe(400);
		expect(noTarget.body.message).toMatch(/"sessionId" \(one session\) or "templateSessionId"/);
		const badMode = await post({ file: new Blob(['a,b\n1,2\n']), sessionId: '1', mode: 'some' });
		expect(badMode.body).toMatchObject({ message: '"mode" must be all-or-nothing or valid-rows; got "some".', issues: [{ path: 'mode' }] });
		expect((await post({ file: new Blob(['a\n1\n']), sessionId: String(MISSING) })).status).toBe(404);
	});
});

describe('a 100 000-row file', () => {
	it('imports in one transaction with every prediction', { timeout: 300_000 }, async () => {
		const sessionId = await makeSession('IT 100k');
		const csv = syntheticShots(SYNTHETIC, { rows: 100_000, seed: 5, headers: 'chronograph', units: { pressure: 'psi', speed: 'ft/s', length: 'in' }, missEvery: 40 });
		const phases = new Set<string>();
		const record = await commitImport(
			db(),
			{ bytes: new TextEncoder().encode(csv), fileName: '100k.csv' },
			request({ kind: 'session', sessionId }),
			analyst,
			(p) => {
				phases.add(p.phase);
			}
		);
		expect(record).toMatchObject({ rowCount: 100_000, importedCount: 100_000, rejectedCount: 0 });
		const [[stored], [predicted]] = await Promise.all([
			db().select({ n: count() }).from(shots).where(eq(shots.sessionId, sessionId)),
			db().select({ n: count() }).from(shotPredictions).innerJoin(shots, eq(shots.id, shotPredictions.shotId)).where(eq(shots.sessionId, sessionId))
		]);
		expect(stored.n).toBe(100_000);
		expect(predicted.n).toBe(100_000);
		expect([...phases]).toEqual(['reading', 'checking', 'storing', 'predicting']);
	});
});
