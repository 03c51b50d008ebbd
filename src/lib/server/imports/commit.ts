// The import of one file, end to end: size → text → format → mapping → every row checked
// (validate.ts) → either a preview (nothing written) or the commit: in ONE transaction the
// import record (raw bytes, SHA-256, mapping, counts, rejected rows with their reasons), any
// sessions created from a column, every valid shot (multi-row INSERTs of SHOT_CHUNK rows), their
// predictions and residuals (the reconciliation engine, in pages, for the new shots only — a
// shot's prediction depends on its session and calibration, not on the other shots), and the
// audit events. Any failure rolls all of it back. The same file twice is refused unless forced.
import { createHash } from 'node:crypto';
import { asc, eq, sql } from 'drizzle-orm';
import mysql from 'mysql2';
import {
	MAX_IMPORT_BYTES,
	MAX_IMPORT_ROWS,
	groupErrors,
	type CellErrorRun,
	type ImportFormat,
	type ImportMappingInput,
	type ImportMode,
	type ImportTarget,
	type ResolvedMapping
} from '$lib/schemas/imports';
import { displayUnit, type Prefs } from '$lib/format';
import { toSI, type Quantity, type UnitOf } from '$lib/physics/units';
import { imports, rangeSessions, shots } from '../db/schema';
import { recordAudit } from '../audit';
import { recomputePredictions } from '../reconcile';
import type { Executor } from '../reconcile/model';
import { loadTargets } from './context';
import { ImportRefused } from './errors';
import { applyTemplate, headerUnit, resolveMapping, suggestMapping } from './mapping';
import { decodeText, detectFormat, NEWLINE_LABELS, type DetectedFormat } from './parse';
import { guessSpeedAndPressureUnits, unitCheck } from './plausibility';
import { getImport, importsOfFile, templateByName, type ImportRecord, type StoredMapping } from './records';
import { checkShots, readShots, type CheckResult, type CheckedShot, type ReadFile, type SessionTarget } from './validate';
import { isEmptyCell, parseNumber } from './values';

/** Shots per INSERT statement (≈ 300 kB of SQL; MariaDB takes up to max_allowed_packet). */
export const SHOT_CHUNK = 2000;
/** New shots per call of the reconciliation (a progress step). */
export const PREDICTION_CHUNK = 5000;
/** Raw bytes per statement when storing the file (hex-escaped: twice this on the wire). */
const RAW_CHUNK_BYTES = 2 * 1024 * 1024;
/** Room the statement around a chunk of raw bytes needs. */
const PACKET_MARGIN_BYTES = 64 * 1024;
/** Rows shown "as they will be stored" in a preview. */
export const PREVIEW_ROWS = 20;
/** Runs of invalid cells listed in a preview (all are kept in the import record). */
export const PREVIEW_ERROR_RUNS = 1000;

export type ImportUpload = { bytes: Uint8Array; fileName: string };

export type ImportRequest = {
	target: ImportTarget;
	/** The mapping to use; without one, the named template, else the suggestion. */
	mapping?: ImportMappingInput | null;
	template?: string | null;
	/** How to read the file when no mapping says (the mapping screen's corrections). */
	format?: ImportFormat | null;
	mode: ImportMode;
	force: boolean;
	/** Display units of the person, for suggested units without a better clue. */
	prefs: Prefs;
};

export type ImportPhase = 'reading' | 'checking' | 'storing' | 'predicting';
export type ImportProgress = { phase: ImportPhase; done: number; total: number };
export type OnProgress = (progress: ImportProgress) => void | Promise<void>;

export function sha256Of(bytes: Uint8Array) {
	return createHash('sha256').update(bytes).digest('hex');
}

/** The largest file the database can keep with its record (its max_allowed_packet, less room for the statement). */
export async function storableBytes(db: Executor): Promise<{ limit: number; packet: number }> {
	const [rows] = (await db.execute(sql`SELECT @@max_allowed_packet AS packet`)) as unknown as [{ packet: number | string }[]];
	const packet = Number(rows[0]?.packet ?? 0);
	return { limit: Math.min(MAX_IMPORT_BYTES, packet - PACKET_MARGIN_BYTES), packet };
}

