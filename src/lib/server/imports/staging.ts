// Uploads waiting for their mapping, on disk: the mapping screen previews the same file many
// times and the commit reads it once more, so it is uploaded once and kept here until it is
// imported or a day has passed. Nothing is written to the database before the commit, so a file
// that is never imported leaves no trace there. Each upload belongs to the person who sent it.
import { randomUUID } from 'node:crypto';
import { mkdir, readFile, readdir, rm, stat, writeFile } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import type { ImportTarget } from '$lib/schemas/imports';

/** How long an upload waits for its commit. */
export const STAGED_TTL_MS = 24 * 3600 * 1000;

export type StagedUpload = {
	id: string;
	userId: number;
	fileName: string;
	sizeBytes: number;
	sha256: string;
	target: ImportTarget;
	createdAt: string;
};

const ID = /^[0-9a-f-]{36}$/;

function directory() {
	return process.env.SHOTWRIGHT_IMPORT_STAGING_DIR || path.join(os.tmpdir(), 'shotwright-import-staging');
}

const files = (id: string) => ({ meta: path.join(directory(), `${id}.json`), bytes: path.join(directory(), `${id}.bin`) });

/** Remove uploads older than STAGED_TTL_MS (called on every new upload). */
async function sweep() {
	const dir = directory();
	const now = Date.now();
	for (const name of await readdir(dir).catch(() => [] as string[])) {
		const file = path.join(dir, name);
		const info = await stat(file).catch(() => null);
		if (info && now - info.mtimeMs > STAGED_TTL_MS) await rm(file, { force: true });
	}
}

export async function stage(bytes: Uint8Array, meta: Omit<StagedUpload, 'id' | 'createdAt'>): Promise<StagedUpload> {
	await mkdir(directory(), { recursive: true, mode: 0o700 });
	await sweep();
	const upload: StagedUpload = { ...meta, id: randomUUID(), createdAt: new Date().toISOString() };
	const f = files(upload.id);
	await writeFile(f.bytes, bytes, { mode: 0o600 });
	await writeFile(f.meta, JSON.stringify(upload), { mode: 0o600 });
	return upload;
}

/** The upload and its bytes, or null when it does not exist, has expired or is someone else's. */
export async function read(id: string, userId: number): Promise<{ upload: StagedUpload; bytes: Buffer } | null> {
	if (!ID.test(id)) return null;
	const f = files(id);
	try {
		const upload = JSON.parse(await readFile(f.meta, 'utf8')) as StagedUpload;
		if (upload.userId !== userId || Date.now() - Date.parse(upload.createdAt) > STAGED_TTL_MS) return null;
		return { upload, bytes: await readFile(f.bytes) };
	} catch {
		return null;
	}
}

export async function discard(id: string) {
	if (!ID.test(id)) return;
	const f = files(id);
	await Promise.all([rm(f.meta, { force: true }), rm(f.bytes, { force: true })]);
}
