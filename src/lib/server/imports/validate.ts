// Every cell of an import is checked, and every problem is reported with its row, column and
// reason. Two passes:
//   1. readShots (streamed with the file): each record → a shot in stored units, or its errors —
//      not a number, outside the physical range (the bounds and messages of shotInput, the same
//      as the REST API's), a yes/no that is neither, a miss with an impact offset, a downrange
//      speed above the muzzle speed, a row with the wrong number of values…
//   2. checkShots (once the target sessions are known): the session of each row (sessions from a
//      column), times of day placed on the session's date, fill pressures above the rig's rating,
//      duplicate sequence numbers (in the file and against the session's shots, deleted ones
//      included: they keep their numbers), units that look wrong (plausibility.ts), and the
//      sequence numbers of rows that have none.
import { shotInput } from '$lib/schemas/range';
import {
	FIELD_BY_ID,
	type CellError,
	type ImportFieldId,
	type ResolvedMapping
} from '$lib/schemas/imports';
import { fromDisplay } from '$lib/format';
import { unitSymbol, type Quantity, type UnitOf } from '$lib/physics/units';
import type { DetectedFormat, ReadSummary } from './parse';
import { readRecords } from './parse';
import { isEmptyCell, parseMiss, parseNumber, parseTime, unneutralise } from './values';

/** Cell errors kept in full; beyond this they are counted (the rows are still rejected). */
export const MAX_RECORDED_ERRORS = 50_000;
/** A downrange reading may exceed the muzzle reading by this share (two chronographs' noise). */
export const DOWNRANGE_ABOVE_MUZZLE_TOLERANCE = 0.02;
/** A fill pressure may exceed the rig's rating by this share (gauge error) before it is refused. */
export const RATED_PRESSURE_TOLERANCE = 0.1;
/** Shots before this date are refused as a misread date. */
const EARLIEST_SHOT_MS = Date.UTC(2000, 0, 1);
/** Shots this far after now are refused (a clock a day off is tolerated). */
const FUTURE_SLACK_MS = 24 * 3600 * 1000;
const MAX_TITLE_LENGTH = 160;
const VALUE_PREVIEW = 80;

