import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import { apiError } from '$lib/server/http';
import * as campaigns from '$lib/server/campaigns';
import type { RequestHandler } from './$types';

/** GET /api/v1/campaigns/{id} — campaign, facility, configurations. */
export const GET: RequestHandler = async ({ locals, params }) => {
	const denied = denyApi(locals, 'read');
	if (denied) return denied;
	const detail = await campaigns.getCampaign(Number(params.id));
	if (!detail) return apiError(404, 'not_found', 'No such campaign.');
	return json(detail);
};
