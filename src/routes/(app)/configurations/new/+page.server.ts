import { fail, redirect } from '@sveltejs/kit';
import { requireCapability } from '$lib/server/auth/guard';
import * as configurations from '$lib/server/configurations';
import { listCampaigns } from '$lib/server/campaigns';
import { clientAddress } from '$lib/server/auth/request';
import type { Actions, PageServerLoad } from './$types';

export const load = (async ({ locals, url }) => {
	requireCapability(locals, 'editModels', url.pathname);
	const campaigns = await listCampaigns();
	return { campaigns: campaigns.map((c) => ({ id: c.id, code: c.code })) };
}) satisfies PageServerLoad;

export const actions = {
	save: async (event) => {
		const user = requireCapability(event.locals, 'editModels', event.url.pathname);
		const form = await event.request.formData();
		let raw: unknown;
		try {
			raw = JSON.parse(String(form.get('payload') ?? ''));
		} catch {
			return fail(400, { message: 'The form could not be read.', details: [] });
		}
		let id: number;
		try {
			id = (await configurations.create({ actor: user, requestId: event.locals.requestId, ip: clientAddress(event) }, raw)).id;
		} catch (err) {
			if (err instanceof configurations.ConfigurationError) return fail(err.code === 'conflict' ? 409 : 400, { message: err.message, details: err.details });
			throw err;
		}
		redirect(303, `/configurations/${id}`);
	}
} satisfies Actions;
