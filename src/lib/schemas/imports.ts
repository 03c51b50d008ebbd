// CSV imports of chronograph files: the shot fields a column can feed, the column mapping (which
// column is which field, in which unit), where the rows go and what happens to invalid rows.
// Shared by the server (validation, the REST API) and the browser (the mapping screen).
import { z } from 'zod';
import { isUnit, type Quantity } from '$lib/physics/units';

/** Largest file accepted, bytes. Checked in the browser before the upload and on the server. */
export const MAX_IMPORT_BYTES = 25 * 1024 * 1024;
/** Most data rows in one file (a 25 MB file of short rows would otherwise hold millions). */
export const MAX_IMPORT_ROWS = 300_000;
/** Most columns in one file: more means the delimiter was misread or the file is not a shot log. */
export const MAX_IMPORT_COLUMNS = 200;

export const IMPORT_FIELD_IDS = [
	'sequence',
	'time',
	'fillPressure',
	'muzzleSpeed',
	'downrangeSpeed',
	'impactX',
	'impactY',
	'miss',
	'note',
	'airTemperature',
	'barometricPressure',
	'session'
] as const;
export type ImportFieldId = (typeof IMPORT_FIELD_IDS)[number];

export type ImportField = {
	id: ImportFieldId;
	label: string;
	/** The physical quantity of a numeric field (its unit is chosen per column). */
	quantity?: Quantity;
	/** What the field means, for the mapping screen. */
	help: string;
};

export const IMPORT_FIELDS: readonly ImportField[] = [
	{ id: 'sequence', label: 'Sequence number', help: 'Whole number per session; empty cells get the next free numbers.' },
	{ id: 'time', label: 'Time fired (UTC)', help: 'Date and time (2026-03-02 14:05:09), or a time of day on the session’s date.' },
	{ id: 'fillPressure', label: 'Fill pressure (gauge)', quantity: 'pressure', help: 'Required: the gauge reading at fill.' },
	{ id: 'muzzleSpeed', label: 'Muzzle speed', quantity: 'speed', help: 'The chronograph at the muzzle.' },
	{ id: 'downrangeSpeed', label: 'Downrange speed', quantity: 'speed', help: 'The second chronograph, at the session’s downrange distance.' },
	{ id: 'impactX', label: 'Impact x (right +)', quantity: 'length', help: 'Offset on the target face from the aim point, to the right.' },
	{ id: 'impactY', label: 'Impact y (up +)', quantity: 'length', help: 'Offset on the target face from the aim point, upwards.' },
	{ id: 'miss', label: 'Miss', help: 'yes/no, 1/0, true/false or miss/hit; empty means a hit.' },
	{ id: 'note', label: 'Note', help: 'Free text, at most 1000 characters.' },
	{ id: 'airTemperature', label: 'Air temperature (per shot)', quantity: 'temperature', help: 'Overrides the session’s air temperature for this shot.' },
	{ id: 'barometricPressure', label: 'Barometric pressure (per shot)', quantity: 'pressure', help: 'Overrides the session’s barometric pressure for this shot.' },
	{ id: 'session', label: 'Session title', help: 'Only when sessions come from a column: the title of the session each row belongs to.' }
];

export const FIELD_BY_ID: Record<ImportFieldId, ImportField> = Object.fromEntries(IMPORT_FIELDS.map((f) => [f.id, f])) as Record<
	ImportFieldId,
	ImportField
>;

export const IMPORT_MODES = ['all-or-nothing', 'valid-rows'] as const;
export type ImportMode = (typeof IMPORT_MODES)[number];
export const IMPORT_MODE_LABELS: Record<ImportMode, string> = {
	'all-or-nothing': 'Refuse the file if any row is invalid',
	'valid-rows': 'Import the valid rows; keep the rejected ones with their reasons in the import record'
};

export const DELIMITERS = [',', ';', '\t', '|'] as const;
export type Delimiter = (typeof DELIMITERS)[number];
export const DELIMITER_LABELS: Record<Delimiter, string> = { ',': 'comma', ';': 'semicolon', '\t': 'tab', '|': 'vertical bar' };
export const DECIMAL_SEPARATORS = ['.', ','] as const;
export type DecimalSeparator = (typeof DECIMAL_SEPARATORS)[number];

