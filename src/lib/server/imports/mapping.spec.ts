import { describe, expect, it } from 'vitest';
import { prefsFor } from '$lib/format';
import { ImportRefused } from './errors';
import { TEMPLATE_COLUMNS } from './export';
import { headerUnit, resolveMapping, suggestMapping } from './mapping';
import { detectFormat } from './parse';

const prefs = prefsFor(null);
const suggest = (csv: string, allowSessionColumn = false) => suggestMapping(detectFormat(csv), { prefs, allowSessionColumn });
const fields = (csv: string, allowSessionColumn = false) =>
	Object.fromEntries(suggest(csv, allowSessionColumn).columns.map((c) => [c.header, [c.field, c.unit]]));

describe('units named in headers', () => {
	it.each([
		['Velocity (fps)', 'speed', 'ft/s'],
		['V0 [m/s]', 'speed', 'm/s'],
		['muzzle_speed_ft_per_s', 'speed', 'ft/s'],
		['speed kmh', 'speed', 'km/h'],
		['Pressure psi', 'pressure', 'psi'],
		['fill_pressure_kpa', 'pressure', 'kPa'],
		['Temp °F', 'temperature', 'degF'],
		['air_temperature_degc', 'temperature', 'degC'],
		['Impact X (mm)', 'length', 'mm'],
		['x', 'length', null]
	] as const)('%s → %s', (header, quantity, unit) => {
		expect(headerUnit(header, quantity)).toBe(unit);
	});
});

describe('the suggested mapping', () => {
	it('maps our own blank template exactly, in SI', () => {
		expect(fields(TEMPLATE_COLUMNS.join(',') + '\n1,2026-03-02T10:00:00Z,210000,24.3,23,0.001,-0.002,no,,6,101300\n')).toEqual({
			sequence: ['sequence', null],
			fired_at_utc: ['time', null],
			fill_pressure_pa: ['fillPressure', 'Pa'],
			muzzle_speed_m_per_s: ['muzzleSpeed', 'm/s'],
			downrange_speed_m_per_s: ['downrangeSpeed', 'm/s'],
			impact_x_m: ['impactX', 'm'],
			impact_y_m: ['impactY', 'm'],
			miss: ['miss', null],
			note: ['note', null],
			air_temperature_degc: ['airTemperature', 'degC'],
			barometric_pressure_pa: ['barometricPressure', 'Pa']
		});
	});

	it('maps common chronograph headers and keeps "air pressure" off the fill pressure', () => {
		const got = fields('Shot #,Time,Pressure (psi),Velocity (fps),V2 (fps),X (in),Y (in),Comment,Air pressure (kPa),Temp (°F)\n1,10:00:01,30,80,78,0.1,0.2,,101.3,50\n');
		expect(got['Shot #']).toEqual(['sequence', null]);
		expect(got['Time']).toEqual(['time', null]);
		expect(got['Pressure (psi)']).toEqual(['fillPressure', 'psi']);
		expect(got['Velocity (fps)']).toEqual(['muzzleSpeed', 'ft/s']);
		expect(got['V2 (fps)']).toEqual(['downrangeSpeed', 'ft/s']);
		expect(got['X (in)']).toEqual(['impactX', 'in']);
		expect(got['Comment']).toEqual(['note', null]);
		expect(got['Air pressure (kPa)']).toEqual(['barometricPressure', 'kPa']);
		expect(got['Temp (°F)']).toEqual(['airTemperature', 'degF']);
	});

	it('takes millimetres for offsets whose size says so, and a session column only when asked', () => {
		const csv = 'session,fill,dx,dy\nRun A,2.1,12,-7\nRun A,2.2,-3,15\nRun B,2.0,4,4\n';
		expect(fields(csv).dx).toEqual(['impactX', 'mm']);
		expect(fields(csv).session).toEqual([null, null]);
		expect(fields(csv, true).session).toEqual(['session', null]);
	});

	it('finds the sequence and the time by their values when there is no header', () => {
		const got = suggest('1,10:00:01,2.1\n2,10:01:30,2.2\n3,10:02:10,2.3\n');
		expect(got.columns.map((c) => c.field)).toEqual(['sequence', 'time', null]);
	});
});

describe('a mapping sent by a script', () => {
	const format = detectFormat('Shot,Pressure (bar),V0\n1,2.1,24.3\n');

	it('finds columns by header or index', () => {
		const m = resolveMapping(
			{ columns: [{ header: 'pressure (BAR)', field: 'fillPressure', unit: 'bar' }, { index: 2, field: 'muzzleSpeed', unit: 'm/s' }] },
			format,
			{ sessionColumn: 'forbidden' }
		);
		expect(m.columns.map((c) => [c.field, c.unit])).toEqual([
			[null, null],
			['fillPressure', 'bar'],
			['muzzleSpeed', 'm/s']
		]);
	});

	it('is refused with every problem named', () => {
		let err: unknown;
		try {
			resolveMapping(
				{ columns: [{ header: 'Speed', field: 'muzzleSpeed', unit: 'm/s' }, { index: 2, field: 'muzzleSpeed', unit: 'furlongs' }] },
				format,
				{ sessionColumn: 'forbidden' }
			);
		} catch (e) {
			err = e;
		}
		expect(err).toBeInstanceOf(ImportRefused);
		const message = (err as ImportRefused).message;
		expect(message).toMatch(/column “Speed” that the file does not have/);
		expect(message).toMatch(/needs a speed unit; “furlongs” is not one/);
		expect(message).toMatch(/No column is mapped to fill pressure/);
	});
});
