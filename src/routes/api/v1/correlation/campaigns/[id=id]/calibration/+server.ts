import { clientAddress } from '$lib/server/auth/request';
import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { denyApi } from '$lib/server/auth/guard';
import { apiError } from '$lib/server/http';
import * as correlation from '$lib/server/correlation';
import { contextOf, errorResponse, readJson } from '$lib/server/correlation/http';
import type { RequestHandler } from './$types';

const CalibrateSchema = z.object({
	configurationId: z.number().int().positive(),
	runIds: z.array(z.number().int().positive()).max(500).optional(),
	fitSpanEfficiency: z.boolean().optional()
});

/** GET — the campaign's calibrations, oldest first (the drift over the campaign) (read). */
export const GET: RequestHandler = async ({ locals, params }) => {
	const denied = denyApi(locals, 'read');
	if (denied) return denied;
	const items = await correlation.calibrationHistory(Number(params.id));
	return json({ items, total: items.length, limit: items.length, offset: 0 });
};

/** POST { configurationId, runIds?, fitSpanEfficiency? } — fit and store a calibration (editModels). */
export const POST: RequestHandler = async (event) => {
	const denied = denyApi(event.locals, 'editModels');
	if (denied) return denied;
	const parsed = CalibrateSchema.safeParse(await readJson(event.request));
	if (!parsed.success) {
		return apiError(400, 'invalid', 'The calibration request has invalid fields.', parsed.error.issues.map((i) => ({ field: i.path.join('.'), message: i.message })));
	}
	try {
		return json(await correlation.calibrate(contextOf(event.locals, clientAddress(event)), Number(event.params.id), parsed.data), { status: 201 });
	} catch (err) {
		return errorResponse(err);
	}
};
