import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import { apiError } from '$lib/server/http';
import * as facilities from '$lib/server/facilities';
import { mappingProfileBodySchema } from '$lib/server/runs/schemas';
import { actorOf, failure, invalid, readJson } from '$lib/server/runs/http';
import type { ColumnMapping } from '$lib/server/imports/mapping';
import type { RequestHandler } from './$types';

/** GET /api/v1/facilities/{id}/mapping-profiles */
export const GET: RequestHandler = async ({ locals, params }) => {
	const denied = denyApi(locals, 'read');
	if (denied) return denied;
	const id = Number(params.id);
	if (!(await facilities.facilityExists(id))) return apiError(404, 'not_found', 'No such facility.');
	const items = await facilities.listProfiles(id);
	return json({ items, total: items.length, limit: items.length, offset: 0 });
};

/** POST /api/v1/facilities/{id}/mapping-profiles { name, mapping } — create, or replace the profile of that name. */
export const POST: RequestHandler = async (event) => {
	const denied = denyApi(event.locals, 'importRuns');
	if (denied) return denied;
	const body = await readJson(event.request);
	if (body instanceof Response) return body;
	const parsed = mappingProfileBodySchema.safeParse(body);
	if (!parsed.success) return invalid(parsed.error, 'body');
	let res: Awaited<ReturnType<typeof facilities.saveProfile>>;
	try {
		res = await facilities.saveProfile(actorOf(event), Number(event.params.id), { name: parsed.data.name, mapping: parsed.data.mapping as ColumnMapping });
	} catch (e) {
		return failure(e);
	}
	return json(res.profile, { status: res.created ? 201 : 200 });
};
