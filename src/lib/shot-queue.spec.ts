import { describe, expect, it } from 'vitest';
import { flushQueue, loadQueue, queueAfterFlush, saveQueue, uuidV4, type QueuedShot } from './shot-queue';

class MemoryStorage {
	private data = new Map<string, string>();
	getItem(k: string) {
		return this.data.get(k) ?? null;
	}
	setItem(k: string, v: string) {
		this.data.set(k, v);
	}
	removeItem(k: string) {
		this.data.delete(k);
	}
}

const shot = (n: number): QueuedShot => ({ clientUuid: uuidV4(), body: { fillGaugePa: n }, queuedAt: new Date(0).toISOString() });

describe('shot outbox', () => {
	it('makes RFC 4122 version-4 UUIDs (RFC 4122 §4.4 layout)', () => {
		const ids = new Set(Array.from({ length: 1000 }, uuidV4));
		expect(ids.size).toBe(1000);
		for (const id of ids) expect(id).toMatch(/^[0-9a-f]{8}-[0-9a-f]{4}-4[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/);
	});

	it('survives a reload: what is saved is loaded back, and an empty queue clears the key', () => {
		const storage = new MemoryStorage() as unknown as Storage;
		const queue = [shot(1), shot(2)];
		saveQueue(7, queue, storage);
		expect(loadQueue(7, storage)).toEqual(queue);
		saveQueue(7, [], storage);
		expect(loadQueue(7, storage)).toEqual([]);
	});

	it('ignores a damaged stored queue instead of throwing', () => {
		const storage = new MemoryStorage() as unknown as Storage;
		storage.setItem('shotwright.outbox.3', '{not json');
		expect(loadQueue(3, storage)).toEqual([]);
	});

	it('sends in order and stops at the first failure worth retrying, keeping order', async () => {
		const queue = [shot(1), shot(2), shot(3)];
		const seen: number[] = [];
		const result = await flushQueue(1, queue, async (item) => {
			seen.push(item.body.fillGaugePa as number);
			return item.body.fillGaugePa === 2 ? { ok: false, retry: true, message: 'offline' } : { ok: true };
		});
		expect(seen).toEqual([1, 2]);
		expect(result.sent).toBe(1);
		expect(result.queue.map((q) => q.body.fillGaugePa)).toEqual([2, 3]);
		expect(result.stoppedBecause).toBe('offline');
	});

	it('keeps a refused shot with its reason and goes on with the rest', async () => {
		const queue = [shot(1), shot(2), shot(3)];
		const result = await flushQueue(1, queue, async (item) =>
			item.body.fillGaugePa === 2 ? { ok: false, retry: false, message: 'Fill pressure must be at least 0 Pa.' } : { ok: true }
		);
		expect(result.sent).toBe(2);
		expect(result.queue).toHaveLength(1);
		expect(result.queue[0].error).toBe('Fill pressure must be at least 0 Pa.');
		const again = await flushQueue(1, result.queue, async () => ({ ok: true }));
		expect(again.sent).toBe(0);
	});

	it('keeps a shot logged while a flush was sending (the flush only knew its snapshot)', async () => {
		const first = shot(1);
		const snapshot = [first];
		let current = snapshot;
		const late = shot(2);
		const result = await flushQueue(1, snapshot, async () => {
			current = [...current, late];
			return { ok: true };
		});
		expect(result.queue).toEqual([]);
		expect(queueAfterFlush(snapshot, current, result.queue)).toEqual([late]);
	});
});