const megabytes = (bytes: number) => `${(bytes / 1024 / 1024).toFixed(1)} MB`;

export async function checkSize(db: Executor, sizeBytes: number) {
	if (sizeBytes > MAX_IMPORT_BYTES)
		throw new ImportRefused(
			`The file is ${megabytes(sizeBytes)}; files up to ${megabytes(MAX_IMPORT_BYTES)} are accepted. Split it into smaller files (by session or by day) and import each.`,
			413,
			'too-large'
		);
	const { limit, packet } = await storableBytes(db);
	if (sizeBytes > limit)
		throw new ImportRefused(
			`The file is ${megabytes(sizeBytes)}, but this database server keeps at most ${megabytes(limit)} per file (its max_allowed_packet is ${megabytes(packet)}). Split the file, or ask an admin to raise max_allowed_packet to 64M.`,
			413,
			'too-large'
		);
}

export type Analysis = {
	sha256: string;
	bom: boolean;
	format: DetectedFormat;
	mapping: ResolvedMapping;
	/** The mapping is the app's suggestion (nothing was sent, no template named). */
	suggested: boolean;
	read: ReadFile;
};

/**
 * Everything that needs no lock: the text, its format, the mapping (sent, from a template, or
 * suggested), and pass 1 over every row. Throws ImportRefused for a file that cannot be read.
 */
async function analyse(db: Executor, upload: ImportUpload, request: ImportRequest, user: AppUser, onProgress?: OnProgress): Promise<Analysis> {
	await checkSize(db, upload.bytes.length);
	const { text, bom } = decodeText(upload.bytes);
	const format = detectFormat(text, request.mapping?.format ?? request.format ?? undefined);
	const { mapping, suggested } = await mappingFor(db, format, request, user);
	const total = text.length;
	const read = await readShots(text, format, mapping, (chars) => onProgress?.({ phase: 'reading', done: chars, total }));
	if (read.records === 0)
		throw new ImportRefused(
			format.headerRow ? 'The file has a header row but no data rows.' : 'The file has no data rows.',
			400,
			'no-rows'
		);
	if (read.records > MAX_IMPORT_ROWS)
		throw new ImportRefused(`The file has ${read.records} rows; at most ${MAX_IMPORT_ROWS} are imported at once. Split it.`, 413, 'too-many-rows');
	await onProgress?.({ phase: 'reading', done: total, total });
	return { sha256: sha256Of(upload.bytes), bom, format, mapping, suggested, read };
}

async function mappingFor(db: Executor, format: DetectedFormat, request: ImportRequest, user: AppUser) {
	const sessionColumn = request.target.kind === 'column' ? 'required' : 'forbidden';
	if (request.mapping) return { mapping: resolveMapping(request.mapping, format, { sessionColumn }), suggested: false };
	if (request.template) {
		const template = await templateByName(db, request.template);
		if (!template) throw new ImportRefused(`No import template named “${request.template}”.`, 404, 'mapping', [], 'template');
		return { mapping: resolveMapping(applyTemplate(template.mapping, format), format, { sessionColumn }), suggested: false };
	}
	const suggestion = await suggestionFor(db, format, request, user);
	return { mapping: resolveMapping(suggestion, format, { sessionColumn }), suggested: true };
}

