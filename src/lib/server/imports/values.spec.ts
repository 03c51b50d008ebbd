import { describe, expect, it } from 'vitest';
import { isEmptyCell, neutralise, parseMiss, parseNumber, parseTime, unneutralise } from './values';

describe('numbers in the file’s decimal convention', () => {
	it.each([
		['24.5', '.', 24.5],
		['-0.004', '.', -0.004],
		['+3', '.', 3],
		['.5', '.', 0.5],
		['1.2e5', '.', 120000],
		['1,234.5', '.', 1234.5],
		['1,234,567', '.', 1234567],
		['101 325', '.', 101325],
		['24,5', ',', 24.5],
		['-0,004', ',', -0.004],
		['101 325,5', ',', 101325.5],
		[' 7 ', '.', 7]
	] as const)('%s with decimal %s → %d', (cell, decimal, expected) => {
		expect(parseNumber(cell, decimal)).toBe(expected);
	});

	it.each([
		['abc', '.'],
		['24,5', '.'],
		['101,325', '.'],
		['24.5', ','],
		['1.234', ','],
		['12 m/s', '.'],
		['1,2,3', '.'],
		['NaN', '.'],
		['Infinity', '.'],
		['0x10', '.']
	] as const)('%s with decimal %s is not a number', (cell, decimal) => {
		expect(parseNumber(cell, decimal)).toBeNaN();
	});

	it('reads a chronograph’s "no reading" marks as empty', () => {
		for (const cell of ['', ' ', '-', '---', 'n/a', 'N/A', 'null']) expect(isEmptyCell(cell)).toBe(true);
		expect(isEmptyCell('0')).toBe(false);
	});
});

describe('the miss flag', () => {
	it('accepts the usual words and refuses the rest', () => {
		expect(['1', 'yes', 'TRUE', 'miss', 'x'].map(parseMiss)).toEqual([true, true, true, true, true]);
		expect(['0', 'no', 'false', 'hit', ''].map(parseMiss)).toEqual([false, false, false, false, false]);
		expect(parseMiss('maybe')).toBeNull();
	});
});

describe('times', () => {
	it('reads ISO 8601 as UTC unless a zone follows', () => {
		expect(parseTime('2026-03-02 14:05:09')).toEqual({ ok: true, ms: Date.UTC(2026, 2, 2, 14, 5, 9) });
		expect(parseTime('2026-03-02T14:05:09.250Z')).toEqual({ ok: true, ms: Date.UTC(2026, 2, 2, 14, 5, 9, 250) });
		expect(parseTime('2026-03-02T14:05:09+01:00')).toEqual({ ok: true, ms: Date.UTC(2026, 2, 2, 13, 5, 9) });
	});

	it('reads day-first dates with dots and times of day', () => {
		expect(parseTime('02.03.2026 14:05')).toEqual({ ok: true, ms: Date.UTC(2026, 2, 2, 14, 5) });
		expect(parseTime('14:05:09')).toEqual({ ok: true, timeOfDayMs: ((14 * 60 + 5) * 60 + 9) * 1000 });
	});

	it('refuses ambiguous and impossible dates with the reason', () => {
		const ambiguous = parseTime('03/04/2026 10:00');
		expect(ambiguous.ok).toBe(false);
		expect(!ambiguous.ok && ambiguous.reason).toMatch(/ambiguous/);
		expect(parseTime('2026-02-31 10:00').ok).toBe(false);
		expect(parseTime('25:00').ok).toBe(false);
		expect(parseTime('yesterday').ok).toBe(false);
	});
});

describe('formula injection (design/product.md: cells starting with = + - @ tab CR)', () => {
	it('neutralises text that a spreadsheet would run, and reads it back unchanged', () => {
		for (const dangerous of ['=1+1', '+41', '-2', '@SUM(A1)', '\tx', '\rx', "=HYPERLINK(\"http://x\")"]) {
			expect(neutralise(dangerous)).toBe(`'${dangerous}`);
			expect(unneutralise(neutralise(dangerous))).toBe(dangerous);
		}
		expect(neutralise('seal replaced')).toBe('seal replaced');
		expect(unneutralise("'quoted on purpose")).toBe("'quoted on purpose");
	});
});
