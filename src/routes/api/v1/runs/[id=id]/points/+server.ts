import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import { apiError } from '$lib/server/http';
import * as runs from '$lib/server/runs';
import { pointsQuerySchema } from '$lib/server/runs/schemas';
import { invalid, queryObject } from '$lib/server/runs/http';
import type { RequestHandler } from './$types';

/** GET /api/v1/runs/{id}/points?version=<n> — the current reduction's points, or version n's. */
export const GET: RequestHandler = async ({ locals, params, url }) => {
	const denied = denyApi(locals, 'read');
	if (denied) return denied;
	const q = pointsQuerySchema.safeParse(queryObject(url));
	if (!q.success) return invalid(q.error, 'query');
	const res = await runs.getPoints(Number(params.id), q.data.version);
	if (!res) return apiError(404, 'not_found', q.data.version ? `The run has no reduction version ${q.data.version}.` : 'No such run, or it has no reduction.');
	return json(res);
};
