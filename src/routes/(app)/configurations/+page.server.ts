import { requireCapability } from '$lib/server/auth/guard';
import { can } from '$lib/server/auth/roles';
import * as configurations from '$lib/server/configurations';
import { listCampaigns } from '$lib/server/campaigns';
import type { PageServerLoad } from './$types';

export const load = (async ({ locals, url }) => {
	const user = requireCapability(locals, 'read', url.pathname);
	const [items, campaigns] = await Promise.all([configurations.list({ allVersions: url.searchParams.get('all') === '1' }), listCampaigns()]);
	return {
		items,
		campaigns: campaigns.map((c) => ({ id: c.id, code: c.code })),
		allVersions: url.searchParams.get('all') === '1',
		canEdit: can(user.role, 'editModels')
	};
}) satisfies PageServerLoad;
