// Reading an uploaded chronograph file: bytes → text (UTF-8 only, with or without a byte-order
// mark; anything else is refused with the fix), the file's format (delimiter, decimal separator,
// line endings, lines before the header, whether there is a header row), then the records one at
// a time through papaparse. Records are streamed: the parser pauses every RECORDS_PER_SLICE
// records and resumes on the next turn of the event loop, so a 100 000-row file neither blocks
// the server nor has to exist as an array of arrays, and the caller can report progress.
import Papa from 'papaparse';
import {
	DELIMITERS,
	DELIMITER_LABELS,
	MAX_IMPORT_COLUMNS,
	type DecimalSeparator,
	type Delimiter,
	type ImportFormat
} from '$lib/schemas/imports';
import { ImportRefused } from './errors';
import { parseNumber } from './values';

/** Records parsed between two yields to the event loop. */
export const RECORDS_PER_SLICE = 5000;
/** Characters of the file read to detect its format. */
const SAMPLE_CHARS = 64 * 1024;
/** Records of the sample used to detect the delimiter and the header. */
const SAMPLE_RECORDS = 60;
/** Bytes looked at for binary content. */
const BINARY_PROBE_BYTES = 64 * 1024;
/** Share of control characters (other than tab, CR, LF, form feed) above which a file is binary. */
const MAX_CONTROL_SHARE = 0.01;

export type Newline = '\r\n' | '\n' | '\r';
export const NEWLINE_LABELS: Record<Newline, string> = { '\r\n': 'CRLF (Windows)', '\n': 'LF (Unix)', '\r': 'CR (classic Mac)' };

export type DecodedText = { text: string; bom: boolean };

/** Known binary formats people upload by mistake, by their first bytes. */
const SIGNATURES: { bytes: number[]; message: string }[] = [
	{ bytes: [0x50, 0x4b, 0x03, 0x04], message: 'This is a ZIP archive (an Excel .xlsx workbook, perhaps), not a CSV file. Save the sheet as “CSV UTF-8” and upload that.' },
	{ bytes: [0xd0, 0xcf, 0x11, 0xe0], message: 'This is an old Excel (.xls) or other Office file, not a CSV file. Save the sheet as “CSV UTF-8” and upload that.' },
	{ bytes: [0x25, 0x50, 0x44, 0x46], message: 'This is a PDF document, not a CSV file. Export the chronograph data as CSV.' },
	{ bytes: [0x89, 0x50, 0x4e, 0x47], message: 'This is a PNG image, not a CSV file.' },
	{ bytes: [0xff, 0xd8, 0xff], message: 'This is a JPEG image, not a CSV file.' },
	{ bytes: [0x1f, 0x8b], message: 'This is a gzip-compressed file. Unpack it and upload the CSV inside.' }
];

const startsWith = (bytes: Uint8Array, prefix: number[]) => prefix.every((b, i) => bytes[i] === b);

/** Offset of the first byte that breaks UTF-8 (RFC 3629), or -1. */
export function firstInvalidUtf8(bytes: Uint8Array): number {
	let i = 0;
	while (i < bytes.length) {
		const b = bytes[i];
		if (b < 0x80) {
			i++;
			continue;
		}
		let need: number;
		let min: number;
		if (b >= 0xc2 && b <= 0xdf) [need, min] = [1, 0x80];
		else if (b >= 0xe0 && b <= 0xef) [need, min] = [2, 0x800];
		else if (b >= 0xf0 && b <= 0xf4) [need, min] = [3, 0x10000];
		else return i;
		if (i + need >= bytes.length) return i;
		let code = b & (0xff >> (need + 2));
		for (let k = 1; k <= need; k++) {
			const c = bytes[i + k];
			if (c === undefined || (c & 0xc0) !== 0x80) return i;
			code = (code << 6) | (c & 0x3f);
		}
		if (code < min || code > 0x10ffff || (code >= 0xd800 && code <= 0xdfff)) return i;
		i += need + 1;
	}
	return -1;
}

function lineOf(bytes: Uint8Array, offset: number) {
	let line = 1;
	for (let i = 0; i < offset; i++) if (bytes[i] === 0x0a) line++;
	return line;
}

