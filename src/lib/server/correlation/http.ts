// Map the errors of our modules to the API's error body (docs/api.md).
import { apiError } from '$lib/server/http';
import { ConfigurationError } from '$lib/server/configurations';
import { CorrelationError } from './index';

const STATUS: Record<string, number> = { not_found: 404, invalid: 400, conflict: 409, not_ready: 409 };

/** A JSON error response for a known error; re-throws anything else (a 500 with the request id). */
export function errorResponse(err: unknown): Response {
	if (err instanceof ConfigurationError || err instanceof CorrelationError) {
		return apiError(STATUS[err.code] ?? 400, err.code, err.message, err.details);
	}
	throw err;
}

export async function readJson(request: Request): Promise<unknown> {
	try {
		return await request.json();
	} catch {
		return undefined;
	}
}

export function contextOf(locals: App.Locals, ip: string | null) {
	const u = locals.user!;
	return { actor: { id: u.id, email: u.email }, requestId: locals.requestId, ip };
}
