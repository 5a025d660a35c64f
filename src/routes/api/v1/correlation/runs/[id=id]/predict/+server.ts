import { clientAddress } from '$lib/server/auth/request';
import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { denyApi } from '$lib/server/auth/guard';
import { apiError } from '$lib/server/http';
import * as correlation from '$lib/server/correlation';
import { contextOf, errorResponse, readJson } from '$lib/server/correlation/http';
import type { RequestHandler } from './$types';

const PredictSchema = z
	.object({
		configurationId: z.number().int().positive().optional(),
		solver: z.object({ solver: z.string().optional(), terms: z.number().int().min(1).max(400).optional(), symmetry: z.enum(['auto', 'symmetric', 'general']).optional() }).optional(),
		deltas: z.object({ alphaRefDeg: z.number().min(-30).max(40).optional(), clRef: z.number().min(-3).max(4).optional() }).optional()
	})
	.default({});

/** POST — predict the run at its conditions and store prediction and deltas as current (editModels). */
export const POST: RequestHandler = async (event) => {
	const denied = denyApi(event.locals, 'editModels');
	if (denied) return denied;
	const body = (await readJson(event.request)) ?? {};
	const parsed = PredictSchema.safeParse(body);
	if (!parsed.success) {
		return apiError(400, 'invalid', 'The prediction request has invalid fields.', parsed.error.issues.map((i) => ({ field: i.path.join('.'), message: i.message })));
	}
	try {
		const result = await correlation.predictRun(contextOf(event.locals, clientAddress(event)), Number(event.params.id), parsed.data as correlation.PredictRequest);
		return json(result, { status: 201 });
	} catch (err) {
		return errorResponse(err);
	}
};
