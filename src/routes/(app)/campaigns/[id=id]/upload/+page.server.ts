import { error } from '@sveltejs/kit';
import * as campaigns from '$lib/server/campaigns';
import * as mapping from '$lib/server/imports/mapping';
import { requireCapability } from '$lib/server/auth/guard';
import type { PageServerLoad } from './$types';

export const load = (async ({ locals, params, url }) => {
	requireCapability(locals, 'importRuns', url.pathname);
	const id = Number(params.id);
	const campaign = (await campaigns.listCampaigns()).find((c) => c.id === id);
	if (!campaign) error(404, { message: 'There is no campaign with this number.', code: 'not_found' });
	// The one field list of the mapping module, without its synonym table.
	const fields = mapping.FIELDS.map(({ id: fid, label, kinds, quantity, defaultUnit }) => ({ id: fid, label, kinds: [...kinds], quantity, defaultUnit }));
	return { campaign, fields };
}) satisfies PageServerLoad;
