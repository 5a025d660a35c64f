import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import * as correlation from '$lib/server/correlation';
import { errorResponse } from '$lib/server/correlation/http';
import type { RequestHandler } from './$types';

/** GET — one prediction with its exact inputs, settings and outputs, and its deltas (read). */
export const GET: RequestHandler = async ({ locals, params }) => {
	const denied = denyApi(locals, 'read');
	if (denied) return denied;
	try {
		const prediction = await correlation.getPrediction(Number(params.id));
		return json({ ...prediction, deltas: await correlation.deltasOfPrediction(prediction.id) });
	} catch (err) {
		return errorResponse(err);
	}
};
