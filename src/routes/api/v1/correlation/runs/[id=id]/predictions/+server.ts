import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import * as correlation from '$lib/server/correlation';
import type { RequestHandler } from './$types';

/** GET — every prediction of the run, newest first, without inputs and outputs (read). */
export const GET: RequestHandler = async ({ locals, params }) => {
	const denied = denyApi(locals, 'read');
	if (denied) return denied;
	const items = await correlation.predictionsOfRun(Number(params.id));
	return json({ items, total: items.length, limit: items.length, offset: 0 });
};
