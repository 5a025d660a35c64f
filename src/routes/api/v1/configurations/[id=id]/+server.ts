import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import * as configurations from '$lib/server/configurations';
import { errorResponse } from '$lib/server/correlation/http';
import type { RequestHandler } from './$types';

/** GET — one configuration version and the list of all versions of its name (read). */
export const GET: RequestHandler = async ({ locals, params }) => {
	const denied = denyApi(locals, 'read');
	if (denied) return denied;
	try {
		const configuration = await configurations.get(Number(params.id));
		const versions = (await configurations.versions(configuration.id)).map((v) => ({ id: v.id, version: v.version, createdAt: v.createdAt, createdBy: v.createdBy, notes: v.notes }));
		return json({ ...configuration, versions });
	} catch (err) {
		return errorResponse(err);
	}
};
