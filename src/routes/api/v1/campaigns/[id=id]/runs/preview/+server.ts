import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import { apiError } from '$lib/server/http';
import * as runs from '$lib/server/runs';
import { previewQuerySchema } from '$lib/server/runs/schemas';
import { failure, invalid, queryObject } from '$lib/server/runs/http';
import type { RequestHandler } from './$types';

/** A preview reads at most this much (the client sends ≤ 256 KiB of CSV, or a whole XLSX ≤ 50 MB). */
const PREVIEW_LIMIT = 50 * 1024 * 1024;

/** POST /api/v1/campaigns/{id}/runs/preview?name=&sheet=&kind= — layout, headers, first rows and the proposed mapping. */
export const POST: RequestHandler = async ({ locals, params, url, request }) => {
	const denied = denyApi(locals, 'importRuns');
	if (denied) return denied;
	const q = previewQuerySchema.safeParse(queryObject(url));
	if (!q.success) return invalid(q.error, 'query');
	const parts: Uint8Array[] = [];
	let size = 0;
	if (request.body) {
		for await (const chunk of request.body as unknown as AsyncIterable<Uint8Array>) {
			size += chunk.byteLength;
			if (size > PREVIEW_LIMIT) return apiError(413, 'file_too_large', 'A preview takes at most 50 MB (send the first 256 KiB of a CSV).');
			parts.push(chunk);
		}
	}
	let result: runs.PreviewResult;
	try {
		result = await runs.preview(Number(params.id), { ...q.data, bytes: Buffer.concat(parts) });
	} catch (e) {
		return failure(e);
	}
	return json(result);
};
