// Seeded property-based fuzzing (fast-check) of the built app: every operation of the OpenAPI
// document the app serves, with bodies and parameters generated from its own JSON Schemas (mostly
// plausible values, often hostile ones: null, wrong types, dates outside MariaDB's range, huge
// numbers, long text), and every list page with generated query parameters. The properties: no
// answer is a 5xx, and a batch of requests that were all refused leaves every table's row count
// as it was. Fixed seed, so a failure is reproducible; the failing request is printed.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { bearerFor, signInCookie, startBuiltApp, type BuiltApp } from '../support/app-server';

const SEED = 20260614;
const API_REQUESTS = 4200;
const PAGE_REQUESTS = 1200;
/** Requests in flight at once (the machine has two cores; the app and MariaDB share them). */
const CONCURRENCY = 8;

type Schema = {
	$ref?: string;
	type?: string | string[];
	properties?: Record<string, Schema>;
	items?: Schema;
	enum?: unknown[];
	anyOf?: Schema[];
	oneOf?: Schema[];
	minimum?: number;
	maximum?: number;
	exclusiveMinimum?: number;
	format?: string;
	maxLength?: number;
};
type Parameter = { name: string; in: 'path' | 'query'; schema?: Schema };
type Operation = { parameters?: Parameter[]; requestBody?: { content: Record<string, { schema: Schema }> } };
type Document = { paths: Record<string, Record<string, Operation>>; components: { schemas: Record<string, Schema> } };
type FuzzRequest = { method: string; path: string; body?: string; contentType?: string; page: boolean };

/** Values that have broken handlers somewhere: wrong types, edges of MariaDB's ranges, junk. */
const hostile = fc.constantFrom<unknown>(
	null,
	true,
	'',
	'x',
	-1,
	0,
	1e308,
	-1e308,
	8.64e15,
	2 ** 63,
	'1e308',
	'+010000-01-01T00:00:00Z',
	'0000-00-00T00:00:00Z',
	'9999-12-31T23:59:59.999Z',
	'\u0000',
	'a'.repeat(5000),
	[],
	{},
	{ $ne: 1 }
);

function resolve(doc: Document, schema: Schema): Schema {
	return schema.$ref ? resolve(doc, doc.components.schemas[schema.$ref.split('/').pop()!]) : schema;
}

/** An arbitrary for a JSON Schema: plausible values four times in five, hostile ones otherwise. */
function valueOf(doc: Document, raw: Schema, depth = 0): fc.Arbitrary<unknown> {
	const schema = resolve(doc, raw);
	const alternatives = schema.anyOf ?? schema.oneOf;
	let plausible: fc.Arbitrary<unknown>;
	const type = Array.isArray(schema.type) ? schema.type.find((t) => t !== 'null') : schema.type;
	if (alternatives) plausible = fc.oneof(...alternatives.map((s) => valueOf(doc, s, depth + 1)));
	else if (schema.enum) plausible = fc.constantFrom(...schema.enum);
	else if (type === 'object' && depth < 3) {
		const shape = Object.fromEntries(Object.entries(schema.properties ?? {}).map(([k, s]) => [k, valueOf(doc, s, depth + 1)]));
		plausible = fc.record(shape, { requiredKeys: [] });
	} else if (type === 'array' && depth < 3) plausible = fc.array(valueOf(doc, schema.items ?? {}, depth + 1), { maxLength: 3 });
	else if (type === 'integer') plausible = fc.integer({ min: Math.max(-1e6, schema.minimum ?? -10), max: Math.min(1e6, schema.maximum ?? 1000) });
	else if (type === 'number') {
		const min = schema.minimum ?? schema.exclusiveMinimum ?? -1e3;
		const max = schema.maximum ?? 1e6;
		plausible = fc.double({ min, max, noNaN: true, noDefaultInfinity: true });
	} else if (type === 'boolean') plausible = fc.boolean();
	else if (type === 'string' && schema.format === 'date-time')
		plausible = fc.oneof(fc.date({ noInvalidDate: true }).map((d) => d.toISOString()), fc.integer({ min: -1e16, max: 1e16 }));
	else if (type === 'string' && schema.format === 'uuid') plausible = fc.uuid();
	else if (type === 'string') plausible = fc.string({ maxLength: Math.min(schema.maxLength ?? 40, 300) });
	else plausible = fc.anything({ maxDepth: 1 });
	return fc.oneof({ weight: 4, arbitrary: plausible }, { weight: 1, arbitrary: hostile });
}

