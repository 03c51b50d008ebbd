// Cell values of a chronograph file: numbers in the file's decimal convention, yes/no flags, and
// times. Pure functions, so the browser-free validation and the unit tests share them.
import type { DecimalSeparator } from '$lib/schemas/imports';

/**
 * Cells read as empty: chronographs write a dash or "n/a" for a reading they did not get.
 * (A required field left like this is reported as missing.)
 */
const EMPTY_TOKENS = new Set(['', '-', '--', '---', '—', 'n/a', 'na', 'null', 'none']);

export function isEmptyCell(cell: string): boolean {
	return EMPTY_TOKENS.has(cell.trim().toLowerCase());
}

const PLAIN_POINT = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
const PLAIN_COMMA = /^[+-]?(?:\d+,?\d*|,\d+)(?:[eE][+-]?\d+)?$/;
/**
 * Thousands grouped with commas (point decimals), only where that cannot be a decimal comma:
 * two groups or more, or a decimal point after them (1,234,567 or 1,234.5, but not 97,448).
 */
const GROUPED_COMMA = /^[+-]?\d{1,3}(?:(?:,\d{3}){2,}(?:\.\d*)?|,\d{3}\.\d*)$/;
const GROUPED_SPACE_POINT = /^[+-]?\d{1,3}(?:[ \u00a0\u202f]\d{3})+(?:\.\d*)?$/;
const GROUPED_SPACE_COMMA = /^[+-]?\d{1,3}(?:[ \u00a0\u202f]\d{3})+(?:,\d*)?$/;

/**
 * A number written with the file's decimal separator, or NaN when the cell is not one. Grouped
 * thousands are accepted where they cannot be mistaken for decimals (1,234.5, 1,234,567 or
 * 101 325 with a decimal point; 101 325,5 with a decimal comma). Caller checks emptiness first.
 */
export function parseNumber(cell: string, decimal: DecimalSeparator): number {
	const s = cell.trim();
	if (decimal === '.') {
		if (PLAIN_POINT.test(s)) return Number(s);
		if (GROUPED_COMMA.test(s)) return Number(s.replace(/,/g, ''));
		if (GROUPED_SPACE_POINT.test(s)) return Number(s.replace(/[ \u00a0\u202f]/g, ''));
		return Number.NaN;
	}
	if (PLAIN_COMMA.test(s)) return Number(s.replace(',', '.'));
	if (GROUPED_SPACE_COMMA.test(s)) return Number(s.replace(/[ \u00a0\u202f]/g, '').replace(',', '.'));
	return Number.NaN;
}

const TRUE_WORDS = new Set(['1', 'y', 'yes', 'true', 'miss', 'missed', 'x', 'm']);
const FALSE_WORDS = new Set(['0', 'n', 'no', 'false', 'hit', 'h']);

/** The miss flag: true, false, or null when the cell is none of the accepted words. Empty → false. */
export function parseMiss(cell: string): boolean | null {
	const s = cell.trim().toLowerCase();
	if (s === '') return false;
	if (TRUE_WORDS.has(s)) return true;
	if (FALSE_WORDS.has(s)) return false;
	return null;
}

export type ParsedTime = { ok: true; ms: number } | { ok: true; timeOfDayMs: number } | { ok: false; reason: string };

const ISO = /^(\d{4})-(\d{2})-(\d{2})(?:[T ](\d{2}):(\d{2})(?::(\d{2})(?:[.,](\d{1,9}))?)?)?\s*(Z|[+-]\d{2}(?::?\d{2})?)?$/i;
const YEAR_SLASH = /^(\d{4})\/(\d{2})\/(\d{2})(?:[T ](\d{2}):(\d{2})(?::(\d{2})(?:[.,](\d{1,9}))?)?)?$/;
const DAY_DOT = /^(\d{1,2})\.(\d{1,2})\.(\d{4})(?:[ T](\d{1,2}):(\d{2})(?::(\d{2})(?:[.,](\d{1,9}))?)?)?$/;
const TIME_OF_DAY = /^(\d{1,2}):(\d{2})(?::(\d{2})(?:[.,](\d{1,9}))?)?$/;
const SLASHED = /^\d{1,2}\/\d{1,2}\/\d{2,4}/;

