// Typed failures of the reconciliation engine. Routes map `status` onto their response: 400 for
// bad input (fail(400) with `field` pointing at the form field), 403, 404, 409 for a calibration
// in the wrong state. The message is written for the person who made the request.

export type ReconcileErrorStatus = 400 | 403 | 404 | 409;

export class ReconcileError extends Error {
	constructor(
		/** The input field at fault (e.g. `exclusions[2].reason`), or null when none is. */
		public readonly field: string | null,
		message: string,
		public readonly status: ReconcileErrorStatus = 400
	) {
		super(message);
		this.name = 'ReconcileError';
	}
}
