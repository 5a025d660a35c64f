import { clientAddress } from '$lib/server/auth/request';
import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import * as configurations from '$lib/server/configurations';
import { contextOf, errorResponse, readJson } from '$lib/server/correlation/http';
import type { RequestHandler } from './$types';

/** POST { name, notes?, changes? } — a variant under a new name, version 1, this one as parent (editModels). */
export const POST: RequestHandler = async (event) => {
	const denied = denyApi(event.locals, 'editModels');
	if (denied) return denied;
	const body = (await readJson(event.request)) as { name?: unknown; notes?: unknown; changes?: unknown } | undefined;
	try {
		const created = await configurations.duplicate(contextOf(event.locals, clientAddress(event)), Number(event.params.id), { name: body?.name, notes: body?.notes }, body?.changes);
		return json(created, { status: 201 });
	} catch (err) {
		return errorResponse(err);
	}
};
