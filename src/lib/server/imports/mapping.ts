// Which column is which shot field, in which unit. The suggestion reads the header names (our
// own template's names, e.g. "fill_pressure_pa" or "muzzle_speed_ft_per_s", and the usual
// variants: "Velocity (fps)", "V0 [m/s]", "Pressure psi", "Temp °F") and, where a header names no
// unit, the values: speeds and pressures in the pair of units under which the measured speeds
// agree best with the model's prediction for the rig (plausibility.ts), other quantities by their
// ranges, else the person's preferred unit. A person can change any of it on the mapping screen;
// a script sends its own mapping (by header or by column index).
import { toSI, type Quantity } from '$lib/physics/units';
import { displayUnit, type Prefs } from '$lib/format';
import {
	FIELD_BY_ID,
	IMPORT_FIELD_IDS,
	importFormat,
	unitAllowed,
	type ImportFieldId,
	type ImportFormat,
	type ImportMappingInput,
	type ResolvedColumn,
	type ResolvedMapping
} from '$lib/schemas/imports';
import { ImportRefused } from './errors';
import type { DetectedFormat } from './parse';
import { isEmptyCell, parseNumber, parseTime } from './values';

/** Words a header is made of: lower case, accents and punctuation dropped, units in brackets removed. */
function words(header: string): string[] {
	return header
		.normalize('NFKD')
		.replace(/[\u0300-\u036f]/g, '')
		.toLowerCase()
		.replace(/[([{][^)\]}]*[)\]}]/g, ' ')
		.replace(/°/g, ' deg')
		.replace(/[^a-z0-9#/]+/g, ' ')
		.trim()
		.split(/\s+/)
		.filter(Boolean);
}

/** Unit spellings per quantity (lower case, as they appear in headers). */
const UNIT_ALIASES: Record<string, Record<string, string>> = {
	pressure: { pa: 'Pa', kpa: 'kPa', bar: 'bar', barg: 'bar', psi: 'psi', psig: 'psi', 'lb/in2': 'psi' },
	speed: {
		'm/s': 'm/s', mps: 'm/s', 'm per s': 'm/s', 'meters per second': 'm/s', 'metres per second': 'm/s', 'm s': 'm/s',
		'ft/s': 'ft/s', fps: 'ft/s', 'ft per s': 'ft/s', 'feet per second': 'ft/s', 'ft s': 'ft/s',
		'km/h': 'km/h', kmh: 'km/h', kph: 'km/h', 'km per h': 'km/h'
	},
	length: { m: 'm', mm: 'mm', cm: 'cm', in: 'in', inch: 'in', inches: 'in', ft: 'ft', feet: 'ft', foot: 'ft' },
	temperature: { 'deg c': 'degC', degc: 'degC', c: 'degC', celsius: 'degC', 'deg f': 'degF', degf: 'degF', f: 'degF', fahrenheit: 'degF', k: 'K', kelvin: 'K' }
};

/** Header phrases per field (after the unit is taken off), most specific first within a field. */
const SYNONYMS: Record<ImportFieldId, string[]> = {
	sequence: ['sequence', 'seq', 'shot number', 'shot no', 'shot nr', 'shot #', 'shot', '#', 'no', 'nr', 'number', 'index', 'idx'],
	time: ['fired at utc', 'fired at', 'time fired', 'timestamp', 'date time', 'datetime', 'date and time', 'time', 'clock', 'date'],
	fillPressure: ['fill pressure', 'fill gauge pressure', 'gauge pressure', 'fill', 'charge pressure', 'tank pressure', 'reservoir pressure', 'set pressure', 'pressure', 'p fill', 'p0'],
	muzzleSpeed: ['muzzle speed', 'muzzle velocity', 'v0', 'vo', 'mv', 'velocity', 'speed', 'vel', 'chrono', 'chronograph', 'v1', 'speed 1', 'velocity 1'],
	downrangeSpeed: ['downrange speed', 'downrange velocity', 'speed at target', 'target speed', 'target velocity', 'impact speed', 'impact velocity', 'remaining velocity', 'v2', 'speed 2', 'velocity 2', 'chrono 2'],
	impactX: ['impact x', 'x offset', 'offset x', 'poi x', 'dx', 'x', 'horizontal', 'windage', 'lateral'],
	impactY: ['impact y', 'y offset', 'offset y', 'poi y', 'dy', 'y', 'vertical', 'height'],
	miss: ['miss', 'missed', 'is miss'],
	note: ['note', 'notes', 'comment', 'comments', 'remark', 'remarks', 'description'],
	airTemperature: ['air temperature', 'ambient temperature', 'temperature', 'temp', 't air', 'air temp'],
	barometricPressure: ['barometric pressure', 'air pressure', 'ambient pressure', 'station pressure', 'atmospheric pressure', 'barometer', 'baro'],
	session: ['session title', 'session name', 'session']
};

/** A unit named in a header: in brackets ("Speed (fps)"), or as the last words ("fill_pressure_bar"). */
export function headerUnit(header: string, quantity: Quantity): string | null {
	const aliases = UNIT_ALIASES[quantity];
	if (!aliases) return null;
	const bracket = /[([{]([^)\]}]*)[)\]}]/.exec(header);
	if (bracket) {
		const inside = bracket[1].toLowerCase().replace(/°\s*/g, 'deg ').replace(/\s+/g, ' ').trim();
		const found = aliases[inside] ?? aliases[inside.replace(/\s/g, '')];
		if (found) return found;
	}
	const w = words(header.replace(/_per_/g, ' per '));
	for (const n of [3, 2, 1]) {
		if (w.length <= n) continue;
		const tail = w.slice(-n).join(' ');
		const found = aliases[tail] ?? aliases[tail.replace(/\s/g, '')];
		if (found) return found;
	}
	return null;
}

