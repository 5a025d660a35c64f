/**
 * Browser side of the v1 JSON API (docs/api.md). Every error body has the
 * shape { error: { code, message, details } }; `ApiError` carries it so pages
 * can show the message and list the details by file, sheet, row and column.
 */

export interface ProblemDetail {
	field?: string;
	file?: string;
	sheet?: string;
	row?: number;
	column?: string | number;
	message: string;
	runId?: number;
	[key: string]: unknown;
}

export interface ApiErrorBody {
	code: string;
	message: string;
	details?: ProblemDetail[];
}

export class ApiError extends Error {
	readonly status: number;
	readonly code: string;
	readonly details: ProblemDetail[];
	constructor(status: number, body: ApiErrorBody) {
		super(body.message);
		this.name = 'ApiError';
		this.status = status;
		this.code = body.code;
		this.details = Array.isArray(body.details) ? body.details : [];
	}
}

const STATUS_TEXT: Record<number, string> = {
	400: 'The request was not understood.',
	401: 'Your session has ended: sign in again.',
	403: 'Your role does not allow this.',
	404: 'Not found.',
	409: 'This conflicts with what is already stored.',
	413: 'The file is too large.',
	415: 'This kind of file is not supported.',
	422: 'The content is not valid.',
	503: 'The database is not reachable just now: try again in a moment.'
};

/** Turn any error body (ours, or a proxy's HTML) into an ApiError. */
export function errorFromBody(status: number, text: string): ApiError {
	try {
		const parsed = JSON.parse(text) as { error?: Partial<ApiErrorBody>; message?: string };
		if (parsed && typeof parsed.error === 'object' && parsed.error) {
			return new ApiError(status, {
				code: parsed.error.code ?? `http_${status}`,
				message: parsed.error.message ?? STATUS_TEXT[status] ?? `Request failed (${status}).`,
				details: parsed.error.details
			});
		}
		if (parsed && typeof parsed.message === 'string') return new ApiError(status, { code: `http_${status}`, message: parsed.message });
	} catch {
		// not JSON: fall through to the status text
	}
	return new ApiError(status, { code: `http_${status}`, message: STATUS_TEXT[status] ?? `Request failed (${status}).` });
}

/** A readable one-line message for anything a fetch may throw. */
export function messageOf(err: unknown): string {
	if (err instanceof ApiError) return err.message;
	if (err instanceof TypeError) return 'The server could not be reached. Check the connection and try again.';
	if (err instanceof Error) return err.message;
	return String(err);
}

/** GET/POST JSON under /api/v1; throws ApiError on a non-2xx answer. */
export async function api<T>(path: string, init: RequestInit & { json?: unknown } = {}, fetcher: typeof fetch = fetch): Promise<T> {
	const { json, headers, ...rest } = init;
	const h = new Headers(headers);
	h.set('Accept', 'application/json');
	let body = rest.body;
	if (json !== undefined) {
		h.set('Content-Type', 'application/json');
		body = JSON.stringify(json);
	}
	const res = await fetcher(`/api/v1${path}`, { credentials: 'same-origin', ...rest, headers: h, body });
	const text = await res.text();
	if (!res.ok) throw errorFromBody(res.status, text);
	return (text === '' ? undefined : JSON.parse(text)) as T;
}