/** Ids that exist (from the demo lab), do not, or are not ids at all. */
function idArbitrary(ids: number[]) {
	return fc.oneof(
		{ weight: 3, arbitrary: fc.constantFrom(...ids.map(String)) },
		{ weight: 1, arbitrary: fc.constantFrom('0', '-1', '999999999', '1e308', '9999999999999999999999', 'abc', '1.5', '%00', '01') }
	);
}

const queryValue = fc.oneof(
	fc.constantFrom('1', '0', '-1', '2', '1e308', '1e3', '0x10', '99999999999999999999', 'true', 'false', 'asc', 'desc', 'open', 'closed', 'name', 'startedAt', ''),
	fc.constantFrom('2026-03-02', '+275760-09-13', '0001-01-01', '9999-12-31T23:59:59Z', '2026-13-45', '%', '_', '\\', "' OR 1=1 --"),
	fc.string({ maxLength: 30 }),
	fc.integer().map(String)
);

function queryString(names: string[]) {
	return fc
		.dictionary(names.length ? fc.constantFrom(...names) : fc.constant('q'), queryValue, { maxKeys: 4 })
		.map((params) => {
			const search = new URLSearchParams(params as Record<string, string>).toString();
			return search ? `?${search}` : '';
		});
}

function operationRequests(doc: Document, ids: number[]): fc.Arbitrary<FuzzRequest>[] {
	const arbitraries: fc.Arbitrary<FuzzRequest>[] = [];
	for (const [template, methods] of Object.entries(doc.paths)) {
		for (const [method, op] of Object.entries(methods)) {
			const queryNames = (op.parameters ?? []).filter((p) => p.in === 'query').map((p) => p.name);
			const jsonSchema = op.requestBody?.content['application/json']?.schema;
			const body: fc.Arbitrary<{ body?: string; contentType?: string }> = jsonSchema
				? fc.oneof(
						{ weight: 8, arbitrary: valueOf(doc, jsonSchema).map((v) => ({ body: JSON.stringify(v) ?? 'null', contentType: 'application/json' })) },
						{ weight: 1, arbitrary: fc.constantFrom({ body: '{"a":', contentType: 'application/json' }, { body: 'x=1', contentType: 'text/plain' }, { body: '[]', contentType: 'application/json' }) }
					)
				: fc.constant({});
			arbitraries.push(
				fc.record({ id: idArbitrary(ids), query: queryString(queryNames), body }).map(({ id, query, body }) => ({
					method: method.toUpperCase(),
					path: template.replace('{id}', encodeURIComponent(id)) + query,
					...body,
					page: false
				}))
			);
		}
	}
	return arbitraries;
}

/** The list pages with the parameters they read (listing.ts and the pages' own filters). */
function pageRequests(ids: number[]): fc.Arbitrary<FuzzRequest> {
	const listNames = ['page', 'pageSize', 'sort', 'dir', 'q', 'deleted'];
	const pages: [string, string[]][] = [
		['/rigs', listNames],
		['/projectiles', listNames],
		['/plans', listNames],
		['/sessions', [...listNames, 'rigId', 'status']],
		['/imports', listNames],
		['/calibrations', listNames],
		['/rig-health', listNames],
		['/setup', ['plan', 'rig', 'projectile']],
		...ids.slice(0, 3).map((id): [string, string[]] => [`/sessions/${id}`, ['page', 'mailed']]),
		...ids.slice(0, 2).map((id): [string, string[]] => [`/rigs/${id}/shots.csv`, ['from', 'to']])
	];
	return fc.oneof(...pages.map(([path, names]) => queryString(names).map((query) => ({ method: 'GET', path: path + query, page: true }))));
}

