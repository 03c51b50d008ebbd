// The API's route files as OpenAPI paths with the methods they export, read from the file tree,
// so a new endpoint that is missing from the OpenAPI document fails a test.
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';

const API_ROOT = path.resolve('src/routes/api/v1');

export type RouteFile = { file: string; path: string; methods: string[] };

export function apiRouteFiles(dir = API_ROOT): RouteFile[] {
	return readdirSync(dir, { withFileTypes: true }).flatMap((entry) => {
		const full = path.join(dir, entry.name);
		if (entry.isDirectory()) return apiRouteFiles(full);
		if (entry.name !== '+server.ts' && entry.name !== '+server.js') return [];
		const relative = path.relative(API_ROOT, dir).split(path.sep).filter(Boolean);
		const segments = relative.map((s) => s.replace(/^\[(?:\.\.\.)?(\w+)\]$/, '{$1}'));
		const source = readFileSync(full, 'utf8');
		const methods = [...source.matchAll(/export\s+(?:const|async\s+function|function)\s+(GET|POST|PUT|PATCH|DELETE)\b/g)].map((m) => m[1].toLowerCase());
		return [{ file: path.relative(process.cwd(), full), path: '/api/v1/' + segments.join('/'), methods }];
	});
}