/** A row read from the file, in stored units (SI; air temperature °C). */
export type ReadShot = {
	row: number;
	/** Session title as written (sessions from a column). */
	sessionTitle: string | null;
	sequence: number | null;
	time: { ms: number } | { timeOfDayMs: number } | null;
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

/** A sequence number as written in a row, kept even when the row has other errors. */
type SequenceClaim = { row: number; sessionTitle: string | null; sequence: number };

export type ReadFile = ReadSummary & {
	shots: ReadShot[];
	errors: CellError[];
	/** Rows with at least one error. */
	rejectedRows: Set<number>;
	/** Errors not recorded because of MAX_RECORDED_ERRORS. */
	unrecordedErrors: number;
	claims: SequenceClaim[];
	/** Distinct session titles (sessions from a column), by lower-case key. */
	titles: Map<string, string>;
};

export class ErrorLog {
	readonly errors: CellError[] = [];
	readonly rejectedRows = new Set<number>();
	unrecorded = 0;

	add(row: number, column: string | null, field: ImportFieldId | null, value: string | null, reason: string) {
		this.rejectedRows.add(row);
		if (this.errors.length >= MAX_RECORDED_ERRORS) {
			this.unrecorded++;
			return;
		}
		const shown = value === null ? null : value.length > VALUE_PREVIEW ? value.slice(0, VALUE_PREVIEW - 1) + '…' : value;
		this.errors.push({ row, column, field, value: shown, reason });
	}
}

export const titleKey = (title: string) => title.trim().replace(/\s+/g, ' ').toLowerCase();

/** zod schema of each stored shot field: its bounds and its message. */
const STORED_SCHEMA = {
	fillPressure: shotInput.shape.fillGaugePa,
	muzzleSpeed: shotInput.shape.muzzleSpeedMps,
	downrangeSpeed: shotInput.shape.downrangeSpeedMps,
	impactX: shotInput.shape.impactXM,
	impactY: shotInput.shape.impactYM,
	airTemperature: shotInput.shape.temperatureC,
	barometricPressure: shotInput.shape.pressurePa
} as const;
type QuantityField = keyof typeof STORED_SCHEMA;

const STORED_SYMBOL: Record<Quantity, string> = { pressure: 'Pa', speed: 'm/s', length: 'm', temperature: '°C' } as Record<Quantity, string>;

function formatValue(value: number) {
	return Number.isInteger(value) ? String(value) : String(Number(value.toPrecision(6)));
}

/**
 * Read and check every record of the file against the mapping (pass 1). Streams through the
 * file; `onProgress` hears the characters read so far and the records checked.
 */
export async function readShots(
	text: string,
	format: DetectedFormat,
	mapping: ResolvedMapping,
	onProgress?: (charsRead: number, records: number) => void | Promise<void>
): Promise<ReadFile> {
	const log = new ErrorLog();
	const shots: ReadShot[] = [];
	const claims: SequenceClaim[] = [];
	const titles = new Map<string, string>();
	const width = format.headers.length;
	const readFormat = { ...format, ...mapping.format };
	const decimal = mapping.format.decimal;
	const used = mapping.columns.filter((c) => c.field !== null) as (typeof mapping.columns[number] & { field: ImportFieldId })[];

	const summary = await readRecords(
		text,
		readFormat,
		(row, cells) => {
			if (cells.length !== width) {
				log.add(
					row,
					null,
					null,
					null,
					`This row has ${cells.length} value${cells.length === 1 ? '' : 's'}; the header has ${width}. (A value that contains the delimiter needs quotes around it.)`
				);
				return;
			}
			let claim: SequenceClaim | null = null;
			const shot: ReadShot = {
				row,
				sessionTitle: null,
				sequence: null,
				time: null,
				fillGaugePa: Number.NaN,
				muzzleSpeedMps: null,
				downrangeSpeedMps: null,
				impactXM: null,
				impactYM: null,
				miss: false,
				note: null,
				temperatureC: null,
				pressurePa: null
			};
			let fillSeen = false;
			for (const column of used) {
				const raw = cells[column.index];
				const bad = (reason: string, value: string | null = raw) => log.add(row, column.header, column.field, value, reason);
				const field = column.field;
				if (field === 'note') {
					const note = unneutralise(raw.trim());
					if (note === '') continue;
					const checked = shotInput.shape.note.safeParse(note);
					if (checked.success) shot.note = checked.data ?? null;
					else bad(checked.error.issues[0].message, note);
					continue;
				}
				if (field === 'session') {
					const title = unneutralise(raw.trim().replace(/\s+/g, ' '));
					if (title === '') bad('The session title is missing.');
					else if (title.length > MAX_TITLE_LENGTH) bad(`A session title is at most ${MAX_TITLE_LENGTH} characters.`);
					else {
						shot.sessionTitle = title;
						if (!titles.has(titleKey(title))) titles.set(titleKey(title), title);
					}
					continue;
				}
				if (isEmptyCell(raw)) {
					if (field === 'fillPressure') bad('Fill pressure is missing; every shot needs one.');
					continue;
				}
				if (field === 'miss') {
					const miss = parseMiss(raw);
					if (miss === null) bad(`Not a yes/no value: “${raw.trim()}” (write yes/no, 1/0, true/false or miss/hit).`);
					else shot.miss = miss;
					continue;
				}
				if (field === 'time') {
					const time = parseTime(raw);
					if (!time.ok) bad(time.reason);
					else shot.time = 'ms' in time ? { ms: time.ms } : { timeOfDayMs: time.timeOfDayMs };
					continue;
				}
				const number = parseNumber(raw, decimal);
				if (!Number.isFinite(number)) {
					bad(`Not a number: “${raw.trim()}”${numberHint(raw.trim(), decimal)}.`);
					continue;
				}
				if (field === 'sequence') {
					const checked = shotInput.shape.sequence.safeParse(number);
					if (!checked.success) bad(checked.error.issues[0].message);
					else {
						shot.sequence = number;
						claim = { row, sessionTitle: null, sequence: number };
						claims.push(claim);
					}
					continue;
				}
				const quantity = FIELD_BY_ID[field].quantity!;
				const stored = fromDisplay(quantity, number, column.unit as UnitOf[typeof quantity]);
				const checked = STORED_SCHEMA[field as QuantityField].safeParse(stored);
				if (!checked.success) {
					const shown = `${formatValue(number)} ${unitSymbol(quantity, column.unit as UnitOf[typeof quantity])}`;
					const inStored = column.unit === storedUnitId(quantity) ? '' : ` (${formatValue(stored)} ${STORED_SYMBOL[quantity]})`;
					bad(`Outside the physical range: ${shown}${inStored}. ${checked.error.issues[0].message}`);
					continue;
				}
				switch (field as QuantityField) {
					case 'fillPressure':
						shot.fillGaugePa = stored;
						fillSeen = true;
						break;
					case 'muzzleSpeed':
						shot.muzzleSpeedMps = stored;
						break;
					case 'downrangeSpeed':
						shot.downrangeSpeedMps = stored;
						break;
					case 'impactX':
						shot.impactXM = stored;
						break;
					case 'impactY':
						shot.impactYM = stored;
						break;
					case 'airTemperature':
						shot.temperatureC = stored;
						break;
					case 'barometricPressure':
						shot.pressurePa = stored;
						break;
				}
			}
			if (claim) claim.sessionTitle = shot.sessionTitle;
			crossChecks(shot, used, log);
			if (!fillSeen && !log.rejectedRows.has(row)) log.add(row, null, 'fillPressure', null, 'Fill pressure is missing; every shot needs one.');
			if (!log.rejectedRows.has(row)) shots.push(shot);
		},
		onProgress
	);
	return {
		...summary,
		shots,
		errors: log.errors,
		rejectedRows: log.rejectedRows,
		unrecordedErrors: log.unrecorded,
		claims,
		titles
	};
}

/** Why a cell that looks numeric is not a number in this file. */
function numberHint(cell: string, decimal: '.' | ',') {
	if (decimal === '.' && /^[+-]?\d*,\d+$/.test(cell))
		return ' (this file writes decimals with a point; a comma here is ambiguous: write 24.5, or switch the decimal separator to comma)';
	if (decimal === ',' && /^[+-]?\d*\.\d+$/.test(cell)) return ' (this file writes decimals with a comma: write 24,5)';
	if (/\d\s*[a-z°/]+$/i.test(cell)) return '; write the unit in the header, not in the cell';
	return '';
}

function storedUnitId(quantity: Quantity) {
	return quantity === 'temperature' ? 'degC' : quantity === 'pressure' ? 'Pa' : quantity === 'speed' ? 'm/s' : 'm';
}

/** Rules across the fields of one row. */
function crossChecks(shot: ReadShot, used: { header: string; field: ImportFieldId }[], log: ErrorLog) {
	const header = (field: ImportFieldId) => used.find((c) => c.field === field)?.header ?? null;
	if (shot.miss && (shot.impactXM !== null || shot.impactYM !== null))
		log.add(shot.row, header(shot.impactXM !== null ? 'impactX' : 'impactY'), shot.impactXM !== null ? 'impactX' : 'impactY', null,
			'A miss has no impact offset: clear the offset or the miss flag.');
	else if ((shot.impactXM === null) !== (shot.impactYM === null)) {
		const missing = shot.impactXM === null ? 'impactX' : 'impactY';
		log.add(shot.row, header(missing) ?? (missing === 'impactX' ? 'impact x' : 'impact y'), missing, null,
			`${FIELD_BY_ID[missing].label} is missing while the other offset is given; an impact needs both.`);
	}
	if (
		shot.muzzleSpeedMps !== null &&
		shot.downrangeSpeedMps !== null &&
		shot.downrangeSpeedMps > shot.muzzleSpeedMps * (1 + DOWNRANGE_ABOVE_MUZZLE_TOLERANCE)
	)
		log.add(shot.row, header('downrangeSpeed'), 'downrangeSpeed', null,
			`Outside the physical range: the downrange speed (${formatValue(shot.downrangeSpeedMps)} m/s) is more than ${DOWNRANGE_ABOVE_MUZZLE_TOLERANCE * 100} % above the muzzle speed (${formatValue(shot.muzzleSpeedMps)} m/s); a projectile does not speed up after the muzzle.`);
}

/** Where the rows of one session go, and what is known about it. */
export type SessionTarget = {
	key: string;
	/** Null: the session is created by the import (sessions from a column). */
	id: number | null;
	title: string;
	/** The session's start; null for a new session (taken from its rows). */
	startedAtMs: number | null;
	/** Rows cannot go here, and why (closed, ambiguous title…). */
	blocked: string | null;
	ratedPressurePa: number;
	/** Sequence numbers in use: true when the shot holding it is deleted. */
	existing: Map<number, boolean>;
	maxSequence: number;
	downrangeChronoM: number | null;
	/** The session's air temperature (°C) and barometric pressure (Pa), for the unit check. */
	temperatureC: number;
	pressurePa: number;
};

export type CheckContext = {
	/** One session (kind "session"), or sessions by title key (kind "column"). */
	single: SessionTarget | null;
	byTitle: Map<string, SessionTarget>;
	nowMs: number;
};

/** A shot ready to store. */
export type CheckedShot = Omit<ReadShot, 'time' | 'sequence' | 'sessionTitle'> & { target: SessionTarget; sequence: number; firedAtMs: number };

export type UnitFinding = {
	columnIndex: number;
	header: string;
	field: ImportFieldId;
	chosen: string;
	suggested: string;
	reason: string;
};

export type CheckResult = {
	shots: CheckedShot[];
	errors: CellError[];
	rejectedRows: number;
	unrecordedErrors: number;
	findings: UnitFinding[];
	notices: string[];
	/** Per target session: rows it receives. */
	sessions: { target: SessionTarget; rows: number }[];
};

export type UnitCheck = (shots: { shot: ReadShot; target: SessionTarget; firedAtMs: number }[], mapping: ResolvedMapping) => UnitFinding[];

const DAY_MS = 24 * 3600 * 1000;

/** Pass 2: the rows against their sessions, the rig, each other and the model. */
export function checkShots(read: ReadFile, mapping: ResolvedMapping, context: CheckContext, unitCheck?: UnitCheck): CheckResult {
	const log = new ErrorLog();
	for (const e of read.errors) log.add(e.row, e.column, e.field, e.value, e.reason);
	log.unrecorded += read.unrecordedErrors;
	for (const row of read.rejectedRows) log.rejectedRows.add(row);
	const header = (field: ImportFieldId) => mapping.columns.find((c) => c.field === field)?.header ?? null;
	const notices: string[] = [];

	const targetOf = (title: string | null) => (context.single ?? (title === null ? null : (context.byTitle.get(titleKey(title)) ?? null)));

	// New sessions start at their earliest shot.
	const earliest = new Map<string, number>();
	for (const shot of read.shots) {
		const target = targetOf(shot.sessionTitle);
		if (target && target.id === null && shot.time && 'ms' in shot.time)
			earliest.set(target.key, Math.min(earliest.get(target.key) ?? Infinity, shot.time.ms));
	}
	const startOf = (target: SessionTarget) => target.startedAtMs ?? earliest.get(target.key) ?? context.nowMs;

	const placed: { shot: ReadShot; target: SessionTarget; firedAtMs: number }[] = [];
	for (const shot of read.shots) {
		const target = targetOf(shot.sessionTitle);
		if (!target) {
			log.add(shot.row, header('session'), 'session', shot.sessionTitle, 'No session for this row.');
			continue;
		}
		if (target.blocked) {
			log.add(shot.row, header('session') ?? null, 'session', shot.sessionTitle, target.blocked);
			continue;
		}
		let firedAtMs: number;
		if (shot.time === null) firedAtMs = startOf(target);
		else if ('ms' in shot.time) firedAtMs = shot.time.ms;
		else if (target.startedAtMs === null) {
			log.add(shot.row, header('time'), 'time', null,
				`A time of day needs the session’s date, and this row starts the new session “${target.title}”: write the date too (2026-03-02 14:05:09).`);
			continue;
		} else firedAtMs = Math.floor(target.startedAtMs / DAY_MS) * DAY_MS + shot.time.timeOfDayMs;
		if (firedAtMs < EARLIEST_SHOT_MS) {
			log.add(shot.row, header('time'), 'time', null, `Outside the physical range: ${new Date(firedAtMs).toISOString()} is before the year 2000; is the date right?`);
			continue;
		}
		if (firedAtMs > context.nowMs + FUTURE_SLACK_MS) {
			log.add(shot.row, header('time'), 'time', null, `Outside the physical range: ${new Date(firedAtMs).toISOString()} is in the future.`);
			continue;
		}
		placed.push({ shot, target, firedAtMs });
	}

	// Units that look wrong: whole columns, so every filled cell of such a column is rejected.
	const findings = unitCheck ? unitCheck(placed, mapping) : [];
	let kept = placed;
	if (findings.length > 0) {
		const flagged = new Map(findings.map((f) => [f.field, f]));
		kept = placed.filter(({ shot }) => {
			let ok = true;
			for (const [field, finding] of flagged) {
				if (valueOf(shot, field) === null) continue;
				log.add(shot.row, finding.header, field, null, `Units look wrong: ${finding.reason}`);
				ok = false;
			}
			return ok;
		});
	}
	// After the unit check, so a pressure column in the wrong unit is reported as such.
	kept = kept.filter(({ shot, target }) => {
		if (shot.fillGaugePa <= target.ratedPressurePa * (1 + RATED_PRESSURE_TOLERANCE)) return true;
		log.add(shot.row, header('fillPressure'), 'fillPressure', null,
			`Outside the physical range: ${formatValue(shot.fillGaugePa)} Pa is above the rig’s rated working pressure (${formatValue(target.ratedPressurePa)} Pa) by more than ${RATED_PRESSURE_TOLERANCE * 100} %. A unit mistake? If the rig really was filled that high, take it out of service and have it inspected.`);
		return false;
	});

	// Sequence numbers: every claim in the file (rows with other errors too) against the others and the session.
	const claimsBy = new Map<string, Map<number, number[]>>();
	for (const claim of read.claims) {
		const target = targetOf(claim.sessionTitle);
		if (!target) continue;
		const bySequence = claimsBy.get(target.key) ?? new Map<number, number[]>();
		bySequence.set(claim.sequence, [...(bySequence.get(claim.sequence) ?? []), claim.row]);
		claimsBy.set(target.key, bySequence);
	}
	const sequenceHeader = header('sequence');
	const valid = kept.filter(({ shot, target }) => {
		if (shot.sequence === null) return true;
		const rows = claimsBy.get(target.key)?.get(shot.sequence) ?? [];
		if (rows.length > 1) {
			const others = rows.filter((r) => r !== shot.row);
			log.add(shot.row, sequenceHeader, 'sequence', String(shot.sequence),
				`Duplicate sequence: ${shot.sequence} also appears in row${others.length === 1 ? '' : 's'} ${others.slice(0, 5).join(', ')}${others.length > 5 ? '…' : ''} of this file${context.single ? '' : ` for “${target.title}”`}.`);
			return false;
		}
		const existing = target.existing.get(shot.sequence);
		if (existing !== undefined) {
			log.add(shot.row, sequenceHeader, 'sequence', String(shot.sequence),
				`Duplicate sequence: ${shot.sequence} is already taken in session “${target.title}”${existing ? ' (by a deleted shot, which keeps its number)' : ''}.`);
			return false;
		}
		return true;
	});

	// Rows without a number continue after the highest number in the session and in the file.
	const next = new Map<string, number>();
	for (const { shot, target } of valid) {
		const high = Math.max(next.get(target.key) ?? target.maxSequence, shot.sequence ?? 0);
		next.set(target.key, high);
	}
	const shots: CheckedShot[] = [];
	const counts = new Map<string, { target: SessionTarget; rows: number }>();
	let assigned = 0;
	for (const { shot, target, firedAtMs } of valid) {
		let sequence = shot.sequence;
		if (sequence === null) {
			sequence = (next.get(target.key) ?? target.maxSequence) + 1;
			next.set(target.key, sequence);
			assigned++;
		}
		const { time: _time, sessionTitle: _title, sequence: _sequence, ...values } = shot;
		shots.push({ ...values, target, sequence, firedAtMs });
		const count = counts.get(target.key) ?? { target, rows: 0 };
		count.rows++;
		counts.set(target.key, count);
	}
	if (!header('time')) notices.push('No time column: every shot gets its session’s start time.');
	if (assigned > 0) notices.push(`${assigned} row${assigned === 1 ? '' : 's'} without a sequence number get the next free numbers of ${assigned === 1 ? 'its' : 'their'} session.`);
	if (header('downrangeSpeed'))
		for (const { target } of counts.values())
			if (target.downrangeChronoM === null)
				notices.push(`Session “${target.title}” has no downrange chronograph distance: its downrange speeds are stored, but get no prediction or residual until the distance is set on the session.`);
	log.errors.sort((a, b) => a.row - b.row);
	return {
		shots,
		errors: log.errors,
		rejectedRows: log.rejectedRows.size,
		unrecordedErrors: log.unrecorded,
		findings,
		notices,
		sessions: [...counts.values()]
	};
}

function valueOf(shot: ReadShot, field: ImportFieldId): number | null {
	switch (field) {
		case 'fillPressure':
			return shot.fillGaugePa;
		case 'muzzleSpeed':
			return shot.muzzleSpeedMps;
		case 'downrangeSpeed':
			return shot.downrangeSpeedMps;
		case 'impactX':
			return shot.impactXM;
		case 'impactY':
			return shot.impactYM;
		case 'airTemperature':
			return shot.temperatureC;
		case 'barometricPressure':
			return shot.pressurePa;
		default:
			return null;
	}
}
