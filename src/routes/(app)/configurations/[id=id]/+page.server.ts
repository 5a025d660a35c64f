import { error, fail, redirect } from '@sveltejs/kit';
import { requireCapability } from '$lib/server/auth/guard';
import { can } from '$lib/server/auth/roles';
import { clientAddress } from '$lib/server/auth/request';
import * as configurations from '$lib/server/configurations';
import { listCampaigns } from '$lib/server/campaigns';
import type { Actions, PageServerLoad } from './$types';

export const load = (async ({ locals, params, url }) => {
	const user = requireCapability(locals, 'read', url.pathname);
	const id = Number(params.id);
	const found = await configurations.get(id).catch((err) => {
		if (err instanceof configurations.ConfigurationError) return null;
		throw err;
	});
	if (!found) error(404, { message: `There is no configuration ${id}.`, code: 'not_found' });
	const [versions, campaigns] = await Promise.all([configurations.versions(id), listCampaigns()]);
	return {
		configuration: found,
		input: configurations.inputOf(found),
		versions: versions.map((v) => ({ id: v.id, version: v.version, createdAt: v.createdAt, notes: v.notes })),
		campaigns: campaigns.map((c) => ({ id: c.id, code: c.code })),
		canEdit: can(user.role, 'editModels') && found.isLatest
	};
}) satisfies PageServerLoad;

function payloadOf(form: FormData): unknown {
	try {
		return JSON.parse(String(form.get('payload') ?? ''));
	} catch {
		return undefined;
	}
}

function failure(err: unknown) {
	if (err instanceof configurations.ConfigurationError) return fail(err.code === 'conflict' ? 409 : err.code === 'not_found' ? 404 : 400, { message: err.message, details: err.details });
	throw err;
}

export const actions = {
	save: async (event) => {
		const user = requireCapability(event.locals, 'editModels', event.url.pathname);
		const raw = payloadOf(await event.request.formData());
		if (raw === undefined) return fail(400, { message: 'The form could not be read.', details: [] });
		let id: number;
		try {
			id = (await configurations.saveVersion({ actor: user, requestId: event.locals.requestId, ip: clientAddress(event) }, Number(event.params.id), raw)).id;
		} catch (err) {
			return failure(err);
		}
		redirect(303, `/configurations/${id}`);
	},
	duplicate: async (event) => {
		const user = requireCapability(event.locals, 'editModels', event.url.pathname);
		const form = await event.request.formData();
		const raw = payloadOf(form);
		if (raw === undefined) return fail(400, { message: 'The form could not be read.', details: [] });
		let id: number;
		try {
			// Duplicate-and-modify: the variant takes the form's current (possibly edited) geometry.
			id = (await configurations.duplicate({ actor: user, requestId: event.locals.requestId, ip: clientAddress(event) }, Number(event.params.id), { name: form.get('duplicateName') }, raw)).id;
		} catch (err) {
			return failure(err);
		}
		redirect(303, `/configurations/${id}`);
	}
} satisfies Actions;
