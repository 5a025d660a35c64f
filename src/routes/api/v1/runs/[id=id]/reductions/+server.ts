import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import * as runs from '$lib/server/runs';
import { reduceBodySchema } from '$lib/server/runs/schemas';
import { actorOf, failure, invalid, readJson } from '$lib/server/runs/http';
import type { RequestHandler } from './$types';

/** POST /api/v1/runs/{id}/reductions { settings } — re-reduce from the stored samples; a new version. */
export const POST: RequestHandler = async (event) => {
	const denied = denyApi(event.locals, 'editRuns');
	if (denied) return denied;
	const body = await readJson(event.request);
	if (body instanceof Response) return body;
	const parsed = reduceBodySchema.safeParse(body);
	if (!parsed.success) return invalid(parsed.error, 'body');
	let res: { version: number; warnings: string[] };
	try {
		res = await runs.reReduce(actorOf(event), Number(event.params.id), parsed.data.settings);
	} catch (e) {
		return failure(e);
	}
	return json(res, { status: 201 });
};
