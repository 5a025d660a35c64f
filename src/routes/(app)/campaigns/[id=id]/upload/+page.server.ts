import { error } from '@sveltejs/kit';
import * as campaigns from '$lib/server/campaigns';
import * as mapping from '$lib/server/imports/mapping';
import { requireCapability } from '$lib/server/auth/guard';
import type { PageServerLoad } from './$types';

export const load = (async ({ locals, params, url }) => {
	requireCapability(locals, 'importRuns', url.pathname);
	const id = Number(params.id);
	const [list, detail] = await Promise.all([campaigns.listCampaigns(), campaigns.getCampaign(id)]);
	const campaign = list.find((c) => c.id === id);
	if (!campaign || !detail) error(404, { message: 'There is no campaign with this number.', code: 'not_found' });
	// The one field list of the mapping module, without its synonym table.
	const fields = mapping.FIELDS.map(({ id: fid, label, kinds, quantity, defaultUnit }) => ({ id: fid, label, kinds: [...kinds], quantity, defaultUnit }));
	const configurations = detail.configurations.map((c) => ({ id: c.id, name: c.name, version: c.version, refArea: c.refArea }));
	const facility = detail.facility ? { id: detail.facility.id, name: detail.facility.name } : null;
	return { campaign, fields, configurations, facility };
}) satisfies PageServerLoad;