/** The suggested mapping for a file (the mapping screen starts from it). */
export async function suggestionFor(db: Executor, format: DetectedFormat, request: Pick<ImportRequest, 'target' | 'prefs'>, user: AppUser): Promise<ResolvedMapping> {
	const loaded = await loadTargets(db, request.target, new Map(), user, { lock: false });
	const key = request.target.kind === 'session' ? loaded.context.single!.key : `template:${request.target.templateSessionId}`;
	const predict = loaded.predictors.get(key);
	const rated = request.target.kind === 'session' ? loaded.context.single!.ratedPressurePa : null;
	return suggestMapping(format, {
		prefs: request.prefs,
		allowSessionColumn: request.target.kind === 'column',
		guessUnits: (columns, sample, decimal) => {
			const number = (cell: string | undefined) => (cell === undefined || isEmptyCell(cell) ? Number.NaN : parseNumber(cell, decimal));
			const fill = columns.find((c) => c.field === 'fillPressure');
			const rows = sample.map((cells) => ({
				fill: fill ? number(cells[fill.index]) : Number.NaN,
				speeds: Object.fromEntries(
					columns.filter((c) => c.field === 'muzzleSpeed' || c.field === 'downrangeSpeed').map((c) => [c.field, number(cells[c.index])])
				)
			}));
			const guessed = predict ? guessSpeedAndPressureUnits(columns, rows, predict) : new Map<number, string>();
			// Without speeds to compare, a pressure unit that keeps the fills within the rig's rating.
			if (fill && !fill.unit && !guessed.has(fill.index) && rated) {
				const values = rows.map((r) => r.fill).filter(Number.isFinite);
				const unit = pressureWithinRating(values, rated, displayUnit('pressure', request.prefs));
				if (unit) guessed.set(fill.index, unit);
			}
			return guessed;
		}
	});
}

/** The preferred pressure unit if it keeps the median fill between 2 % and 110 % of the rating, else the first that does. */
function pressureWithinRating(values: number[], ratedPa: number, preferred: string): string | null {
	if (values.length === 0) return null;
	const sorted = [...values].sort((a, b) => a - b);
	const median = sorted[sorted.length >> 1];
	const fits = (unit: string) => {
		const pa = toSI('pressure', unit as UnitOf['pressure'], median);
		return pa >= 0.02 * ratedPa && pa <= 1.1 * ratedPa;
	};
	if (fits(preferred)) return preferred;
	return ['bar', 'kPa', 'psi', 'Pa'].find(fits) ?? null;
}

function check(analysis: Analysis, loaded: Awaited<ReturnType<typeof loadTargets>>): CheckResult {
	return checkShots(analysis.read, analysis.mapping, loaded.context, unitCheck(loaded.predictors));
}

// ---------------------------------------------------------------------------------------------
// Preview: nothing is written.

export type PreviewRow = {
	row: number;
	sessionTitle: string;
	newSession: boolean;
	sequence: number;
	firedAt: string;
	fillGaugePa: number;
	muzzleSpeedMps: number | null;
	downrangeSpeedMps: number | null;
	impactXM: number | null;
	impactYM: number | null;
	miss: boolean;
	note: string | null;
	temperatureC: number | null;
	pressurePa: number | null;
};

export type ImportPreview = {
	file: {
		fileName: string;
		sizeBytes: number;
		sha256: string;
		encoding: string;
		newline: string;
		skipped: string[];
		blankLines: number;
		rows: number;
	};
	format: ResolvedMapping['format'];
	/** The file's columns: a few values, and the unit each quantity would have by the header's words. */
	columns: { index: number; header: string; samples: string[]; headerUnits: Partial<Record<Quantity, string>> }[];
	mapping: ResolvedMapping;
	suggested: boolean;
	/** Why no row could be checked (the mapping or the target), or null. */
	problem: string | null;
	counts: { rows: number; valid: number; rejected: number };
	rows: PreviewRow[];
	errors: CellErrorRun[];
	/** Runs not listed (PREVIEW_ERROR_RUNS) plus cells not recorded (MAX_RECORDED_ERRORS). */
	omittedErrors: number;
	findings: CheckResult['findings'];
	notices: string[];
	sessions: { id: number | null; title: string; rows: number }[];
	duplicates: Awaited<ReturnType<typeof importsOfFile>>;
};

const HEADER_QUANTITIES: Quantity[] = ['pressure', 'speed', 'length', 'temperature'];

function headerUnits(header: string) {
	const units: Partial<Record<Quantity, string>> = {};
	for (const quantity of HEADER_QUANTITIES) {
		const unit = headerUnit(header, quantity);
		if (unit) units[quantity] = unit;
	}
	return units;
}

