import { denyApi } from '$lib/server/auth/guard';
import { apiError } from '$lib/server/http';
import * as summary from '$lib/server/summary';
import type { RequestHandler } from './$types';

/** GET — the campaign summary: run counts, configuration table, trends, repeatability, worst offenders, text (read). */
export const GET: RequestHandler = async ({ locals, params }) => {
	const denied = denyApi(locals, 'read');
	if (denied) return denied;
	let body: string;
	try {
		body = await summary.summaryJson(Number(params.id));
	} catch (err) {
		if (err instanceof summary.SummaryError) return apiError(404, 'not_found', err.message);
		throw err;
	}
	return new Response(body, { headers: { 'content-type': 'application/json; charset=utf-8', 'cache-control': 'private, no-store' } });
};
