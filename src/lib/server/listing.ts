// Sorting, filtering and paging of tables, done in SQL. One parser for URL parameters so pages
// and API endpoints answer bad parameters the same way: 400 naming the parameter.
import { error } from '@sveltejs/kit';
import { asc, desc, type AnyColumn, type SQL } from 'drizzle-orm';

export const DEFAULT_PAGE_SIZE = 25;
export const MAX_PAGE_SIZE = 500;
/** Pages beyond this hold nothing anyone will page to; the bound keeps OFFSET inside BIGINT. */
export const MAX_PAGE = 1_000_000;

export type ListParams<S extends string> = {
	q: string | null;
	sort: S;
	dir: 'asc' | 'desc';
	page: number;
	pageSize: number;
	/** Show soft-deleted rows instead of live ones. */
	deleted: boolean;
};

/** A whole number from min to max written in digits ("1e3" and "0x10" are not page numbers). */
export function boundedInt<F extends number | null>(url: URL, name: string, fallback: F, min: number, max: number): number | F {
	const raw = url.searchParams.get(name)?.trim() ?? null;
	if (raw === null || raw === '') return fallback;
	const n = Number(raw);
	if (!/^[+-]?\d{1,16}$/.test(raw) || !Number.isSafeInteger(n) || n < min || n > max) {
		const message = `URL parameter "${name}" must be a whole number from ${min} to ${max}; got "${raw.slice(0, 40)}".`;
		error(400, { message, issues: [{ path: name, message }] });
	}
	return n;
}

function positiveInt(url: URL, name: string, fallback: number, max: number): number {
	return boundedInt(url, name, fallback, 1, max);
}

/** The page number of a paged table (?page=), 1 when absent. */
export function pageNumber(url: URL) {
	return positiveInt(url, 'page', 1, MAX_PAGE);
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
		page: pageNumber(url),
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