function previewRow(shot: CheckedShot): PreviewRow {
	return {
		row: shot.row,
		sessionTitle: shot.target.title,
		newSession: shot.target.id === null,
		sequence: shot.sequence,
		firedAt: new Date(shot.firedAtMs).toISOString(),
		fillGaugePa: shot.fillGaugePa,
		muzzleSpeedMps: shot.muzzleSpeedMps,
		downrangeSpeedMps: shot.downrangeSpeedMps,
		impactXM: shot.impactXM,
		impactYM: shot.impactYM,
		miss: shot.miss,
		note: shot.note,
		temperatureC: shot.temperatureC,
		pressurePa: shot.pressurePa
	};
}

/**
 * What the import would do, without writing: the detected format, the columns with a few values,
 * the mapping, the first rows as they would be stored, every invalid cell (grouped into runs),
 * unit findings, notices, and earlier imports of the same file. A file that cannot be read at all
 * throws ImportRefused; a mapping that cannot be used comes back as `problem` so the person can
 * fix it on the mapping screen.
 */
export async function previewImport(db: Executor, upload: ImportUpload, request: ImportRequest, user: AppUser): Promise<ImportPreview> {
	await checkSize(db, upload.bytes.length);
	const { text, bom } = decodeText(upload.bytes);
	const format = detectFormat(text, request.mapping?.format ?? request.format ?? undefined);
	const sha256 = sha256Of(upload.bytes);
	const base = {
		file: {
			fileName: upload.fileName,
			sizeBytes: upload.bytes.length,
			sha256,
			encoding: bom ? 'UTF-8 with byte-order mark' : 'UTF-8',
			newline: NEWLINE_LABELS[format.newline],
			skipped: format.skipped,
			blankLines: 0,
			rows: 0
		},
		format: { delimiter: format.delimiter, decimal: format.decimal, headerRow: format.headerRow },
		columns: format.headers.map((header, index) => ({
			index,
			header,
			samples: format.sample.slice(0, 3).map((r) => (r[index] ?? '').slice(0, 40)),
			headerUnits: format.headerRow ? headerUnits(header) : {}
		})),
		duplicates: await importsOfFile(db, sha256)
	};
	const empty = { counts: { rows: 0, valid: 0, rejected: 0 }, rows: [], errors: [], omittedErrors: 0, findings: [], notices: [], sessions: [] };
	let analysis: Analysis;
	try {
		analysis = await analyse(db, upload, request, user);
	} catch (err) {
		if (!(err instanceof ImportRefused) || err.code !== 'mapping') throw err;
		const fallback = request.mapping
			? { format: base.format, columns: format.headers.map((header, index) => {
					const sent = request.mapping!.columns.find((c) => c.index === index || c.header === header);
					return { index, header, field: sent?.field ?? null, unit: sent?.unit ?? null };
				}) }
			: await suggestionFor(db, format, request, user);
		return { ...base, mapping: fallback, suggested: !request.mapping, problem: err.message, ...empty };
	}
	let loaded;
	try {
		loaded = await loadTargets(db, request.target, analysis.read.titles, user, { lock: false });
	} catch (err) {
		if (!(err instanceof ImportRefused)) throw err;
		return { ...base, mapping: analysis.mapping, suggested: analysis.suggested, problem: err.message, ...empty };
	}
	const result = check(analysis, loaded);
	const grouped = groupErrors(result.errors, PREVIEW_ERROR_RUNS);
	return {
		...base,
		file: { ...base.file, blankLines: analysis.read.blankLines, rows: analysis.read.records },
		mapping: analysis.mapping,
		suggested: analysis.suggested,
		problem: null,
		counts: { rows: analysis.read.records, valid: result.shots.length, rejected: result.rejectedRows },
		rows: result.shots.slice(0, PREVIEW_ROWS).map(previewRow),
		errors: grouped.runs,
		omittedErrors: grouped.omitted + result.unrecordedErrors,
		findings: result.findings,
		notices: noticesOf(analysis, result),
		sessions: result.sessions.map((s) => ({ id: s.target.id, title: s.target.title, rows: s.rows }))
	};
}

