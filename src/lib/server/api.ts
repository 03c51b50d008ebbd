// JSON endpoints answer errors in one shape: { message, issues: [{ path, message }] }, whatever
// went wrong (bad JSON, a field out of bounds, a rule of the range, a missing row, a role), so a
// script needs one error handler and never sees an HTML error page or a 500 for its own input.
import { error, isHttpError, isRedirect, json, type RequestEvent } from '@sveltejs/kit';
import { z } from 'zod';
import { PhysicsInputError } from '$lib/physics/errors';
import { PredictionError } from './predictions';
import { ReconcileError } from './reconcile';
import { DuplicateNameError } from './registry';
import { SessionRuleError } from './sessions';

export type ApiIssue = { path: string; message: string };

const NO_STORE = { 'cache-control': 'no-store' };

export function apiError(status: number, message: string, issues: ApiIssue[] = []) {
	return json({ message, issues } satisfies App.Error, { status, headers: NO_STORE });
}

export function issuesOf(error: z.ZodError): ApiIssue[] {
	return error.issues.map((issue) => ({ path: issue.path.map(String).join('.'), message: issue.message }));
}

/** A JSON answer; API data is per user and changes with every shot, so nothing is cached. */
export function ok(data: unknown, status = 200) {
	return json(data, { status, headers: NO_STORE });
}

/** Throw an API error from anywhere below a handler wrapped in endpoint(). */
export function fail(status: number, message: string, issues: ApiIssue[] = []): never {
	error(status, { message, issues });
}

/**
 * Largest JSON body the API reads. Its bodies are one record (a shot, a session, a setup
 * question): a few kilobytes. Files go to the import endpoint as multipart, not through here.
 */
export const MAX_JSON_BODY_BYTES = 1024 * 1024;

function tooLarge(): never {
	const message = `The body is larger than ${MAX_JSON_BODY_BYTES / 1024 / 1024} MB; the API takes JSON records, not files.`;
	fail(413, message, [{ path: '', message }]);
}

/** The body's bytes, or 413 past the limit (told by Content-Length, or by the bytes themselves). */
async function boundedBody(request: Request): Promise<Uint8Array> {
	const declared = Number(request.headers.get('content-length') ?? 0);
	if (declared > MAX_JSON_BODY_BYTES) tooLarge();
	let bytes: Uint8Array;
	try {
		bytes = new Uint8Array(await request.arrayBuffer());
	} catch (err) {
		// adapter-node's own BODY_SIZE_LIMIT stops the stream with a 413 of its own.
		if ((err as { status?: number }).status === 413) tooLarge();
		throw err;
	}
	if (bytes.byteLength > MAX_JSON_BODY_BYTES) tooLarge();
	return bytes;
}

/**
 * The JSON body of a write. It must say it is JSON: a cross-site page can send a body without a
 * content type and no preflight, so insisting on application/json keeps the session cookie from
 * being used to write by another site (SvelteKit's own origin check covers the form types only).
 */
export async function requestJson(request: Request): Promise<unknown> {
	const type = request.headers.get('content-type')?.split(';')[0].trim().toLowerCase() ?? '';
	if (type !== 'application/json' && !type.endsWith('+json'))
		fail(415, 'Send the body as JSON with the header Content-Type: application/json.', [
			{ path: '', message: `Content-Type is "${type || 'missing'}", not application/json.` }
		]);
	const bytes = await boundedBody(request);
	try {
		return JSON.parse(new TextDecoder().decode(bytes));
	} catch {
		fail(400, 'The body is not valid JSON.', [{ path: '', message: 'The body is not valid JSON.' }]);
	}
}

/** The body parsed by the schema; 400 naming each faulty field (or the body when it is not JSON). */
export async function parseBody<S extends z.ZodType>(request: Request, schema: S): Promise<z.output<S>> {
	const body = await requestJson(request);
	const parsed = schema.safeParse(body);
	if (!parsed.success) fail(400, invalidMessage(parsed.error), issuesOf(parsed.error));
	return parsed.data;
}

function invalidMessage(error: z.ZodError) {
	const fields = [...new Set(error.issues.map((i) => i.path.map(String).join('.') || 'body'))];
	return `Some fields are missing or wrong: ${fields.join(', ')}.`;
}

/** A numeric id from the URL path; anything else names no record, so 404. */
export function idParam(value: string | undefined, what: string): number {
	const id = Number(value);
	if (!/^\d+$/.test(value ?? '') || !Number.isSafeInteger(id) || id < 1) fail(404, `No ${what} with id "${value}".`);
	return id;
}

/** Turn what a handler threw into the API's error answer; unknown failures stay failures (500). */
export function errorResponse(err: unknown): Response {
	if (isHttpError(err)) {
		const body = err.body as Partial<App.Error>;
		return apiError(err.status, body.message ?? 'Request refused.', body.issues ?? []);
	}
	if (err instanceof SessionRuleError) return apiError(err.status, err.message, [{ path: err.field, message: err.message }]);
	if (err instanceof DuplicateNameError) return apiError(409, err.message, [{ path: 'name', message: err.message }]);
	if (err instanceof ReconcileError) return apiError(err.status, err.message, err.field ? [{ path: err.field, message: err.message }] : []);
	if (err instanceof PredictionError) return apiError(err.status, err.message, [{ path: err.field, message: err.message }]);
	if (err instanceof PhysicsInputError) return apiError(400, err.message, [{ path: err.field, message: err.message }]);
	if (err instanceof z.ZodError) return apiError(400, invalidMessage(err), issuesOf(err));
	throw err;
}

/**
 * Wrap a +server handler so every refusal becomes the API's JSON error, whatever the request's
 * Accept header (SvelteKit would render an HTML error page for a browser-like Accept).
 */
export function endpoint<E extends RequestEvent>(handler: (event: E) => Promise<Response>) {
	return async (event: E): Promise<Response> => {
		try {
			return await handler(event);
		} catch (err) {
			if (isRedirect(err)) throw err;
			return errorResponse(err);
		}
	};
}
