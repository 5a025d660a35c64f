import { requireCapability } from '$lib/server/auth/guard';
import { can } from '$lib/server/auth/roles';
import * as correlation from '$lib/server/correlation';
import { listCampaigns } from '$lib/server/campaigns';
import { parseId } from '$lib/ids';
import type { PageServerLoad } from './$types';

export const load = (async ({ locals, url }) => {
	const user = requireCapability(locals, 'read', url.pathname + url.search);
	const campaigns = (await listCampaigns()).map((c) => ({ id: c.id, code: c.code, name: c.name }));
	const asked = parseId(url.searchParams.get('campaign'));
	const campaignId = (asked !== null && campaigns.some((c) => c.id === asked) ? asked : null) ?? campaigns[0]?.id ?? null;
	const runs = campaignId ? await correlation.campaignRunsOverview(campaignId) : [];
	const selected = (url.searchParams.get('runs') ?? '').split(',').map(Number).filter((id) => runs.some((r) => r.id === id));
	return { campaigns, campaignId, runs, selected, canPredict: can(user.role, 'editModels') };
}) satisfies PageServerLoad;