function noticesOf(analysis: Analysis, result: CheckResult) {
	const notices = [...result.notices];
	if (analysis.format.skipped.length > 0)
		notices.unshift(`${analysis.format.skipped.length} line${analysis.format.skipped.length === 1 ? '' : 's'} before the header ${analysis.format.skipped.length === 1 ? 'was' : 'were'} skipped: “${analysis.format.skipped.join('”, “')}”.`);
	if (analysis.read.blankLines > 0) notices.push(`${analysis.read.blankLines} blank line${analysis.read.blankLines === 1 ? ' was' : 's were'} skipped.`);
	return notices;
}

// ---------------------------------------------------------------------------------------------
// Commit.

/** A client UUID from the import and the row (RFC 4122 version 5 layout over SHA-1): a retry of one import makes the same ids. */
export function importShotUuid(importId: number, row: number) {
	const h = createHash('sha1').update(`shotwright-import/${importId}/${row}`).digest();
	h[6] = (h[6] & 0x0f) | 0x50;
	h[8] = (h[8] & 0x3f) | 0x80;
	const x = h.subarray(0, 16).toString('hex');
	return `${x.slice(0, 8)}-${x.slice(8, 12)}-${x.slice(12, 16)}-${x.slice(16, 20)}-${x.slice(20, 32)}`;
}

/** MariaDB DATETIME(3) literal of a UTC instant (the connection works in UTC). */
function datetimeLiteral(ms: number) {
	return `'${new Date(ms).toISOString().slice(0, 23).replace('T', ' ')}'`;
}

const numberLiteral = (v: number | null) => (v === null ? 'NULL' : String(v));

/** The shots columns an import writes, in the order of shotValues (snake_case, as the schema's casing makes them). */
const SHOT_COLUMNS = [
	'session_id',
	'sequence',
	'client_uuid',
	'fired_at',
	'fill_gauge_pa',
	'muzzle_speed_mps',
	'downrange_speed_mps',
	'impact_x_m',
	'impact_y_m',
	'miss',
	'note',
	'temperature_c',
	'pressure_pa',
	'entered_by',
	'import_id'
].join(', ');

/**
 * One shot as a VALUES tuple. Built by hand: Drizzle's builder takes about a third of a second
 * per 2000-row statement, longer than MariaDB takes to store it. Numbers are finite (validated),
 * text goes through mysql2's escaping.
 */
function shotValues(shot: CheckedShot, sessionId: number, importId: number, userId: number) {
	return `(${sessionId}, ${shot.sequence}, '${importShotUuid(importId, shot.row)}', ${datetimeLiteral(shot.firedAtMs)}, ${shot.fillGaugePa}, ${numberLiteral(shot.muzzleSpeedMps)}, ${numberLiteral(shot.downrangeSpeedMps)}, ${numberLiteral(shot.impactXM)}, ${numberLiteral(shot.impactYM)}, ${shot.miss ? 1 : 0}, ${shot.note === null ? 'NULL' : mysql.escape(shot.note)}, ${numberLiteral(shot.temperatureC)}, ${numberLiteral(shot.pressurePa)}, ${userId}, ${importId})`;
}

/** Store the raw bytes in pieces, so no statement exceeds max_allowed_packet. */
async function storeRawBytes(tx: Executor, importId: number, bytes: Uint8Array) {
	for (let offset = 0; offset < bytes.length; offset += RAW_CHUNK_BYTES) {
		const piece = Buffer.from(bytes.subarray(offset, offset + RAW_CHUNK_BYTES));
		await tx.execute(sql`UPDATE ${imports} SET raw_bytes = CONCAT(raw_bytes, ${piece}) WHERE id = ${importId}`);
	}
}

export type CommitResult = ImportRecord & { predictions: { shots: number; unpredictable: number } };

