import { describe, expect, it } from 'vitest';
import { prefsFor } from '$lib/format';
import { digitsForError, showParameter } from './format-parameter';

describe('digitsForError', () => {
	it('shows two significant digits of the standard error', () => {
		expect(digitsForError(0.0023)).toBe(4);
		expect(digitsForError(0.012)).toBe(3);
		expect(digitsForError(1.5)).toBe(1);
		expect(digitsForError(25)).toBe(0);
		expect(digitsForError(null)).toBe(4);
	});
});

describe('showParameter', () => {
	it('rounds the value and interval to the SE’s digits', () => {
		const shown = showParameter({ value: 0.584466, standardError: 0.00231, lower: 0.5799, upper: 0.58903 }, null, prefsFor(null));
		expect(shown).toEqual({ value: '0.5845', standardError: '0.0023', lower: '0.5799', upper: '0.5890', unit: '' });
	});

	it('converts a loss force into the reader’s unit, SE included', () => {
		const shown = showParameter({ value: 4.448221615, standardError: 0.4448221615, lower: null, upper: null }, 'force', prefsFor({ force: 'lbf' }));
		expect(shown).toMatchObject({ value: '1.00', standardError: '0.10', unit: 'lbf' });
	});
});