/** The header without its unit, as words. */
function nameWords(header: string, quantity: Quantity | undefined): string[] {
	const w = words(header.replace(/_per_/g, ' per '));
	if (!quantity) return w;
	const aliases = UNIT_ALIASES[quantity];
	for (const n of [3, 2, 1]) {
		if (w.length <= n) continue;
		const tail = w.slice(-n).join(' ');
		if (aliases[tail] ?? aliases[tail.replace(/\s/g, '')]) return w.slice(0, -n);
	}
	return w;
}

/** How well a header names a field: 3 exact phrase, 2 the phrase's words in order at its start, 0 none. */
function matchScore(header: string, field: ImportFieldId): number {
	const quantity = FIELD_BY_ID[field].quantity;
	const name = nameWords(header, quantity).join(' ');
	let best = 0;
	SYNONYMS[field].forEach((phrase, rank) => {
		// Earlier synonyms are more specific; a small bonus keeps "air pressure" off "pressure".
		const bonus = (SYNONYMS[field].length - rank) / 1000 + phrase.split(' ').length / 100;
		if (name === phrase) best = Math.max(best, 3 + bonus);
		else if (name.startsWith(phrase + ' ') && phrase.length > 2) best = Math.max(best, 2 + bonus);
	});
	return best;
}

export type SuggestContext = {
	prefs: Prefs;
	/** Which fields the target accepts (no session column for a one-session import). */
	allowSessionColumn: boolean;
	/** Unit choice from the values (plausibility.ts), for columns whose header names no unit. */
	guessUnits?: (columns: ResolvedColumn[], sample: string[][], decimal: ImportFormat['decimal']) => Map<number, string>;
};

/** The unit a person would expect for a field when neither header nor values say. */
export function defaultUnit(field: ImportFieldId, prefs: Prefs): string | null {
	const quantity = FIELD_BY_ID[field].quantity;
	if (!quantity) return null;
	return displayUnit(quantity, prefs, field === 'impactX' || field === 'impactY');
}

function numbersOf(sample: string[][], index: number, decimal: ImportFormat['decimal']) {
	const out: number[] = [];
	for (const row of sample) {
		const cell = row[index];
		if (cell === undefined || isEmptyCell(cell)) continue;
		const n = parseNumber(cell, decimal);
		if (Number.isFinite(n)) out.push(n);
	}
	return out;
}

