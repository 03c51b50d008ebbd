// The admin's view of the local mail sink: the .eml files scripts/mail-sink.mjs writes into
// MAIL_DIR (one file per message, named after the time it arrived).
import { readdir, readFile } from 'node:fs/promises';
import path from 'node:path';
import { simpleParser, type AddressObject } from 'mailparser';

/** Newest messages listed at most; older ones stay on disk. */
export const MAILBOX_LIMIT = 200;
/** A message id is its file name without ".eml"; nothing else (no path separators) is accepted. */
const MESSAGE_ID = /^[A-Za-z0-9_-]{1,120}$/;

function folder() {
	return process.env.MAIL_DIR || null;
}

function addresses(value: AddressObject | AddressObject[] | undefined) {
	if (!value) return '';
	return (Array.isArray(value) ? value : [value]).map((a) => a.text).join(', ');
}

async function messageFiles(dir: string) {
	try {
		return (await readdir(dir)).filter((name) => name.endsWith('.eml') && MESSAGE_ID.test(name.slice(0, -4)));
	} catch (err) {
		if ((err as NodeJS.ErrnoException).code === 'ENOENT') return [];
		throw err;
	}
}

/** The newest messages (date, to, subject), newest first; `folder` null when MAIL_DIR is not set. */
export async function listMessages(limit = MAILBOX_LIMIT) {
	const dir = folder();
	if (!dir) return { folder: null, total: 0, messages: [] };
	// The sink names files after their arrival time (ISO 8601), so name order is arrival order.
	const names = (await messageFiles(dir)).sort().reverse();
	const messages = await Promise.all(
		names.slice(0, limit).map(async (name) => {
			const parsed = await simpleParser(await readFile(path.join(dir, name)), { skipHtmlToText: true, skipTextToHtml: true, skipImageLinks: true });
			return { id: name.slice(0, -4), date: parsed.date ?? null, to: addresses(parsed.to), subject: parsed.subject ?? '' };
		})
	);
	return { folder: dir, total: names.length, messages };
}

/** One message with its text body, or null when there is no such message. */
export async function readMessage(id: string) {
	const dir = folder();
	if (!dir || !MESSAGE_ID.test(id)) return null;
	let raw: Buffer;
	try {
		raw = await readFile(path.join(dir, `${id}.eml`));
	} catch (err) {
		if ((err as NodeJS.ErrnoException).code === 'ENOENT') return null;
		throw err;
	}
	const parsed = await simpleParser(raw, { skipTextToHtml: true, skipImageLinks: true });
	return {
		id,
		date: parsed.date ?? null,
		from: addresses(parsed.from),
		to: addresses(parsed.to),
		subject: parsed.subject ?? '',
		text: parsed.text ?? ''
	};
}
