// The account e-mails: plain text first (what every mail reader shows), with a simple HTML twin.
import type { OutgoingMail } from '../mail';

function escapeHtml(value: string) {
	return value.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

/** e.g. "2026-12-05 14:03 UTC": the recipient's zone is unknown, so say which one. */
function utc(date: Date) {
	return `${date.toISOString().slice(0, 16).replace('T', ' ')} UTC`;
}

function html(paragraphs: string[], link: { href: string; label: string }) {
	const body = paragraphs.map((p) => `<p>${escapeHtml(p)}</p>`).join('\n');
	return `<!doctype html><html><body style="font-family:sans-serif;line-height:1.5">
${body}
<p><a href="${escapeHtml(link.href)}" style="display:inline-block;padding:12px 20px;background:#0b4f8a;color:#fff;text-decoration:none;border-radius:6px">${escapeHtml(link.label)}</a></p>
<p style="color:#4b5563">If the button does not work, copy this address into your browser:<br>${escapeHtml(link.href)}</p>
</body></html>`;
}

export function invitationMail(m: { to: string; name: string; role: string; invitedBy: string; link: string; expiresAt: Date }): OutgoingMail {
	const lines = [
		`Hello ${m.name},`,
		`${m.invitedBy} has given you a Shotwright account (role: ${m.role}). Shotwright keeps the range's record: rigs, range sessions, shots and calibrations.`,
		`Choose your password with the link below. It works once, until ${utc(m.expiresAt)}; after that, ask an admin to send a new invitation.`
	];
	return {
		to: m.to,
		subject: 'Your Shotwright account: choose a password',
		text: `${lines.join('\n\n')}\n\n${m.link}\n\nIf you did not expect this, you can ignore the message; nothing happens until the link is used.\n`,
		html: html([...lines, 'If you did not expect this, you can ignore the message.'], { href: m.link, label: 'Choose my password' })
	};
}

export function resetMail(m: { to: string; name: string; link: string; expiresAt: Date }): OutgoingMail {
	const lines = [
		`Hello ${m.name},`,
		'Someone (we hope you) asked to set a new password for this Shotwright account.',
		`The link below works once, until ${utc(m.expiresAt)}.`
	];
	return {
		to: m.to,
		subject: 'Shotwright: set a new password',
		text: `${lines.join('\n\n')}\n\n${m.link}\n\nIf you did not ask for this, ignore the message: your current password keeps working.\n`,
		html: html([...lines, 'If you did not ask for this, ignore the message: your current password keeps working.'], {
			href: m.link,
			label: 'Set a new password'
		})
	};
}