const hex = (b: number) => `0x${b.toString(16).toUpperCase().padStart(2, '0')}`;

/**
 * The file as text, or a refusal that says what the file is and how to fix it: empty, UTF-16/32,
 * a known binary format, binary content, or not UTF-8 (a Latin-1 or Windows-1252 "é" is one byte
 * that UTF-8 does not allow on its own).
 */
export function decodeText(bytes: Uint8Array): DecodedText {
	if (bytes.length === 0) throw new ImportRefused('The file is empty.', 400, 'empty');
	if (startsWith(bytes, [0xff, 0xfe, 0x00, 0x00]) || startsWith(bytes, [0x00, 0x00, 0xfe, 0xff]))
		throw new ImportRefused('The file is UTF-32 text. Save it as “CSV UTF-8” and upload again.', 400, 'encoding');
	if (startsWith(bytes, [0xff, 0xfe]) || startsWith(bytes, [0xfe, 0xff]))
		throw new ImportRefused('The file is UTF-16 text (often called “Unicode text”). Save it as “CSV UTF-8” and upload again.', 400, 'encoding');
	for (const signature of SIGNATURES) if (startsWith(bytes, signature.bytes)) throw new ImportRefused(signature.message, 400, 'binary');

	const probe = bytes.subarray(0, BINARY_PROBE_BYTES);
	let nulEven = 0;
	let nulOdd = 0;
	let control = 0;
	let firstNul = -1;
	for (let i = 0; i < probe.length; i++) {
		const b = probe[i];
		if (b === 0) {
			if (firstNul < 0) firstNul = i;
			if (i % 2 === 0) nulEven++;
			else nulOdd++;
		} else if (b < 0x20 && b !== 0x09 && b !== 0x0a && b !== 0x0d && b !== 0x0c) control++;
	}
	const half = probe.length / 2;
	if (nulEven + nulOdd > 0 && Math.max(nulEven, nulOdd) > 0.3 * half && Math.min(nulEven, nulOdd) < 0.05 * half)
		throw new ImportRefused('The file looks like UTF-16 text without a byte-order mark. Save it as “CSV UTF-8” and upload again.', 400, 'encoding');
	if (firstNul >= 0)
		throw new ImportRefused(`This is not a text file: it contains binary data (byte 0x00 at offset ${firstNul}). Upload the chronograph’s CSV export.`, 400, 'binary');
	if (control > MAX_CONTROL_SHARE * probe.length)
		throw new ImportRefused('This is not a text file: it is full of control characters. Upload the chronograph’s CSV export.', 400, 'binary');

	const bom = startsWith(bytes, [0xef, 0xbb, 0xbf]);
	const body = bom ? bytes.subarray(3) : bytes;
	try {
		return { text: new TextDecoder('utf-8', { fatal: true, ignoreBOM: true }).decode(body), bom };
	} catch {
		// Find where it breaks, to say so (the native decoder does not tell).
		const offset = Math.max(0, firstInvalidUtf8(body)) + (bom ? 3 : 0);
		throw new ImportRefused(
			`The file is not UTF-8: byte ${hex(bytes[offset])} on line ${lineOf(bytes, offset)} is not valid UTF-8 (a character such as “é” or “°” saved as Latin-1 or Windows-1252). Save the file as “CSV UTF-8” and upload again.`,
			400,
			'encoding'
		);
	}
}

export type DetectedFormat = ImportFormat & {
	newline: Newline;
	/** Records before the header (or the first data row): titles and notes some chronographs write. */
	skipRecords: number;
	/** Those records, as text, to show the person what was skipped. */
	skipped: string[];
	/** Column headers (or "column 1"… without a header row). */
	headers: string[];
	/** Data records of the sample (after the header), for suggestions and the mapping screen. */
	sample: string[][];
};

function detectNewline(sample: string): Newline {
	let crlf = 0;
	let lf = 0;
	let cr = 0;
	for (let i = 0; i < sample.length; i++) {
		const c = sample.charCodeAt(i);
		if (c === 13) {
			if (sample.charCodeAt(i + 1) === 10) {
				crlf++;
				i++;
			} else cr++;
		} else if (c === 10) lf++;
	}
	// A file that mixes CRLF and LF is read by LF; the CR left at the end of a line is trimmed with the cell.
	if (lf > 0) return '\n';
	if (crlf > 0) return '\r\n';
	if (cr > 0) return '\r';
	return '\n';
}

