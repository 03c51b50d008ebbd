import { describe, expect, it } from 'vitest';
import { apiRouteFiles } from '../../../tests/support/api-routes';
import { apiReference, openApiDocument, operationExamples } from './openapi';

describe('the OpenAPI document', () => {
	const doc = openApiDocument();

	it('is OpenAPI 3.1 with both ways to authenticate', () => {
		expect(doc.openapi).toBe('3.1.0');
		expect(Object.keys(doc.components.securitySchemes).sort()).toEqual(['bearerToken', 'sessionCookie']);
	});

	it('documents every method of every route file under src/routes/api/v1', () => {
		const routes = apiRouteFiles();
		expect(routes.length).toBeGreaterThan(10);
		for (const route of routes) {
			expect(doc.paths, `${route.file} is not in the document`).toHaveProperty([route.path]);
			expect(Object.keys(doc.paths[route.path]).sort(), route.file).toEqual([...route.methods].sort());
		}
	});

	it('has unique operation ids and resolvable references', () => {
		const ids = Object.values(doc.paths).flatMap((p) => Object.values(p).map((op) => (op as { operationId: string }).operationId));
		expect(new Set(ids).size).toBe(ids.length);
		const refs = [...JSON.stringify(doc).matchAll(/"\$ref":"#\/components\/(schemas|responses)\/(\w+)"/g)];
		for (const [, kind, name] of refs) expect(doc.components[kind as 'schemas' | 'responses'], name).toHaveProperty([name]);
	});

	it('carries the bounds and units of the zod schemas', () => {
		const shot = doc.components.schemas.ShotInput as { properties: Record<string, { anyOf?: Record<string, unknown>[] }> };
		expect(shot.properties.muzzleSpeedMps.anyOf?.[0]).toMatchObject({ type: 'number', exclusiveMinimum: 0, maximum: 2000, 'x-unit': 'm/s' });
		const rig = doc.components.schemas.RigInput as { required: string[] };
		expect(rig.required).toContain('ratedPressurePa');
	});

	it('shows example bodies that its own schemas accept', () => {
		for (const { operationId, schema, example } of operationExamples()) {
			const parsed = schema.safeParse(example);
			expect(parsed.success, `${operationId}: ${JSON.stringify(parsed.error?.issues)}`).toBe(true);
		}
	});

	it('gives the API page a field table with units and bounds', () => {
		const shots = apiReference('http://127.0.0.1:3000').find((t) => t.name === 'Shots')!;
		const logShot = shots.operations.find((o) => o.operationId === 'logShot')!;
		expect(logShot.accessLabel).toBe('Range officer and up');
		expect(logShot.fields.find((f) => f.name === 'fillGaugePa')).toMatchObject({ unit: 'Pa', bounds: '≥ 0, ≤ 50000000', required: true });
		expect(logShot.curl).toContain('Authorization: Bearer $SHOTWRIGHT_TOKEN');
	});
});
