import type { ErrorDetail } from '../http';

/** A refusal of a runs operation with the HTTP status the API answers. */
export class RunError extends Error {
	constructor(
		readonly status: 400 | 403 | 404 | 409 | 413 | 415 | 422 | 503,
		readonly code: string,
		message: string,
		readonly details: (ErrorDetail & Record<string, unknown>)[] = []
	) {
		super(message);
		this.name = 'RunError';
	}
	toJSON() {
		return { code: this.code, message: this.message, details: this.details };
	}
}
