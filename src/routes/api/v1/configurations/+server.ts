import { clientAddress } from '$lib/server/auth/request';
import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import * as configurations from '$lib/server/configurations';
import { contextOf, errorResponse, readJson } from '$lib/server/correlation/http';
import { apiError } from '$lib/server/http';
import { parseId } from '$lib/ids';
import type { RequestHandler } from './$types';

/** GET ?campaignId=&allVersions=1 — newest version of each configuration (read). */
export const GET: RequestHandler = async ({ locals, url }) => {
	const denied = denyApi(locals, 'read');
	if (denied) return denied;
	const raw = url.searchParams.get('campaignId');
	const campaignId = parseId(raw) ?? undefined;
	if (raw && campaignId === undefined) {
		return apiError(400, 'invalid', 'campaignId must be a campaign id (a positive integer).', [{ field: 'campaignId', message: 'not an id' }]);
	}
	const items = await configurations.list({ campaignId, allVersions: url.searchParams.get('allVersions') === '1' });
	return json({ items, total: items.length, limit: items.length, offset: 0 });
};

/** POST — a new configuration, version 1 (editModels). */
export const POST: RequestHandler = async (event) => {
	const denied = denyApi(event.locals, 'editModels');
	if (denied) return denied;
	try {
		const created = await configurations.create(contextOf(event.locals, clientAddress(event)), await readJson(event.request));
		return json(created, { status: 201 });
	} catch (err) {
		return errorResponse(err);
	}
};