/**
 * The suggested mapping for a file: fields from the header names (each field to its best column,
 * each column at most one field), or — without a header row — from the values (a column counting
 * up is the sequence, one of times is the time); units from the header, then the values, then
 * the person's preferences.
 */
export function suggestMapping(format: DetectedFormat, context: SuggestContext): ResolvedMapping {
	const fields = IMPORT_FIELD_IDS.filter((f) => f !== 'session' || context.allowSessionColumn);
	const columns: ResolvedColumn[] = format.headers.map((header, index) => ({ index, header, field: null, unit: null }));
	if (format.headerRow) {
		const candidates: { index: number; field: ImportFieldId; score: number }[] = [];
		for (const column of columns)
			for (const field of fields) {
				const score = matchScore(column.header, field);
				if (score > 0) candidates.push({ index: column.index, field, score });
			}
		candidates.sort((a, b) => b.score - a.score || a.index - b.index);
		const taken = new Set<ImportFieldId>();
		for (const c of candidates) {
			if (taken.has(c.field) || columns[c.index].field) continue;
			columns[c.index].field = c.field;
			taken.add(c.field);
		}
	} else {
		suggestFromValues(columns, format);
	}
	for (const column of columns) {
		if (!column.field) continue;
		const quantity = FIELD_BY_ID[column.field].quantity;
		if (quantity && format.headerRow) column.unit = headerUnit(column.header, quantity);
	}
	const guessed = context.guessUnits?.(columns, format.sample, format.decimal) ?? new Map<number, string>();
	for (const column of columns) {
		if (!column.field || column.unit) continue;
		column.unit = guessed.get(column.index) ?? rangeUnit(column.field, numbersOf(format.sample, column.index, format.decimal), context.prefs);
	}
	return { format: { delimiter: format.delimiter, decimal: format.decimal, headerRow: format.headerRow }, columns };
}

/** Headerless files: a column counting 1, 2, 3… is the sequence; a column of times is the time. */
function suggestFromValues(columns: ResolvedColumn[], format: DetectedFormat) {
	const rows = format.sample;
	if (rows.length === 0) return;
	for (const column of columns) {
		const cells = rows.map((r) => (r[column.index] ?? '').trim()).filter((c) => c !== '');
		if (cells.length === 0) continue;
		const numbers = cells.map((c) => parseNumber(c, format.decimal));
		const counting = numbers.every((n, i) => Number.isInteger(n) && n >= 1 && (i === 0 || n === numbers[i - 1] + 1));
		if (counting && !columns.some((c) => c.field === 'sequence')) {
			column.field = 'sequence';
			continue;
		}
		const times = cells.every((c) => parseTime(c).ok && /:/.test(c));
		if (times && !columns.some((c) => c.field === 'time')) column.field = 'time';
	}
}

/**
 * A unit from the values' range where the model cannot say (documented constants):
 * impact offsets whose median size exceeds 0.5 m are millimetres (inches for imperial
 * preferences) — a target face is not that large; temperatures above 200 are kelvin;
 * barometric pressures take the unit that puts them between 50 and 110 kPa.
 */
export function rangeUnit(field: ImportFieldId, values: number[], prefs: Prefs): string | null {
	const fallback = defaultUnit(field, prefs);
	if (values.length === 0) return fallback;
	const sorted = values.map(Math.abs).sort((a, b) => a - b);
	const median = sorted[Math.floor(sorted.length / 2)];
	if (field === 'impactX' || field === 'impactY') {
		const imperial = prefs.length === 'ft' || prefs.length === 'in';
		if (median > 0.5) return imperial ? 'in' : 'mm';
		return fallback === 'mm' || fallback === 'in' ? (imperial ? 'ft' : 'm') : fallback;
	}
	if (field === 'airTemperature') return median > 200 ? 'K' : fallback;
	if (field === 'barometricPressure') {
		const fits = (['Pa', 'kPa', 'bar', 'psi'] as const).find((unit) => {
			const pa = toSI('pressure', unit, median);
			return pa >= 50_000 && pa <= 110_000;
		});
		return fits ?? fallback;
	}
	return fallback;
}

