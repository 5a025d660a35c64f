/** Route helpers for the runs API: who is acting, and RunError → JSON error response. */
import { json, type RequestEvent } from '@sveltejs/kit';
import type { z } from 'zod';
import { apiError } from '../http';
import { clientAddress } from '../auth/request';
import { RunError } from './errors';
import { zodDetails } from './schemas';
import type { Actor } from './store';

export function actorOf(event: Pick<RequestEvent, 'locals' | 'getClientAddress'>): Actor {
	const u = event.locals.user!;
	return { id: u.id, email: u.email, role: u.role, requestId: event.locals.requestId, ip: clientAddress(event) };
}

/** The error envelope of a RunError (extra fields such as `sheets` or `mappingProposal` ride along). */
export function errorBody(e: RunError): { error: Record<string, unknown> } {
	const extra = (e as unknown as { extra?: Record<string, unknown> }).extra ?? {};
	return { error: { code: e.code, message: e.message, details: e.details, ...extra } };
}

/** A Response for a known refusal; anything else is re-thrown (500 through handleError). */
export function failure(e: unknown): Response {
	if (e instanceof RunError) return json(errorBody(e), { status: e.status });
	const pgCode = (e as { original?: { code?: string }; parent?: { code?: string } })?.original?.code;
	if (pgCode === '57P01' || (e as { name?: string })?.name === 'SequelizeConnectionRefusedError') {
		return apiError(503, 'database_unavailable', 'The database is not reachable.');
	}
	throw e;
}

export function invalid(error: z.ZodError, what = 'request'): Response {
	return apiError(400, 'bad_request', `The ${what} is not valid.`, zodDetails(error));
}

/** Query parameters as a plain object (last value wins). */
export function queryObject(url: URL): Record<string, string> {
	return Object.fromEntries(url.searchParams.entries());
}

export async function readJson(request: Request): Promise<unknown | Response> {
	try {
		return await request.json();
	} catch {
		return apiError(400, 'bad_json', 'The body is not valid JSON.');
	}
}