const isBlankRecord = (cells: string[]) => cells.every((c) => c.trim() === '');

function parseSample(sample: string, delimiter: Delimiter, newline: Newline): string[][] {
	return Papa.parse<string[]>(sample, { delimiter, newline, skipEmptyLines: 'greedy', preview: SAMPLE_RECORDS }).data;
}

/** Most common field count and the share of records that have it. */
function consistency(records: string[][]) {
	const counts = new Map<number, number>();
	for (const r of records) counts.set(r.length, (counts.get(r.length) ?? 0) + 1);
	let modal = 0;
	let hits = 0;
	for (const [n, c] of counts) if (c > hits || (c === hits && n > modal)) [modal, hits] = [n, c];
	return { modal, share: records.length ? hits / records.length : 0 };
}

/** Preference among equally consistent delimiters: semicolons and tabs rarely occur inside values. */
const DELIMITER_PREFERENCE: Delimiter[] = ['\t', ';', '|', ','];

function detectDelimiter(sample: string, newline: Newline): Delimiter {
	let best: { delimiter: Delimiter; share: number; modal: number; rank: number } | null = null;
	for (const delimiter of DELIMITERS) {
		const { modal, share } = consistency(parseSample(sample, delimiter, newline));
		if (modal < 2) continue;
		// Consistency counts in steps of 5 %, so a stray line does not outweigh a better split.
		const candidate = { delimiter, share: Math.round(share * 20) / 20, modal, rank: DELIMITER_PREFERENCE.indexOf(delimiter) };
		if (
			!best ||
			candidate.share > best.share ||
			(candidate.share === best.share && candidate.modal > best.modal) ||
			(candidate.share === best.share && candidate.modal === best.modal && candidate.rank < best.rank)
		)
			best = candidate;
	}
	return best?.delimiter ?? ',';
}

const COMMA_DECIMAL = /^[+-]?\d+,\d+$/;
const POINT_DECIMAL = /^[+-]?\d*\.\d+$/;

function detectDecimal(records: string[][], delimiter: Delimiter): DecimalSeparator {
	let comma = 0;
	let point = 0;
	for (const r of records)
		for (const raw of r) {
			const cell = raw.trim();
			if (COMMA_DECIMAL.test(cell)) comma++;
			else if (POINT_DECIMAL.test(cell)) point++;
		}
	// In a comma-delimited file a decimal comma only appears inside quotes; it still counts.
	if (delimiter === ',' && comma === 0) return '.';
	return comma > point ? ',' : '.';
}

function numericShare(cells: string[], decimal: DecimalSeparator) {
	const filled = cells.map((c) => c.trim()).filter((c) => c !== '');
	if (filled.length === 0) return 0;
	return filled.filter((c) => Number.isFinite(parseNumber(c, decimal))).length / filled.length;
}

/**
 * The file's format: line endings, delimiter (the one that splits the first records most
 * consistently), decimal separator (whichever of "24,5" and "24.5" is more common), the records
 * before the first one with the usual field count (skipped), and whether that first record is a
 * header (it has fewer numbers than the records after it).
 */
