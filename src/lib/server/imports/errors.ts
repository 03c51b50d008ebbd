// Why a whole file is refused: one clear sentence for the person (or script) that sent it, and
// the HTTP status the API answers with. Row problems are CellErrors, not this.
import type { CellError } from '$lib/schemas/imports';

export type ImportRefusalStatus = 400 | 403 | 404 | 409 | 413 | 422;

export class ImportRefused extends Error {
	constructor(
		message: string,
		public readonly status: ImportRefusalStatus = 400,
		/** What was wrong, in a word: "empty", "encoding", "binary", "mapping", "duplicate-file", "invalid-rows"… */
		public readonly code: string = 'file',
		/** Invalid cells, when the refusal is about rows. */
		public readonly errors: CellError[] = [],
		/** The field or parameter at fault (for API issues), when there is one. */
		public readonly path: string = 'file'
	) {
		super(message);
	}
}