let app: BuiltApp;
let token: string;
let cookie: string;

beforeAll(async () => {
	app = await startBuiltApp();
	token = await bearerFor(app, 'admin');
	cookie = await signInCookie(app, 'viewer');
}, 120_000);
afterAll(async () => {
	await app?.stop();
});

/** Rows in every table of the scratch database, one query. */
async function rowCounts(): Promise<Record<string, number>> {
	const [tables] = (await app.pool.query(
		"SELECT table_name AS name FROM information_schema.tables WHERE table_schema = DATABASE() AND table_type = 'BASE TABLE' AND table_name NOT IN ('__drizzle_migrations', 'sign_in_limits')"
	)) as unknown as [{ name: string }[]];
	const union = tables.map((t) => `SELECT '${t.name}' AS name, COUNT(*) AS n FROM \`${t.name}\``).join(' UNION ALL ');
	const [rows] = (await app.pool.query(union)) as unknown as [{ name: string; n: number }[]];
	return Object.fromEntries(rows.map((r) => [r.name, Number(r.n)]));
}

async function send(request: FuzzRequest) {
	const headers: Record<string, string> = request.page ? { cookie, accept: 'text/html' } : { authorization: `Bearer ${token}`, accept: 'application/json' };
	if (request.contentType) headers['content-type'] = request.contentType;
	const response = await fetch(`${app.base}${request.path}`, { method: request.method, headers, body: request.body, redirect: 'manual' });
	await response.arrayBuffer();
	return response.status;
}

describe('fuzzing every API operation and list page (fast-check, seed ' + SEED + ')', () => {
	it(`answers ${API_REQUESTS + PAGE_REQUESTS} generated requests without a 5xx, and refused batches write nothing`, async () => {
		const doc = (await (await fetch(`${app.base}/api/v1/openapi.json`)).json()) as Document;
		const [sessionRows] = (await app.pool.query('SELECT id FROM range_sessions ORDER BY id LIMIT 5')) as unknown as [{ id: number }[]];
		const ids = [...sessionRows.map((r) => r.id), 1, 2];
		const operations = operationRequests(doc, ids);
		expect(operations.length).toBe(Object.values(doc.paths).reduce((n, methods) => n + Object.keys(methods).length, 0));

		// Every operation gets its share, then the rest at random; pages likewise.
		const perOperation = Math.floor(API_REQUESTS / operations.length);
		const requests = [
			...operations.flatMap((arbitrary, i) => fc.sample(arbitrary, { seed: SEED + i, numRuns: perOperation })),
			...fc.sample(fc.oneof(...operations), { seed: SEED - 1, numRuns: API_REQUESTS - perOperation * operations.length }),
			...fc.sample(pageRequests(ids), { seed: SEED - 2, numRuns: PAGE_REQUESTS })
		];

		const failures: string[] = [];
		let checkedRefusals = 0;
		const started = Date.now();
		for (let start = 0; start < requests.length; start += CONCURRENCY) {
			const batch = requests.slice(start, start + CONCURRENCY);
			const before = await rowCounts();
			const statuses = await Promise.all(batch.map(send));
			statuses.forEach((status, i) => {
				if (status >= 500) failures.push(`${status} ${batch[i].method} ${batch[i].path} ${batch[i].body?.slice(0, 300) ?? ''}`);
			});
			if (statuses.every((s) => s >= 400)) {
				const after = await rowCounts();
				expect(after, `refused batch changed rows: ${batch.map((r) => `${r.method} ${r.path}`).join(', ')}`).toEqual(before);
				checkedRefusals += batch.length;
			}
		}
		const seconds = (Date.now() - started) / 1000;
		console.info(`fuzz: ${requests.length} requests in ${seconds.toFixed(1)} s; ${checkedRefusals} refused in all-refused batches checked for row counts; ${failures.length} answers ≥ 500`);
		expect(requests.length).toBeGreaterThanOrEqual(5000);
		expect(checkedRefusals).toBeGreaterThan(1000);
		expect(failures, failures.slice(0, 20).join('\n')).toEqual([]);
	}, 180_000);
});
