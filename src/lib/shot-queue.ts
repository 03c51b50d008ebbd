// The firing line's outbox: shots are kept in the browser (localStorage) until the server has
// them, so a dropped network or a reload loses nothing; each carries a client-made UUID, so a
// resend after a lost answer never doubles a shot.

export type QueuedShot = {
	clientUuid: string;
	body: Record<string, unknown>;
	queuedAt: string;
	/** Set when the server refused the shot for a reason that resending will not fix. */
	error?: string;
};

export type SendResult = { ok: true } | { ok: false; retry: boolean; message: string };

const PREFIX = 'shotwright.outbox.';

/** RFC 4122 version 4 from crypto.getRandomValues (randomUUID needs a secure context; a tablet on plain http on the LAN has none). */
export function uuidV4(): string {
	const b = crypto.getRandomValues(new Uint8Array(16));
	b[6] = (b[6] & 0x0f) | 0x40;
	b[8] = (b[8] & 0x3f) | 0x80;
	const h = Array.from(b, (x) => x.toString(16).padStart(2, '0')).join('');
	return `${h.slice(0, 8)}-${h.slice(8, 12)}-${h.slice(12, 16)}-${h.slice(16, 20)}-${h.slice(20)}`;
}

export function loadQueue(sessionId: number, storage: Storage = localStorage): QueuedShot[] {
	try {
		const raw = storage.getItem(PREFIX + sessionId);
		const parsed = raw ? JSON.parse(raw) : [];
		return Array.isArray(parsed) ? parsed : [];
	} catch {
		return [];
	}
}

export function saveQueue(sessionId: number, queue: QueuedShot[], storage: Storage = localStorage) {
	if (queue.length === 0) storage.removeItem(PREFIX + sessionId);
	else storage.setItem(PREFIX + sessionId, JSON.stringify(queue));
}

/** POST one shot; tells a refusal to fix (4xx) from a failure to retry (network, 5xx, 429). */
export async function sendShot(sessionId: number, item: QueuedShot, fetcher: typeof fetch = fetch): Promise<SendResult> {
	let response: Response;
	try {
		response = await fetcher(`/api/v1/sessions/${sessionId}/shots`, {
			method: 'POST',
			headers: { 'content-type': 'application/json' },
			body: JSON.stringify({ ...item.body, clientUuid: item.clientUuid })
		});
	} catch {
		return { ok: false, retry: true, message: 'No connection: the shot waits on this tablet.' };
	}
	if (response.ok) return { ok: true };
	if (response.status >= 500 || response.status === 429 || response.status === 401)
		return { ok: false, retry: true, message: `The server answered ${response.status}; will retry.` };
	let message = `Refused (${response.status}).`;
	try {
		const body = await response.json();
		const issues = Array.isArray(body?.issues) ? body.issues.map((i: { path: string; message: string }) => i.message).join(' ') : '';
		message = [body?.message, issues].filter(Boolean).join(' ') || message;
	} catch {
		// A body that is not JSON still leaves the status as the message.
	}
	return { ok: false, retry: false, message };
}

/**
 * Send the queue in order. Stops at the first failure worth retrying (order is kept); a refused
 * shot stays in the queue with its error so the officer can read it and discard it.
 */
export async function flushQueue(
	sessionId: number,
	queue: QueuedShot[],
	send: (item: QueuedShot) => Promise<SendResult>
): Promise<{ queue: QueuedShot[]; sent: number; stoppedBecause: string | null }> {
	let sent = 0;
	const remaining: QueuedShot[] = [];
	for (let i = 0; i < queue.length; i++) {
		const item = queue[i];
		if (item.error) {
			remaining.push(item);
			continue;
		}
		const result = await send(item);
		if (result.ok) {
			sent++;
			continue;
		}
		if (result.retry) return { queue: [...remaining, ...queue.slice(i)], sent, stoppedBecause: result.message };
		remaining.push({ ...item, error: result.message });
	}
	return { queue: remaining, sent, stoppedBecause: null };
}

/**
 * The queue after a flush: what the flush kept (refused or unsent, in order), then the shots
 * logged while it was sending, which were not in its snapshot. Without this a flush would
 * overwrite the queue with its snapshot and lose a shot logged mid-flight.
 */
export function queueAfterFlush(snapshot: QueuedShot[], current: QueuedShot[], kept: QueuedShot[]): QueuedShot[] {
	const seen = new Set(snapshot.map((q) => q.clientUuid));
	return [...kept, ...current.filter((q) => !seen.has(q.clientUuid))];
}
