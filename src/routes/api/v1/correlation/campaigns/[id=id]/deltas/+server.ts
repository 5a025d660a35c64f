import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import * as correlation from '$lib/server/correlation';
import type { RequestHandler } from './$types';

/** GET — every current delta of the campaign, the per-configuration summary, and the tolerance bands (read). */
export const GET: RequestHandler = async ({ locals, params }) => {
	const denied = denyApi(locals, 'read');
	if (denied) return denied;
	const id = Number(params.id);
	const [items, summary] = await Promise.all([correlation.campaignDeltas(id), correlation.campaignDeltaSummary(id)]);
	return json({ items, summary, quantities: correlation.DELTA_QUANTITIES });
};
