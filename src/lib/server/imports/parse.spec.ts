import { describe, expect, it } from 'vitest';
import { ImportRefused } from './errors';
import { decodeText, detectFormat, firstInvalidUtf8, readRecords } from './parse';

const bytes = (s: string) => new TextEncoder().encode(s);

function refusal(run: () => unknown): ImportRefused {
	try {
		run();
	} catch (err) {
		if (err instanceof ImportRefused) return err;
		throw err;
	}
	throw new Error('expected a refusal');
}

describe('decoding the upload', () => {
	it('takes UTF-8 with or without a byte-order mark', () => {
		expect(decodeText(bytes('a,b\n1,2\n'))).toEqual({ text: 'a,b\n1,2\n', bom: false });
		expect(decodeText(new Uint8Array([0xef, 0xbb, 0xbf, ...bytes('a;b\n')]))).toEqual({ text: 'a;b\n', bom: true });
	});

	it('refuses what is not UTF-8 text, saying what it is', () => {
		expect(refusal(() => decodeText(new Uint8Array())).message).toBe('The file is empty.');
		expect(refusal(() => decodeText(new Uint8Array([0xff, 0xfe, 0x61, 0x00]))).message).toMatch(/UTF-16/);
		expect(refusal(() => decodeText(new Uint8Array([0x50, 0x4b, 0x03, 0x04, 1, 2]))).message).toMatch(/xlsx/);
		const latin1 = new Uint8Array([...bytes('note\nTemp '), 0xb0, ...bytes('C\n')]);
		const e = refusal(() => decodeText(latin1));
		expect(e.code).toBe('encoding');
		expect(e.message).toMatch(/byte 0xB0 on line 2/);
		expect(refusal(() => decodeText(new Uint8Array([1, 2, 0, 3, 200, 0, 0, 9]))).code).toBe('binary');
	});

	it('finds the first byte that breaks UTF-8 (RFC 3629)', () => {
		expect(firstInvalidUtf8(bytes('Zürich °C'))).toBe(-1);
		expect(firstInvalidUtf8(new Uint8Array([0x41, 0xc3]))).toBe(1);
		expect(firstInvalidUtf8(new Uint8Array([0xc0, 0x80]))).toBe(0);
		expect(firstInvalidUtf8(new Uint8Array([0xed, 0xa0, 0x80]))).toBe(0);
	});
});

describe('detecting the format', () => {
	it('finds semicolons with decimal commas and CRLF line ends', () => {
		const f = detectFormat('Shot;Pressure (bar);V0 (m/s)\r\n1;2,1;24,31\r\n2;2,2;24,90\r\n');
		expect(f).toMatchObject({ delimiter: ';', decimal: ',', newline: '\r\n', headerRow: true, headers: ['Shot', 'Pressure (bar)', 'V0 (m/s)'] });
	});

	it('prefers the split that keeps quoted notes together', () => {
		const f = detectFormat('seq,fill,note\n1,2.1,"dry; calm"\n2,2.2,"wet; gusts"\n');
		expect(f.delimiter).toBe(',');
		expect(f.decimal).toBe('.');
	});

	it('skips title lines before the header and tells which', () => {
		const f = detectFormat('Chronograph export\nDate: 2026-03-02\nshot\tfill\tv0\n1\t2.1\t24.3\n2\t2.2\t24.9\n');
		expect(f.delimiter).toBe('\t');
		expect(f.skipRecords).toBe(2);
		expect(f.skipped).toEqual(['Chronograph export', 'Date: 2026-03-02']);
		expect(f.headers).toEqual(['shot', 'fill', 'v0']);
	});

	it('sees a file without a header row', () => {
		const f = detectFormat('1,210000,24.3\n2,215000,24.9\n');
		expect(f.headerRow).toBe(false);
		expect(f.headers).toEqual(['column 1', 'column 2', 'column 3']);
		expect(f.sample).toHaveLength(2);
	});
});

describe('reading records', () => {
	it('numbers rows like a spreadsheet and skips blank lines', async () => {
		const text = 'a,b\n1,"two\nlines"\n\n3,4\n';
		const seen: [number, string[]][] = [];
		const summary = await readRecords(text, detectFormat(text), (row, cells) => seen.push([row, cells]));
		expect(seen).toEqual([
			[2, ['1', 'two\nlines']],
			[4, ['3', '4']]
		]);
		expect(summary).toEqual({ records: 2, blankLines: 1 });
	});

	it('refuses a quote that is never closed', async () => {
		const text = 'a,b\n1,2\n3,"oops\n5,6\n';
		await expect(readRecords(text, detectFormat(text), () => {})).rejects.toThrow(/Row 3: a value opened with a quote/);
	});

	it('streams a large file in slices, yielding between them', async () => {
		const text = 'n\n' + Array.from({ length: 12_000 }, (_, i) => String(i)).join('\n');
		let slices = 0;
		let count = 0;
		await readRecords(text, detectFormat(text), () => count++, () => {
			slices++;
		});
		expect(count).toBe(12_000);
		expect(slices).toBe(2);
	});
});