/**
 * A mapping sent by a person or a script, checked against the file: columns named by header
 * (first match, case and spacing ignored) or by index; each field at most once; units that belong
 * to the field; fill pressure present; a session column only when sessions come from a column.
 * Columns the mapping does not mention are ignored.
 */
export function resolveMapping(
	input: ImportMappingInput,
	format: DetectedFormat,
	options: { sessionColumn: 'required' | 'forbidden' }
): ResolvedMapping {
	const problems: string[] = [];
	const columns: ResolvedColumn[] = format.headers.map((header, index) => ({ index, header, field: null, unit: null }));
	const key = (s: string) => s.trim().toLowerCase().replace(/\s+/g, ' ');
	for (const entry of input.columns) {
		let index = entry.index;
		if (entry.header !== undefined && (index === undefined || format.headers[index] === undefined || key(format.headers[index]) !== key(entry.header))) {
			const found = format.headers.findIndex((h) => key(h) === key(entry.header!));
			if (found < 0) {
				problems.push(`The mapping names a column “${entry.header}” that the file does not have (its columns: ${format.headers.map((h) => `“${h}”`).join(', ')}).`);
				continue;
			}
			index = found;
		}
		if (index === undefined || index >= columns.length) {
			problems.push(`The mapping names column ${index === undefined ? '?' : index + 1}, but the file has ${columns.length} columns.`);
			continue;
		}
		if (!entry.field) continue;
		const unit = entry.unit ?? null;
		if (!unitAllowed(entry.field, unit)) {
			const quantity = FIELD_BY_ID[entry.field].quantity;
			problems.push(
				quantity
					? `Column “${columns[index].header}” (${FIELD_BY_ID[entry.field].label}) needs a ${quantity} unit${unit ? `; “${unit}” is not one` : ''}.`
					: `Column “${columns[index].header}” (${FIELD_BY_ID[entry.field].label}) takes no unit.`
			);
			continue;
		}
		columns[index] = { ...columns[index], field: entry.field, unit: FIELD_BY_ID[entry.field].quantity ? unit : null };
	}
	const counts = new Map<ImportFieldId, string[]>();
	for (const c of columns) if (c.field) counts.set(c.field, [...(counts.get(c.field) ?? []), c.header]);
	for (const [field, headers] of counts)
		if (headers.length > 1) problems.push(`${FIELD_BY_ID[field].label} is mapped to ${headers.length} columns (${headers.map((h) => `“${h}”`).join(', ')}); choose one.`);
	if (!counts.has('fillPressure')) problems.push('No column is mapped to fill pressure; every shot needs one.');
	if (options.sessionColumn === 'required' && !counts.has('session'))
		problems.push('Sessions come from a column, but no column is mapped to the session title.');
	if (options.sessionColumn === 'forbidden' && counts.has('session'))
		problems.push('A session column is only used when sessions come from a column; this import goes to one session, so map it to nothing.');
	if (problems.length > 0) throw new ImportRefused(problems.join(' '), 400, 'mapping', [], 'mapping');
	const format_ = importFormat.parse(input.format ?? { delimiter: format.delimiter, decimal: format.decimal, headerRow: format.headerRow });
	return { format: format_, columns };
}

/** A saved template applied to a new file: its columns matched by header (or by position without headers). */
export function applyTemplate(template: ImportMappingInput, format: DetectedFormat): ImportMappingInput {
	const key = (s: string) => s.trim().toLowerCase().replace(/\s+/g, ' ');
	const columns = template.columns.flatMap((c) => {
		if (format.headerRow && c.header !== undefined) {
			const index = format.headers.findIndex((h) => key(h) === key(c.header!));
			return index < 0 ? [] : [{ index, header: format.headers[index], field: c.field, unit: c.unit ?? null }];
		}
		return c.index !== undefined && c.index < format.headers.length ? [{ index: c.index, header: format.headers[c.index], field: c.field, unit: c.unit ?? null }] : [];
	});
	return { columns };
}
