import * as campaigns from '$lib/server/campaigns';
import { requireCapability } from '$lib/server/auth/guard';
import type { PageServerLoad } from './$types';

export const load = (async ({ locals }) => {
	requireCapability(locals, 'read');
	return { campaigns: await campaigns.listCampaigns() };
}) satisfies PageServerLoad;
