import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import * as correlation from '$lib/server/correlation';
import { errorResponse } from '$lib/server/correlation/http';
import type { RequestHandler } from './$types';

/** GET — one calibration and the calibrated model against every reduced run of its campaign (read). */
export const GET: RequestHandler = async ({ locals, params }) => {
	const denied = denyApi(locals, 'read');
	if (denied) return denied;
	try {
		return json(await correlation.calibrationAgainstRuns(Number(params.id)));
	} catch (err) {
		return errorResponse(err);
	}
};
