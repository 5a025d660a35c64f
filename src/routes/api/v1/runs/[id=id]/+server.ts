import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import { apiError } from '$lib/server/http';
import * as runs from '$lib/server/runs';
import type { RequestHandler } from './$types';

/** GET /api/v1/runs/{id} — RunDetail. */
export const GET: RequestHandler = async ({ locals, params }) => {
	const denied = denyApi(locals, 'read');
	if (denied) return denied;
	const run = await runs.getRun(Number(params.id), locals.user!.role);
	if (!run) return apiError(404, 'not_found', 'No such run.');
	return json(run);
};
