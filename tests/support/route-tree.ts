// Reads the route tree from src/routes the way SvelteKit sees it: every page, every named form
// action and every HTTP method of an endpoint. The role × route checks are built from this list,
// so a route added to the tree is checked (or reported missing from the table) without anyone
// remembering to list it.
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';

export const ROUTES_DIR = path.resolve('src/routes');

export const HTTP_METHODS = ['GET', 'HEAD', 'POST', 'PUT', 'PATCH', 'DELETE', 'OPTIONS'] as const;
export type HttpMethod = (typeof HTTP_METHODS)[number];

export type RouteFiles = {
	/** SvelteKit's route id: the folder under src/routes, groups included ("/(app)/rigs/[id]"). */
	id: string;
	/** The route renders a page (a GET of its URL runs its load functions). */
	page: boolean;
	/** Named form actions of +page.server.ts ("default" for an unnamed one). */
	actions: string[];
	/** HTTP methods exported by +server.ts. */
	methods: HttpMethod[];
	/** Route module files, relative to the project root. */
	files: { pageServer?: string; server?: string };
};

/** Index just past the "}" closing a template's "${…}" that starts at `from`, minding strings inside. */
function endOfExpression(source: string, from: number) {
	let depth = 1;
	let i = from;
	while (i < source.length && depth > 0) {
		const c = source[i];
		if (c === '"' || c === "'" || c === '`') {
			i++;
			while (i < source.length && source[i] !== c) {
				if (source[i] === '\\') i++;
				else if (c === '`' && source[i] === '$' && source[i + 1] === '{') {
					i = endOfExpression(source, i + 2);
					continue;
				}
				i++;
			}
		} else if (c === '{') depth++;
		else if (c === '}') depth--;
		i++;
	}
	return i;
}

/** Strip comments and the contents of string literals, so braces inside them do not count. */
function blankStringsAndComments(source: string) {
	let out = '';
	let i = 0;
	while (i < source.length) {
		const c = source[i];
		const next = source[i + 1];
		if (c === '/' && next === '/') {
			while (i < source.length && source[i] !== '\n') i++;
		} else if (c === '/' && next === '*') {
			i = source.indexOf('*/', i + 2);
			i = i < 0 ? source.length : i + 2;
		} else if (c === '"' || c === "'" || c === '`') {
			// Keep the quotes (a quoted property name stays readable), drop what is inside.
			const quote = c;
			let literal = '';
			i++;
			while (i < source.length && source[i] !== quote) {
				if (source[i] === '\\') i++;
				else if (quote === '`' && source[i] === '$' && source[i + 1] === '{') {
					i = endOfExpression(source, i + 2);
					continue;
				} else literal += source[i];
				i++;
			}
			i++;
			out += quote + (quote === '`' ? '' : literal.replace(/[^\w$-]/g, '_')) + quote;
			continue;
		} else {
			out += c;
			i++;
		}
	}
	return out;
}

/**
 * The property names of `export const actions = { … }`: "name: …", "name(…) {…}",
 * "async name(…)", shorthand "name", quoted names. Throws on what it cannot read (a spread,
 * an object built elsewhere), so the matrix never silently skips an action.
 */
