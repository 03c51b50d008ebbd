// db/raw.ts's pure helpers (the SQL they run is covered by tests/integration/shots.test.ts).
import { describe, expect, it } from 'vitest';
import { MySqlDialect } from 'drizzle-orm/mysql-core';
import { shots } from './schema';
import { asDrizzle, columnName, insertColumns, insertedRow, selectList } from './raw';

describe('raw SQL helpers', () => {
	it('name columns as MariaDB does (snake_case, explicit names kept)', () => {
		expect(columnName(shots.fillGaugePa)).toBe('fill_gauge_pa');
		expect(columnName(shots.impactXM)).toBe('impact_x_m');
		expect(selectList(shots, 's')).toMatch(/^`s`\.`id`, `s`\.`session_id`, /);
	});

	it('turn a statement with placeholders into Drizzle SQL with the same values, and refuse a count mismatch', () => {
		const query = new MySqlDialect().sqlToQuery(asDrizzle({ sql: 'SELECT a FROM t WHERE b = ? AND c = ?', values: [1, 'x'] }));
		expect(query).toMatchObject({ sql: 'SELECT a FROM t WHERE b = ? AND c = ?', params: [1, 'x'] });
		expect(() => asDrizzle({ sql: 'SELECT ?', values: [] })).toThrow(/1 placeholders, 0 values/);
	});

	it('convert inserted values by their columns, and refuse to guess a column left to its default', () => {
		const at = new Date('2026-12-02T07:00:00.123Z');
		const values = { sessionId: 1, sequence: 2, clientUuid: 'u', firedAt: at, fillGaugePa: 2e5, miss: false, createdAt: at, updatedAt: at };
		const { keys, names, params } = insertColumns(shots, values);
		expect(keys).toContain('firedAt');
		expect(names[keys.indexOf('firedAt')]).toBe('`fired_at`');
		expect(params[keys.indexOf('firedAt')]).toBe('2026-12-02 07:00:00.123');
		expect(insertedRow(shots, { ...values, aboveRating: false, id: 9 })).toMatchObject({ id: 9, note: null, deletedAt: null, firedAt: at });
		const { createdAt: _left, ...withoutCreated } = values;
		expect(() => insertedRow(shots, { ...withoutCreated, aboveRating: false, id: 9 })).toThrow(/createdAt has a database default/);
	});
});
