import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { listMessages, readMessage } from './mailbox';

// Messages written as the sink writes them: raw RFC 5322 text in "<arrival time>-<id>.eml".
function eml(to: string, subject: string, date: string, body: string) {
	return [`From: Shotwright <shotwright@localhost>`, `To: ${to}`, `Subject: ${subject}`, `Date: ${date}`, 'Content-Type: text/plain; charset=utf-8', '', body].join('\r\n');
}

let dir: string;
const previous = process.env.MAIL_DIR;

beforeAll(async () => {
	dir = await mkdtemp(path.join(tmpdir(), 'shotwright-mail-'));
	await writeFile(path.join(dir, '2026-12-01T09-00-00-000Z-aaaa1111.eml'), eml('a@lab.test', 'First', 'Tue, 01 Dec 2026 09:00:00 +0000', 'one'));
	await writeFile(path.join(dir, '2026-12-01T10-00-00-000Z-bbbb2222.eml'), eml('b@lab.test', 'Second', 'Tue, 01 Dec 2026 10:00:00 +0000', 'two\nlines'));
	await writeFile(path.join(dir, 'notes.txt'), 'not a message');
	process.env.MAIL_DIR = dir;
});
afterAll(async () => {
	process.env.MAIL_DIR = previous;
	await rm(dir, { recursive: true, force: true });
});

describe('mailbox: the sink folder as the Mail page sees it', () => {
	it('lists .eml files newest first with date, recipient and subject', async () => {
		const box = await listMessages();
		expect(box.total).toBe(2);
		expect(box.messages.map((m) => [m.id, m.to, m.subject])).toEqual([
			['2026-12-01T10-00-00-000Z-bbbb2222', 'b@lab.test', 'Second'],
			['2026-12-01T09-00-00-000Z-aaaa1111', 'a@lab.test', 'First']
		]);
		expect(box.messages[0].date?.toISOString()).toBe('2026-12-01T10:00:00.000Z');
	});

	it('respects the limit but reports the total', async () => {
		const box = await listMessages(1);
		expect(box.total).toBe(2);
		expect(box.messages.map((m) => m.subject)).toEqual(['Second']);
	});

	it('reads one message with its text body', async () => {
		const message = await readMessage('2026-12-01T10-00-00-000Z-bbbb2222');
		expect(message).toMatchObject({ subject: 'Second', to: 'b@lab.test', text: 'two\nlines' });
	});

	it('refuses ids that are not plain file names, and unknown ones', async () => {
		expect(await readMessage('../../etc/passwd')).toBeNull();
		expect(await readMessage('..%2Fsecret')).toBeNull();
		expect(await readMessage('2026-01-01T00-00-00-000Z-missing0')).toBeNull();
	});

	it('says so when MAIL_DIR is not set', async () => {
		process.env.MAIL_DIR = '';
		try {
			expect(await listMessages()).toEqual({ folder: null, total: 0, messages: [] });
		} finally {
			process.env.MAIL_DIR = dir;
		}
	});
});