export function detectFormat(text: string, override?: Partial<ImportFormat>): DetectedFormat {
	let sample = text.slice(0, SAMPLE_CHARS);
	if (text.length > SAMPLE_CHARS) {
		const cut = Math.max(sample.lastIndexOf('\n'), sample.lastIndexOf('\r'));
		if (cut > 0) sample = sample.slice(0, cut);
	}
	const newline = detectNewline(sample);
	const delimiter = override?.delimiter ?? detectDelimiter(sample, newline);
	const all = Papa.parse<string[]>(sample, { delimiter, newline, skipEmptyLines: false, preview: SAMPLE_RECORDS }).data;
	const filled = all.map((cells, index) => ({ cells, index })).filter((r) => !isBlankRecord(r.cells));
	if (filled.length === 0) throw new ImportRefused('The file has no rows: it holds only blank lines.', 400, 'empty');
	const { modal } = consistency(filled.map((r) => r.cells));
	const first = filled.find((r) => r.cells.length === modal) ?? filled[0];
	const skipRecords = first.index;
	const skipped = all.slice(0, skipRecords).filter((c) => !isBlankRecord(c)).map((c) => c.join(' ').trim().slice(0, 120));
	const after = filled.filter((r) => r.index > first.index).map((r) => r.cells);
	const decimal = override?.decimal ?? detectDecimal(after.length ? after : [first.cells], delimiter);
	const firstShare = numericShare(first.cells, decimal);
	const restShare = after.length ? Math.max(...after.slice(0, 5).map((c) => numericShare(c, decimal))) : 1;
	const headerRow = override?.headerRow ?? (firstShare < restShare || (after.length === 0 && firstShare < 1));
	const width = Math.max(modal, first.cells.length);
	if (width > MAX_IMPORT_COLUMNS)
		throw new ImportRefused(
			`The file has ${width} columns; at most ${MAX_IMPORT_COLUMNS} are read. Is the ${DELIMITER_LABELS[delimiter]} really its delimiter?`,
			400,
			'columns'
		);
	const headers = Array.from({ length: width }, (_, i) => {
		const name = headerRow ? (first.cells[i] ?? '').trim() : '';
		return name === '' ? `column ${i + 1}` : name;
	});
	return {
		delimiter,
		decimal,
		headerRow,
		newline,
		skipRecords,
		skipped,
		headers,
		sample: headerRow ? after : [first.cells, ...after]
	};
}

export type RecordVisitor = (row: number, cells: string[]) => void;

export type ReadSummary = {
	/** Data records read (blank lines not counted). */
	records: number;
	blankLines: number;
};

/**
 * Read the data records of the file in order. `row` counts records from 1 with the first record
 * of the file as row 1 (a spreadsheet's row numbers, the header included; a quoted value over two
 * lines is one row). Blank records are skipped. A quote opened and never closed refuses the file:
 * everything after it would be read as one value. Yields to the event loop between slices; the
 * optional `onSlice` hears how many characters have been read so far.
 */
export function readRecords(
	text: string,
	format: DetectedFormat,
	visit: RecordVisitor,
	onSlice?: (charsRead: number, records: number) => void | Promise<void>
): Promise<ReadSummary> {
	return new Promise((resolve, reject) => {
		let row = 0;
		let records = 0;
		// papaparse counts its cursor from where it last resumed; this is where that was.
		let resumedAt = 0;
		let blankLines = 0;
		let failed = false;
		let lastBlank = false;
		const firstData = format.skipRecords + (format.headerRow ? 1 : 0) + 1;
		Papa.parse<string[]>(text, {
			delimiter: format.delimiter,
			newline: format.newline,
			quoteChar: '"',
			skipEmptyLines: false,
			step: (result, parser) => {
				if (failed) return;
				row++;
				const unclosed = result.errors.find((e) => e.code === 'MissingQuotes');
				if (unclosed) {
					failed = true;
					parser.abort();
					reject(
						new ImportRefused(
							`Row ${row}: a value opened with a quote (") is never closed, so the rest of the file would be read as one value. Close the quote or remove it.`,
							400,
							'quotes'
						)
					);
					return;
				}
				if (row < firstData) return;
				const cells = result.data;
				lastBlank = isBlankRecord(cells);
				if (lastBlank) {
					blankLines++;
					return;
				}
				records++;
				try {
					visit(row, cells);
				} catch (err) {
					failed = true;
					parser.abort();
					reject(err);
					return;
				}
				if (records % RECORDS_PER_SLICE === 0) {
					parser.pause();
					resumedAt += result.meta.cursor;
					const cursor = resumedAt;
					setImmediate(async () => {
						try {
							await onSlice?.(cursor, records);
						} catch (err) {
							failed = true;
							reject(err);
							return;
						}
						parser.resume();
					});
				}
			},
			complete: () => {
				// The line break that ends the last line is not a blank line of its own.
				if (lastBlank && /[\r\n]$/.test(text)) blankLines--;
				if (!failed) resolve({ records, blankLines });
			},
			error: (err: Error) => {
				failed = true;
				reject(err);
			}
		});
	});
}

