// Outgoing mail through nodemailer over SMTP_URL (the local sink in demo and tests, the lab's
// relay in production). The transport is made on first use so that builds and unit tests need
// no mail server.
import nodemailer, { type Transporter } from 'nodemailer';

export type OutgoingMail = { to: string; subject: string; text: string; html?: string };

/** Sender shown on every message; MAIL_FROM overrides it for a real relay. */
const DEFAULT_FROM = 'Shotwright <shotwright@localhost>';

/**
 * A hung mail server must not hold a request or the outbox worker for long: give up after a few
 * seconds (nodemailer waits up to 2 min to connect and 10 min on a silent socket by default).
 * The outbox retries later.
 */
export const SMTP_TIMEOUT_MS = 5000;

let transport: Transporter | undefined;

function transporter() {
	if (!transport) {
		const url = process.env.SMTP_URL;
		if (!url) throw new Error('SMTP_URL is not set: start the app with `npm start`, or point it at an SMTP server.');
		transport = nodemailer.createTransport({
			url,
			connectionTimeout: SMTP_TIMEOUT_MS,
			greetingTimeout: SMTP_TIMEOUT_MS,
			socketTimeout: SMTP_TIMEOUT_MS
		});
	}
	return transport;
}

export async function sendMail(mail: OutgoingMail) {
	await transporter().sendMail({ from: process.env.MAIL_FROM || DEFAULT_FROM, ...mail });
}

/**
 * An absolute link for an e-mail. The base comes from PUBLIC_BASE_URL, never from the request's
 * Host header, which a visitor controls (a reset link pointing at their site would leak the token).
 */
export function appLink(path: string) {
	const base = process.env.PUBLIC_BASE_URL;
	if (!base) throw new Error('PUBLIC_BASE_URL is not set: links in e-mails need the address people open the app at.');
	// Relative to the base, so a base with a path (https://lab.example/shotwright) keeps it.
	return new URL(path.replace(/^\/+/, ''), base.endsWith('/') ? base : base + '/').toString();
}
