// The HTTP edge of imports, shared by the pages' endpoints and POST /api/v1/imports: reading a
// multipart upload (size checked before the body is read when the client says its length),
// the import target from form fields, and refusals as JSON in the API's error shape plus the
// invalid cells.
import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { groupErrors, importFormat, importMapping, IMPORT_MODES, MAX_IMPORT_BYTES, type ImportMode, type ImportTarget } from '$lib/schemas/imports';
import { ImportRefused } from './errors';

/** Multipart overhead allowed on top of the file (boundaries, the other fields). */
const FORM_OVERHEAD_BYTES = 64 * 1024;
/** Invalid cells listed as issues in an API refusal (all of them are in `errors`). */
const ISSUE_LIMIT = 200;

const megabytes = (bytes: number) => `${(bytes / 1024 / 1024).toFixed(1)} MB`;

export type UploadForm = { file: File; fields: FormData };

/** The multipart body with its "file" field; refusals name the field at fault. */
export async function readUploadForm(request: Request): Promise<UploadForm> {
	const length = Number(request.headers.get('content-length') ?? NaN);
	if (Number.isFinite(length) && length > MAX_IMPORT_BYTES + FORM_OVERHEAD_BYTES)
		throw new ImportRefused(
			`The upload is ${megabytes(length)}; files up to ${megabytes(MAX_IMPORT_BYTES)} are accepted. Split it into smaller files and import each.`,
			413,
			'too-large'
		);
	const type = request.headers.get('content-type') ?? '';
	if (!type.startsWith('multipart/form-data'))
		throw new ImportRefused('Send the file as multipart/form-data with a field named "file".', 400, 'request', [], 'file');
	let fields: FormData;
	try {
		fields = await request.formData();
	} catch {
		throw new ImportRefused('The multipart body could not be read; send the file as multipart/form-data with a field named "file".', 400, 'request', [], 'file');
	}
	const file = fields.get('file');
	if (!(file instanceof File)) throw new ImportRefused('No file: send it in a multipart field named "file".', 400, 'request', [], 'file');
	return { file, fields };
}

function field(fields: FormData, name: string): string | null {
	const value = fields.get(name);
	return typeof value === 'string' && value.trim() !== '' ? value.trim() : null;
}

function positiveId(raw: string | null, name: string): number | null {
	if (raw === null) return null;
	const n = Number(raw);
	if (!Number.isSafeInteger(n) || n < 1) throw new ImportRefused(`"${name}" must be a session id (a whole number); got "${raw}".`, 400, 'request', [], name);
	return n;
}

/** sessionId (one session) or templateSessionId (sessions from a column), exactly one of them. */
export function targetFromFields(fields: FormData): ImportTarget {
	const sessionId = positiveId(field(fields, 'sessionId'), 'sessionId');
	const templateSessionId = positiveId(field(fields, 'templateSessionId'), 'templateSessionId');
	if ((sessionId === null) === (templateSessionId === null))
		throw new ImportRefused(
			'Say where the rows go: "sessionId" (one session) or "templateSessionId" (sessions from a column; new ones copy this session).',
			400,
			'request',
			[],
			'sessionId'
		);
	return sessionId !== null ? { kind: 'session', sessionId } : { kind: 'column', templateSessionId: templateSessionId! };
}

export function modeFromFields(fields: FormData): ImportMode {
	const raw = field(fields, 'mode') ?? 'all-or-nothing';
	if (!(IMPORT_MODES as readonly string[]).includes(raw))
		throw new ImportRefused(`"mode" must be ${IMPORT_MODES.join(' or ')}; got "${raw}".`, 400, 'request', [], 'mode');
	return raw as ImportMode;
}

export function flagFromFields(fields: FormData, name: string): boolean {
	const raw = field(fields, name);
	if (raw === null) return false;
	if (['1', 'true', 'yes', 'on'].includes(raw.toLowerCase())) return true;
	if (['0', 'false', 'no', 'off'].includes(raw.toLowerCase())) return false;
	throw new ImportRefused(`"${name}" must be true or false; got "${raw}".`, 400, 'request', [], name);
}

export function mappingFromFields(fields: FormData) {
	const raw = field(fields, 'mapping');
	if (raw === null) return null;
	let value: unknown;
	try {
		value = JSON.parse(raw);
	} catch {
		throw new ImportRefused('"mapping" is not valid JSON.', 400, 'mapping', [], 'mapping');
	}
	const parsed = importMapping.safeParse(value);
	if (!parsed.success)
		throw new ImportRefused(`"mapping" is not a column mapping: ${parsed.error.issues.map((i) => `${i.path.join('.') || 'mapping'}: ${i.message}`).join('; ')}`, 400, 'mapping', [], 'mapping');
	return parsed.data;
}

/** A JSON body of the pages' preview and commit calls. */
export const stagedRequest = z.object({
	mapping: importMapping.nullish(),
	format: importFormat.nullish(),
	template: z.string().trim().min(1).max(120).nullish(),
	mode: z.enum(IMPORT_MODES).default('all-or-nothing'),
	force: z.boolean().default(false)
});

function issuesOf(err: ImportRefused) {
	if (err.errors.length === 0) return [{ path: err.path, message: err.message }];
	return err.errors.slice(0, ISSUE_LIMIT).map((e) => ({ path: `row ${e.row}${e.column ? ` · ${e.column}` : ''}`, message: e.reason }));
}

/** A refusal as the API's error body, with the invalid cells in full and grouped. */
export function refusalBody(err: ImportRefused) {
	return {
		message: err.message,
		code: err.code,
		issues: issuesOf(err),
		errors: err.errors,
		errorRuns: groupErrors(err.errors, 1000).runs
	};
}

export function refusalResponse(err: ImportRefused) {
	return json(refusalBody(err), { status: err.status, headers: { 'cache-control': 'no-store' } });
}

/** Refusals stay refusals (JSON); anything else is rethrown. */
export function asRefusal(err: unknown): Response {
	if (err instanceof ImportRefused) return refusalResponse(err);
	throw err;
}

