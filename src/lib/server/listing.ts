// Sorting, filtering and paging of tables, done in SQL. One parser for URL parameters so pages
// and API endpoints answer bad parameters the same way: 400 naming the parameter.
import { error } from '@sveltejs/kit';
import { asc, desc, type AnyColumn, type SQL } from 'drizzle-orm';

export const DEFAULT_PAGE_SIZE = 25;
export const MAX_PAGE_SIZE = 500;

export type ListParams<S extends string> = {
	q: string | null;
	sort: S;
	dir: 'asc' | 'desc';
	page: number;
	pageSize: number;
	/** Show soft-deleted rows instead of live ones. */
	deleted: boolean;
};

function positiveInt(url: URL, name: string, fallback: number, max: number) {
	const raw = url.searchParams.get(name);
	if (raw === null || raw === '') return fallback;
	const n = Number(raw);
	if (!Number.isInteger(n) || n < 1 || n > max)
		error(400, { message: `URL parameter "${name}" must be a whole number from 1 to ${max}; got "${raw}".` });
	return n;
}

export function parseListParams<S extends string>(url: URL, sortable: readonly S[], defaultSort: S, defaultDir: 'asc' | 'desc' = 'asc'): ListParams<S> {
	const sort = url.searchParams.get('sort') ?? defaultSort;
	if (!(sortable as readonly string[]).includes(sort))
		error(400, { message: `URL parameter "sort" must be one of ${sortable.join(', ')}; got "${sort}".` });
	const dir = url.searchParams.get('dir') ?? defaultDir;
	if (dir !== 'asc' && dir !== 'desc') error(400, { message: `URL parameter "dir" must be asc or desc; got "${dir}".` });
	const q = url.searchParams.get('q')?.trim() || null;
	if (q && q.length > 200) error(400, { message: 'URL parameter "q" is at most 200 characters.' });
	const deletedRaw = url.searchParams.get('deleted');
	if (deletedRaw !== null && deletedRaw !== '1' && deletedRaw !== '0' && deletedRaw !== 'true' && deletedRaw !== 'false')
		error(400, { message: `URL parameter "deleted" must be 1 or 0; got "${deletedRaw}".` });
	return {
		q,
		sort: sort as S,
		dir,
		page: positiveInt(url, 'page', 1, 1_000_000),
		pageSize: positiveInt(url, 'pageSize', DEFAULT_PAGE_SIZE, MAX_PAGE_SIZE),
		deleted: deletedRaw === '1' || deletedRaw === 'true'
	};
}

export function orderBy(column: AnyColumn | SQL, dir: 'asc' | 'desc') {
	return dir === 'asc' ? asc(column) : desc(column);
}

/** LIKE pattern for a user's search text, with the wildcards escaped. */
export function containsPattern(q: string) {
	return `%${q.replace(/[\\%_]/g, (c) => '\\' + c)}%`;
}

export type Page<T> = { rows: T[]; total: number; page: number; pageSize: number; pages: number };

export function pageOf<T>(rows: T[], total: number, params: { page: number; pageSize: number }): Page<T> {
	return { rows, total, page: params.page, pageSize: params.pageSize, pages: Math.max(1, Math.ceil(total / params.pageSize)) };
}
