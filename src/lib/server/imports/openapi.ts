// The shapes of POST /api/v1/imports for the OpenAPI document (src/lib/server/openapi.ts): the
// multipart fields it reads (http.ts) and the record or refusal it answers (commit.ts, http.ts).
import { z } from 'zod';
import { IMPORT_FIELD_IDS, IMPORT_MODES, MAX_IMPORT_BYTES } from '$lib/schemas/imports';

const id = (description: string) => z.int().min(1).meta({ description });

export const importUploadSchema = z.object({
	file: z.string().meta({ format: 'binary', description: `The CSV file: UTF-8 (with or without a byte-order mark), at most ${MAX_IMPORT_BYTES / 1024 / 1024} MB; comma, semicolon, tab or | delimited; decimal point or comma.` }),
	sessionId: id('The session the rows go to. Give this or templateSessionId.').optional(),
	templateSessionId: id('Sessions from a column: the session that new sessions copy (rig, projectile, plan, geometry, conditions).').optional(),
	mapping: z
		.string()
		.meta({
			description:
				'JSON column mapping: {"columns":[{"header":"V0 (fps)","field":"muzzleSpeed","unit":"ft/s"},{"index":0,"field":"sequence"}]}; fields: ' +
				IMPORT_FIELD_IDS.join(', ') +
				'. Optional "format": {"delimiter":";","decimal":",","headerRow":true}. Without a mapping the suggested one is used.'
		})
		.optional(),
	template: z.string().meta({ description: 'Name of a saved mapping template to use instead of a mapping.' }).optional(),
	mode: z.enum(IMPORT_MODES).default('all-or-nothing').meta({ description: 'all-or-nothing: refuse the file if any row is invalid; valid-rows: import the valid rows and keep the rejected ones with reasons.' }),
	force: z.enum(['true', 'false']).default('false').meta({ description: 'Import a file that was imported before (same SHA-256).' })
});

const cellError = z.object({
	row: z.int().meta({ description: 'Row in the file, the header being row 1.' }),
	column: z.string().nullable().meta({ description: 'Column header; null for a problem of the whole row.' }),
	field: z.enum(IMPORT_FIELD_IDS).nullable(),
	value: z.string().nullable(),
	reason: z.string()
});

export const importRecordSchema = z.object({
	id: z.int(),
	sessionId: z.int().nullable().meta({ description: 'The target session; null when sessions came from a column (see mapping.sessions).' }),
	sessionTitle: z.string().nullable(),
	fileName: z.string(),
	sizeBytes: z.int(),
	sha256: z.string(),
	mapping: z
		.object({
			format: z.record(z.string(), z.unknown()),
			columns: z.array(z.object({ index: z.int(), header: z.string(), field: z.enum(IMPORT_FIELD_IDS).nullable(), unit: z.string().nullable() })),
			mode: z.enum(IMPORT_MODES),
			forced: z.boolean(),
			sessions: z.array(z.object({ id: z.int(), title: z.string(), created: z.boolean(), rows: z.int() })),
			notices: z.array(z.string())
		})
		.meta({ description: 'The mapping and units used, the sessions the rows went to, and what the import noticed.' }),
	rowCount: z.int().meta({ description: 'Data rows in the file (blank lines not counted).' }),
	importedCount: z.int(),
	rejectedCount: z.int(),
	errors: z.array(cellError).meta({ description: 'The rejected rows’ invalid cells with their reasons.' }),
	createdBy: z.int(),
	createdByName: z.string(),
	createdAt: z.iso.datetime(),
	predictions: z.object({ shots: z.int(), unpredictable: z.int() })
});

export const importRefusalSchema = z.object({
	message: z.string(),
	code: z.string().meta({ description: 'empty, encoding, binary, mapping, duplicate-file, invalid-rows, too-large…' }),
	issues: z.array(z.object({ path: z.string(), message: z.string() })),
	errors: z.array(cellError).meta({ description: 'Every invalid cell, when the refusal is about rows.' })
});

export const IMPORT_UPLOAD_EXAMPLE = { file: '@chronograph.csv', sessionId: '12', mode: 'valid-rows' };
