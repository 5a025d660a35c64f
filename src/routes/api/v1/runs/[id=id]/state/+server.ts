import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import * as runs from '$lib/server/runs';
import { stateBodySchema } from '$lib/server/runs/schemas';
import { actorOf, failure, invalid, readJson } from '$lib/server/runs/http';
import type { RequestHandler } from './$types';

/**
 * POST /api/v1/runs/{id}/state { to, note? } — the capability depends on
 * the transition (runs.TRANSITIONS); editRuns is the least any move needs.
 */
export const POST: RequestHandler = async (event) => {
	const denied = denyApi(event.locals, 'read');
	if (denied) return denied;
	const body = await readJson(event.request);
	if (body instanceof Response) return body;
	const parsed = stateBodySchema.safeParse(body);
	if (!parsed.success) return invalid(parsed.error, 'body');
	try {
		await runs.changeState(actorOf(event), Number(event.params.id), parsed.data.to, parsed.data.note);
	} catch (e) {
		return failure(e);
	}
	return json(await runs.getRun(Number(event.params.id), event.locals.user!.role));
};
