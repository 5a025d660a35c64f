import { error } from '@sveltejs/kit';
import * as campaigns from '$lib/server/campaigns';
import * as configurations from '$lib/server/configurations';
import * as correlation from '$lib/server/correlation';
import { requireCapability } from '$lib/server/auth/guard';
import { can } from '$lib/server/auth/roles';
import type { PageServerLoad } from './$types';

// First render: the campaign, its configurations and runs (for choosing the
// runs to fit). Calibrations, their check against the runs and the drift are
// fetched by the page from /api/v1/correlation/... (the API scripts use).
export const load = (async ({ locals, params, url }) => {
	const user = requireCapability(locals, 'read', url.pathname);
	const id = Number(params.id);
	const campaign = (await campaigns.listCampaigns()).find((c) => c.id === id);
	if (!campaign) error(404, { message: 'There is no campaign with this number.', code: 'not_found' });
	const [configs, runs] = await Promise.all([configurations.list({ campaignId: id, allVersions: true }), correlation.campaignRunsOverview(id)]);
	return {
		campaign: { id: campaign.id, code: campaign.code, name: campaign.name },
		configurations: configs.map((c) => ({ id: c.id, name: c.name, version: c.version, isLatest: c.isLatest })),
		runs: runs.filter((r) => !r.isTare).map((r) => ({ id: r.id, runNumber: r.runNumber, state: r.state, testDate: r.testDate, configurationId: r.configurationId, configurationName: r.configurationName, configurationVersion: r.configurationVersion, reduced: r.reductionVersion !== null })),
		canCalibrate: can(user.role, 'editModels')
	};
}) satisfies PageServerLoad;