/** How to read the file: detected, and open to correction on the mapping screen. */
export const importFormat = z.object({
	delimiter: z.enum(DELIMITERS, { error: 'The delimiter must be a comma, semicolon, tab or vertical bar.' }),
	decimal: z.enum(DECIMAL_SEPARATORS, { error: 'The decimal separator must be a point or a comma.' }),
	headerRow: z.boolean({ error: 'Say whether the first row is a header (true or false).' })
});
export type ImportFormat = z.infer<typeof importFormat>;

/**
 * One column of the file and the field it feeds (null: ignored). A script may name the column by
 * its header text or by its position (index, from 0); the server fills in the other.
 */
export const columnMapping = z
	.object({
		index: z.int('Column index must be a whole number.').min(0, 'Column index counts from 0.').max(999).optional(),
		header: z.string().max(300, 'A column header is at most 300 characters.').optional(),
		field: z.enum(IMPORT_FIELD_IDS, { error: `Field must be one of ${IMPORT_FIELD_IDS.join(', ')}, or null.` }).nullable(),
		unit: z.string().max(10).nullable().optional()
	})
	.refine((c) => c.index !== undefined || c.header !== undefined, { message: 'Name each column by its header or its index.' });
export type ColumnMapping = z.infer<typeof columnMapping>;

export const importMapping = z.object({
	format: importFormat.optional(),
	columns: z.array(columnMapping).max(1000, 'At most 1000 columns.')
});
export type ImportMappingInput = z.infer<typeof importMapping>;

/** A mapping resolved against one file: every column by index and header. */
export type ResolvedColumn = { index: number; header: string; field: ImportFieldId | null; unit: string | null };
export type ResolvedMapping = { format: ImportFormat; columns: ResolvedColumn[] };

/** Where the rows go: one session, or sessions named in a column (new titles copy a template session). */
export const importTarget = z.discriminatedUnion('kind', [
	z.object({ kind: z.literal('session'), sessionId: z.int().positive('Choose a session.') }),
	z.object({ kind: z.literal('column'), templateSessionId: z.int().positive('Choose the session new sessions copy.') })
]);
export type ImportTarget = z.infer<typeof importTarget>;

export const importOptions = z.object({
	mapping: importMapping.nullish(),
	mode: z.enum(IMPORT_MODES, { error: 'Mode must be all-or-nothing or valid-rows.' }).default('all-or-nothing'),
	force: z.boolean().default(false)
});

export const templateName = z
	.string()
	.trim()
	.min(1, 'Give the template a name.')
	.max(120, 'A template name is at most 120 characters.');

/** The mapping screen's "save as template" form: the mapping travels as JSON text. */
export const saveTemplateSchema = z.object({
	name: templateName,
	mapping: z.string().min(2, 'There is no mapping to save yet.').max(200_000),
	replace: z.boolean().default(false)
});

export const deleteTemplateSchema = z.object({ id: z.int().positive('Choose a template.') });

/** The unit ids a field accepts (none for fields without a quantity). */
export function unitAllowed(field: ImportFieldId, unit: string | null | undefined): boolean {
	const quantity = FIELD_BY_ID[field].quantity;
	if (!quantity) return unit == null || unit === '';
	return unit != null && isUnit(quantity, unit);
}

/** An invalid cell (or a whole row, when column is null): rows count from 1 with the header as row 1. */
export type CellError = {
	row: number;
	/** Column header (or "column 3" without a header row); null for a problem of the whole row. */
	column: string | null;
	field: ImportFieldId | null;
	/** The cell as written, cut to 80 characters. */
	value: string | null;
	reason: string;
};

/** Runs of consecutive rows with the same column and reason, for a readable list. */
export type CellErrorRun = CellError & { toRow: number; count: number };

export function groupErrors(errors: readonly CellError[], limit = Infinity): { runs: CellErrorRun[]; omitted: number } {
	const runs: CellErrorRun[] = [];
	let omitted = 0;
	const open = new Map<string, CellErrorRun>();
	for (const e of errors) {
		const key = `${e.column}\u0000${e.reason}\u0000${e.value ?? ''}`;
		const run = open.get(key);
		if (run && run.toRow + 1 >= e.row && run.toRow <= e.row) {
			run.toRow = e.row;
			run.count++;
			continue;
		}
		if (runs.length >= limit) {
			omitted++;
			continue;
		}
		const fresh = { ...e, toRow: e.row, count: 1 };
		runs.push(fresh);
		open.set(key, fresh);
	}
	return { runs, omitted };
}