/**
 * Import the file. Refuses (ImportRefused, nothing written) a file that cannot be read, a mapping
 * that cannot be used, a target that does not exist or is closed, the same file again unless
 * `force`, any invalid row in "all-or-nothing" mode, and a file without a single valid row.
 */
export async function commitImport(db: Executor, upload: ImportUpload, request: ImportRequest, user: AppUser, onProgress?: OnProgress): Promise<CommitResult> {
	const analysis = await analyse(db, upload, request, user, onProgress);
	// READ COMMITTED: the sequence numbers are read after the sessions' row locks are granted, so
	// they include shots another import or a tablet committed while this one waited for the lock.
	const { importId, predictions } = await db.transaction(async (tx) => {
		const loaded = await loadTargets(tx, request.target, analysis.read.titles, user, { lock: true });
		if (!request.force) {
			const earlier = await importsOfFile(tx, analysis.sha256);
			if (earlier.length > 0) {
				const e = earlier[0];
				throw new ImportRefused(
					`This file was imported before: import #${e.id} on ${e.createdAt.toISOString().slice(0, 16).replace('T', ' ')} UTC by ${e.createdByName}${e.sessionTitle ? ` into “${e.sessionTitle}”` : ''} (same SHA-256). Import it again only if you mean to: choose “import it again anyway” (force).`,
					409,
					'duplicate-file',
					[],
					'force'
				);
			}
		}
		await onProgress?.({ phase: 'checking', done: 0, total: analysis.read.records });
		const result = check(analysis, loaded);
		await onProgress?.({ phase: 'checking', done: analysis.read.records, total: analysis.read.records });
		refuseIfInvalid(request.mode, result);

		const stored: StoredMapping = {
			format: {
				...analysis.mapping.format,
				newline: NEWLINE_LABELS[analysis.format.newline],
				bom: analysis.bom,
				skippedRecords: analysis.format.skipRecords
			},
			columns: analysis.mapping.columns,
			target: request.target,
			mode: request.mode,
			forced: request.force,
			template: request.mapping ? null : (request.template ?? null),
			sessions: [],
			notices: noticesOf(analysis, result),
			findings: result.findings.map((f) => ({ header: f.header, chosen: f.chosen, suggested: f.suggested, reason: f.reason })),
			unrecordedErrors: result.unrecordedErrors,
			predictions: { shots: 0, unpredictable: 0 }
		};
		const [created] = await tx
			.insert(imports)
			.values({
				sessionId: request.target.kind === 'session' ? request.target.sessionId : null,
				fileName: upload.fileName.slice(0, 255),
				sizeBytes: upload.bytes.length,
				sha256: analysis.sha256,
				rawBytes: Buffer.alloc(0),
				mapping: stored,
				rowCount: analysis.read.records,
				importedCount: result.shots.length,
				rejectedCount: result.rejectedRows,
				errors: result.errors,
				createdBy: user.id
			})
			.$returningId();
		const importId = created.id;
		await storeRawBytes(tx, importId, upload.bytes);

		const sessionIds = await createSessions(tx, result, loaded.template, importId, upload.fileName, user);
		stored.sessions = result.sessions.map((s) => ({
			id: s.target.id ?? sessionIds.get(s.target.key)!,
			title: s.target.title,
			created: s.target.id === null,
			rows: s.rows
		}));

		const total = result.shots.length;
		for (let i = 0; i < total; i += SHOT_CHUNK) {
			const values = result.shots
				.slice(i, i + SHOT_CHUNK)
				.map((shot) => shotValues(shot, shot.target.id ?? sessionIds.get(shot.target.key)!, importId, user.id))
				.join(',\n');
			await tx.execute(sql`INSERT INTO ${shots} (${sql.raw(SHOT_COLUMNS)}) VALUES ${sql.raw(values)}`);
			await onProgress?.({ phase: 'storing', done: Math.min(total, i + SHOT_CHUNK), total });
		}

		const ids = (await tx.select({ id: shots.id }).from(shots).where(eq(shots.importId, importId)).orderBy(asc(shots.id))).map((r) => r.id);
		const predictions = { shots: 0, unpredictable: 0 };
		await onProgress?.({ phase: 'predicting', done: 0, total: ids.length });
		for (let i = 0; i < ids.length; i += PREDICTION_CHUNK) {
			const done = await recomputePredictions(tx, { shotIds: ids.slice(i, i + PREDICTION_CHUNK) });
			predictions.shots += done.shots;
			predictions.unpredictable += done.unpredictable;
			await onProgress?.({ phase: 'predicting', done: Math.min(ids.length, i + PREDICTION_CHUNK), total: ids.length });
		}
		stored.predictions = predictions;
		await tx.update(imports).set({ mapping: stored }).where(eq(imports.id, importId));
		await recordAudit(tx, {
			userId: user.id,
			action: 'import',
			entityType: 'import',
			entityId: importId,
			after: {
				fileName: upload.fileName,
				sizeBytes: upload.bytes.length,
				sha256: analysis.sha256,
				target: request.target,
				mode: request.mode,
				forced: request.force,
				rowCount: analysis.read.records,
				importedCount: result.shots.length,
				rejectedCount: result.rejectedRows,
				sessions: stored.sessions
			}
		});
		return { importId, predictions };
	}, { isolationLevel: 'read committed' });
	const record = (await getImport(db, importId))!;
	return { ...record, predictions };
}

