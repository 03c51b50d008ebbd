import { isHttpError } from '@sveltejs/kit';
import { describe, expect, it } from 'vitest';
import { blankTemplate, csvField, csvLine, dateRangeParams, downloadName, TEMPLATE_COLUMNS } from './export';

describe('CSV fields (RFC 4180)', () => {
	it('writes numbers plainly, negatives included, to 15 significant digits', () => {
		expect(csvLine([-0.0045000000000000005, 101325, -2, 0.1 + 0.2, null, Number.NaN])).toBe('-0.0045,101325,-2,0.3,,\r\n');
	});

	it('quotes text with commas, quotes, line breaks or edge spaces', () => {
		expect(csvField('a, b')).toBe('"a, b"');
		expect(csvField('say "hi"')).toBe('"say ""hi"""');
		expect(csvField('two\nlines')).toBe('"two\nlines"');
		expect(csvField(' padded')).toBe('" padded"');
		expect(csvField(true)).toBe('yes');
	});
});

describe('the blank template', () => {
	it('is our header row with the units in the names', () => {
		expect(blankTemplate()).toBe(
			'sequence,fired_at_utc,fill_pressure_pa,muzzle_speed_m_per_s,downrange_speed_m_per_s,impact_x_m,impact_y_m,miss,note,air_temperature_degc,barometric_pressure_pa\r\n'
		);
		expect(TEMPLATE_COLUMNS).toHaveLength(11);
	});
});

describe('date range parameters', () => {
	const range = (query: string) => dateRangeParams(new URL(`http://x/rigs/1/shots.csv?${query}`));
	const refusal = (query: string) => {
		try {
			range(query);
		} catch (err) {
			if (isHttpError(err)) return err;
			throw err;
		}
		throw new Error('expected a 400');
	};

	it('reads dates as whole UTC days and date-times as given', () => {
		expect(range('from=2026-03-01&to=2026-03-02')).toEqual({ from: new Date('2026-03-01T00:00:00.000Z'), to: new Date('2026-03-02T23:59:59.999Z') });
		expect(range('from=2026-03-01T10:00:00%2B01:00')).toEqual({ from: new Date('2026-03-01T09:00:00.000Z'), to: null });
		expect(range('from=&to=')).toEqual({ from: null, to: null });
	});

	it('answers 400 naming the parameter', () => {
		const bad = refusal('from=yesterday');
		expect(bad.status).toBe(400);
		expect(bad.body.message).toBe('URL parameter "from" must be a date (2026-03-02) or a date and time (2026-03-02T14:00:00Z); got "yesterday".');
		expect(refusal('to=2026-02-30').body.message).toMatch(/^URL parameter "to"/);
		expect(refusal('from=2026-03-05&to=2026-03-01').body.message).toBe('URL parameter "to" (2026-03-01) lies before "from" (2026-03-05).');
	});
});

describe('download names', () => {
	it('keep letters, digits, dots and dashes', () => {
		expect(downloadName('session', 12, 'H1 · run "A"/B', 'shots')).toBe('session-12-H1-run-A-B-shots');
	});
});
