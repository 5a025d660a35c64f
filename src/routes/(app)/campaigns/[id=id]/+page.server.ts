import { error } from '@sveltejs/kit';
import * as campaigns from '$lib/server/campaigns';
import { requireCapability } from '$lib/server/auth/guard';
import { can } from '$lib/server/auth/roles';
import type { PageServerLoad } from './$types';

// First render: the campaign header. The runs table is fetched by the page
// from /api/v1/campaigns/{id}/runs (the same API scripts use).
export const load = (async ({ locals, params, url }) => {
	const user = requireCapability(locals, 'read', url.pathname);
	const id = Number(params.id);
	const campaign = (await campaigns.listCampaigns()).find((c) => c.id === id);
	if (!campaign) error(404, { message: 'There is no campaign with this number.', code: 'not_found' });
	return { campaign, canImport: can(user.role, 'importRuns') };
}) satisfies PageServerLoad;