function refuseIfInvalid(mode: ImportMode, result: CheckResult) {
	const invalid = result.rejectedRows;
	if (invalid > 0 && mode === 'all-or-nothing')
		throw new ImportRefused(
			`${invalid} row${invalid === 1 ? ' is' : 's are'} invalid, so the file was refused (“refuse the file if any row is invalid”). Nothing was imported. Fix ${invalid === 1 ? 'it' : 'them'}, or import the valid rows only.`,
			422,
			'invalid-rows',
			result.errors
		);
	if (result.shots.length === 0)
		throw new ImportRefused(`No row is valid (${invalid} invalid), so nothing was imported.`, 422, 'invalid-rows', result.errors);
}

/** Sessions named in the file that do not exist yet: copies of the template (geometry, conditions, rig, projectile, plan). */
async function createSessions(
	tx: Executor,
	result: CheckResult,
	template: Awaited<ReturnType<typeof loadTargets>>['template'],
	importId: number,
	fileName: string,
	user: AppUser
) {
	const ids = new Map<string, number>();
	const fresh = result.sessions.map((s) => s.target).filter((t: SessionTarget) => t.id === null);
	if (fresh.length === 0 || !template) return ids;
	for (const target of fresh) {
		const firstShot = result.shots.reduce((min, s) => (s.target.key === target.key ? Math.min(min, s.firedAtMs) : min), Infinity);
		const values = {
			title: target.title,
			rigId: template.rigId,
			projectileId: template.projectileId,
			testPlanId: template.testPlanId,
			status: 'open' as const,
			startedAt: new Date(Number.isFinite(firstShot) ? firstShot : Date.now()),
			targetDistanceM: template.targetDistanceM,
			elevationDeg: template.elevationDeg,
			azimuthDeg: template.azimuthDeg,
			launchHeightM: template.launchHeightM,
			aimHeightM: template.aimHeightM,
			downrangeChronoM: template.downrangeChronoM,
			temperatureC: template.temperatureC,
			pressurePa: template.pressurePa,
			relativeHumidity: template.relativeHumidity,
			windXMps: template.windXMps,
			windZMps: template.windZMps,
			notes: `Created by import #${importId} (${fileName.slice(0, 120)}), with the geometry and conditions of session #${template.id} “${template.title}”.`,
			createdBy: user.id
		};
		const [created] = await tx.insert(rangeSessions).values(values).$returningId();
		ids.set(target.key, created.id);
		await recordAudit(tx, { userId: user.id, action: 'create', entityType: 'range_session', entityId: created.id, after: { id: created.id, ...values, importId } });
	}
	return ids;
}

