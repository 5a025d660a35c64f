import { json } from '@sveltejs/kit';

/** One field-, row- or column-level problem in a request (DESIGN.md "API conventions"). */
export interface ErrorDetail {
	field?: string;
	file?: string;
	sheet?: string;
	row?: number;
	column?: string;
	message: string;
}

/** The API's error body: `{ "error": { code, message, details } }`. */
export function apiError(status: number, code: string, message: string, details: ErrorDetail[] = []) {
	return json({ error: { code, message, details } }, { status });
}