export function parseActionNames(source: string, file = 'file'): string[] {
	const code = blankStringsAndComments(source);
	const start = code.search(/export\s+const\s+actions\b/);
	if (start < 0) return [];
	const open = code.indexOf('{', start);
	const between = code.slice(start, open);
	if (open < 0 || !/=\s*(\(\s*)?$/.test(between.replace(/:\s*[\w.<>\s,]+/, '')))
		throw new Error(`${file}: cannot read the actions object; write "export const actions = { name: … }".`);
	const names: string[] = [];
	let depth = 0;
	let segment = '';
	for (let i = open; i < code.length; i++) {
		const c = code[i];
		if ('{(['.includes(c)) depth++;
		if ('})]'.includes(c)) depth--;
		if (depth === 0) {
			names.push(segment);
			break;
		}
		if (depth === 1 && c === ',') {
			names.push(segment);
			segment = '';
		} else if (!(depth === 1 && c === '{' && i === open)) segment += c;
	}
	return names
		.map((s) => s.trim())
		.filter(Boolean)
		.map((property) => {
			if (property.startsWith('...')) throw new Error(`${file}: the matrix cannot read a spread ("${property}") in actions; list each action.`);
			const match = property.match(/^(?:async\s+)?(?:(["'])([\w$-]+)\1|([A-Za-z_$][\w$]*))\s*(?::|\(|$)/);
			if (!match) throw new Error(`${file}: cannot read the action "${property.slice(0, 40)}…".`);
			return match[2] ?? match[3];
		});
}

/** The HTTP methods a +server.ts exports (export const GET / export function POST / export { PUT }). */
export function parseMethods(source: string): HttpMethod[] {
	const code = blankStringsAndComments(source);
	const found = new Set<HttpMethod>();
	for (const m of code.matchAll(/export\s+(?:const|let|var|(?:async\s+)?function)\s+([A-Z]+)\b/g))
		if ((HTTP_METHODS as readonly string[]).includes(m[1])) found.add(m[1] as HttpMethod);
	for (const m of code.matchAll(/export\s*\{([^}]*)\}/g))
		for (const part of m[1].split(',')) {
			const name = part.trim().split(/\s+as\s+/).pop()!.trim();
			if ((HTTP_METHODS as readonly string[]).includes(name)) found.add(name as HttpMethod);
		}
	return [...found].sort((a, b) => HTTP_METHODS.indexOf(a) - HTTP_METHODS.indexOf(b));
}

/** Every route of the tree that has a page or an endpoint, sorted by id. */
export function scanRoutes(dir = ROUTES_DIR): RouteFiles[] {
	const routes: RouteFiles[] = [];
	const walk = (folder: string) => {
		const rel = path.relative(dir, folder).split(path.sep).join('/');
		const id = '/' + rel;
		const has = (name: string) => existsSync(path.join(folder, name));
		const pageServer = ['+page.server.ts', '+page.server.js'].find(has);
		const server = ['+server.ts', '+server.js'].find(has);
		const page = ['+page.svelte', '+page.ts', '+page.js'].some(has) || Boolean(pageServer);
		if (page || server) {
			const relFile = (name: string) => path.relative(process.cwd(), path.join(folder, name)).split(path.sep).join('/');
			routes.push({
				id: id === '/' ? '/' : id.replace(/\/$/, ''),
				page,
				actions: pageServer ? parseActionNames(readFileSync(path.join(folder, pageServer), 'utf8'), relFile(pageServer)) : [],
				methods: server ? parseMethods(readFileSync(path.join(folder, server), 'utf8')) : [],
				files: { pageServer: pageServer && relFile(pageServer), server: server && relFile(server) }
			});
		}
		for (const entry of readdirSync(folder, { withFileTypes: true })) if (entry.isDirectory()) walk(path.join(folder, entry.name));
	};
	walk(dir);
	return routes.sort((a, b) => a.id.localeCompare(b.id));
}

/** The URL of a route id without parameters: groups dropped ("/(app)/(admin)/users" → "/users"). */
export function plainPath(routeId: string): string | null {
	if (/\[/.test(routeId)) return null;
	const parts = routeId.split('/').filter((s) => s && !/^\(.*\)$/.test(s));
	return '/' + parts.join('/');
}

/** Route parameters of a concrete path, e.g. ("/(app)/rigs/[id]", "/rigs/5") → { id: "5" }. */
export function paramsOf(routeId: string, urlPath: string): Record<string, string> {
	const segments = routeId.split('/').filter((s) => s && !/^\(.*\)$/.test(s));
	const values = urlPath.split('?')[0].split('/').filter(Boolean);
	const params: Record<string, string> = {};
	segments.forEach((segment, i) => {
		const m = segment.match(/^\[(?:\.\.\.)?([\w]+)(?:=\w+)?\]$/);
		if (m) params[m[1]] = decodeURIComponent(values[i] ?? '');
	});
	return params;
}
