import { clientAddress } from '$lib/server/auth/request';
import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import * as configurations from '$lib/server/configurations';
import { contextOf, errorResponse, readJson } from '$lib/server/correlation/http';
import type { RequestHandler } from './$types';

/** POST — save edits of this (newest) version as the next version; the old one is kept (editModels). */
export const POST: RequestHandler = async (event) => {
	const denied = denyApi(event.locals, 'editModels');
	if (denied) return denied;
	try {
		const saved = await configurations.saveVersion(contextOf(event.locals, clientAddress(event)), Number(event.params.id), await readJson(event.request));
		return json(saved, { status: 201 });
	} catch (err) {
		return errorResponse(err);
	}
};