const fraction = (digits: string | undefined) => (digits ? Number(`0.${digits}`) * 1000 : 0);

function utc(y: number, mo: number, d: number, h = 0, mi = 0, s = 0, ms = 0): number | null {
	if (mo < 1 || mo > 12 || d < 1 || d > 31 || h > 23 || mi > 59 || s > 60) return null;
	const t = Date.UTC(y, mo - 1, d, h, mi, Math.min(s, 59), ms);
	// Date.UTC rolls 31 February over into March; such a date is not a date.
	const check = new Date(t);
	if (check.getUTCMonth() !== mo - 1 || check.getUTCDate() !== d) return null;
	return t;
}

function zoneOffsetMs(zone: string | undefined): number {
	if (!zone || zone.toUpperCase() === 'Z') return 0;
	const sign = zone.startsWith('-') ? -1 : 1;
	const digits = zone.slice(1).replace(':', '');
	const hours = Number(digits.slice(0, 2));
	const minutes = digits.length > 2 ? Number(digits.slice(2, 4)) : 0;
	return sign * (hours * 60 + minutes) * 60_000;
}

const HOW = 'write 2026-03-02 14:05:09 (UTC unless a zone such as +01:00 follows), 02.03.2026 14:05:09, or 14:05:09 for the session’s date';

/**
 * When a shot was fired. A date and time without a zone is UTC (the app shows UTC throughout);
 * a time of day alone is placed on the session's date by the caller. Day-first dates with dots
 * are accepted; slashed dates such as 03/04/2026 are refused as ambiguous (3 April or 4 March).
 */
export function parseTime(cell: string): ParsedTime {
	const s = cell.trim();
	let m = ISO.exec(s);
	if (m) {
		const t = utc(+m[1], +m[2], +m[3], +(m[4] ?? 0), +(m[5] ?? 0), +(m[6] ?? 0), fraction(m[7]));
		if (t === null) return { ok: false, reason: `Not a real date and time: “${s}”.` };
		return { ok: true, ms: t - zoneOffsetMs(m[8]) };
	}
	m = YEAR_SLASH.exec(s);
	if (m) {
		const t = utc(+m[1], +m[2], +m[3], +(m[4] ?? 0), +(m[5] ?? 0), +(m[6] ?? 0), fraction(m[7]));
		return t === null ? { ok: false, reason: `Not a real date and time: “${s}”.` } : { ok: true, ms: t };
	}
	m = DAY_DOT.exec(s);
	if (m) {
		const t = utc(+m[3], +m[2], +m[1], +(m[4] ?? 0), +(m[5] ?? 0), +(m[6] ?? 0), fraction(m[7]));
		return t === null ? { ok: false, reason: `Not a real date and time: “${s}”.` } : { ok: true, ms: t };
	}
	m = TIME_OF_DAY.exec(s);
	if (m) {
		const h = +m[1];
		const mi = +m[2];
		const sec = +(m[3] ?? 0);
		if (h > 23 || mi > 59 || sec > 59) return { ok: false, reason: `Not a time of day: “${s}”.` };
		return { ok: true, timeOfDayMs: ((h * 60 + mi) * 60 + sec) * 1000 + fraction(m[4]) };
	}
	if (SLASHED.test(s)) return { ok: false, reason: `The date “${s}” is ambiguous (day/month or month/day?): ${HOW}.` };
	return { ok: false, reason: `Not a date and time: “${s}”; ${HOW}.` };
}

/** Characters a spreadsheet would start a formula with (design/product.md, CSV export). */
const FORMULA_START = /^[=+\-@\t\r]/;

/** A text cell as a spreadsheet should show it: one that would start a formula gets a leading '. */
export function neutralise(text: string): string {
	return FORMULA_START.test(text) ? `'${text}` : text;
}

/** The inverse of neutralise for text read back from an export: drop the ' it added. */
export function unneutralise(text: string): string {
	return text.length > 1 && text[0] === "'" && FORMULA_START.test(text.slice(1)) ? text.slice(1) : text;
}
