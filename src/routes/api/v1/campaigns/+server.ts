import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import * as campaigns from '$lib/server/campaigns';
import type { RequestHandler } from './$types';

/** GET /api/v1/campaigns — every campaign with its run counts. */
export const GET: RequestHandler = async ({ locals }) => {
	const denied = denyApi(locals, 'read');
	if (denied) return denied;
	const items = await campaigns.listCampaigns();
	return json({ items, total: items.length, limit: items.length, offset: 0 });
};
