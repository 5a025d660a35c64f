import { requireCapability } from '$lib/server/auth/guard';
import type { PageServerLoad } from './$types';

// The page itself fetches GET /api/v1/campaigns/{id}/summary in the browser
// (the same API scripts use); the load only checks the role.
export const load = (async ({ locals, params, url }) => {
	requireCapability(locals, 'read', url.pathname);
	return { campaignId: Number(params.id) };
}) satisfies PageServerLoad;
