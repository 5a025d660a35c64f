import { json } from '@sveltejs/kit';
import { denyApi } from '$lib/server/auth/guard';
import * as runs from '$lib/server/runs';
import { importQuerySchema, listRunsQuerySchema } from '$lib/server/runs/schemas';
import { actorOf, errorBody, failure, invalid, queryObject } from '$lib/server/runs/http';
import { discardBody } from '$lib/server/runs/import';
import type { RequestHandler } from './$types';
import { log } from '$lib/server/log';

/** A caller refused before auth or with a bad query gets its answer after at most this much of the body is read and dropped. */
const REFUSED_DRAIN_BYTES = 1024 * 1024;

/** GET /api/v1/campaigns/{id}/runs?state=&kind=&limit=&offset= */
export const GET: RequestHandler = async ({ locals, params, url }) => {
	const denied = denyApi(locals, 'read');
	if (denied) return denied;
	const q = listRunsQuerySchema.safeParse(queryObject(url));
	if (!q.success) return invalid(q.error, 'query');
	return json(await runs.listRuns(Number(params.id), q.data));
};

/**
 * POST /api/v1/campaigns/{id}/runs?name=&kind=&… — the file is the body,
 * read as a stream. `Accept: application/x-ndjson` streams progress lines.
 */
export const POST: RequestHandler = async (event) => {
	const { locals, params, url, request } = event;
	const len = request.headers.get('content-length');
	const contentLength = len !== null && /^\d+$/.test(len) ? Number(len) : null;
	// Drain before an early answer, so Node's fetch reads it instead of a reset (runs/import discardBody).
	const denied = denyApi(locals, 'importRuns');
	if (denied) {
		await discardBody(request.body, contentLength, REFUSED_DRAIN_BYTES);
		return denied;
	}
	const q = importQuerySchema.safeParse(queryObject(url));
	if (!q.success) {
		await discardBody(request.body, contentLength, REFUSED_DRAIN_BYTES);
		return invalid(q.error, 'query');
	}
	const actor = actorOf(event);
	const input: runs.ImportInput = {
		campaignId: Number(params.id),
		query: q.data,
		mappingHeader: request.headers.get('x-spanline-mapping'),
		body: request.body,
		contentLength,
		contentType: request.headers.get('content-type')
	};
	const finish = async (r: runs.ImportResult) => ({ run: await runs.getRun(r.runId, locals.user!.role), reductionVersion: r.reductionVersion, warnings: r.warnings });

	if ((request.headers.get('accept') ?? '').includes('application/x-ndjson')) {
		const enc = new TextEncoder();
		const stream = new ReadableStream<Uint8Array>({
			start(controller) {
				const line = (o: unknown) => controller.enqueue(enc.encode(`${JSON.stringify(o)}\n`));
				runs
					.importRun(actor, input, (p) => line(p))
					.then(async (r) => line({ status: 201, result: await finish(r) }))
					.catch((e) => {
						if (e instanceof runs.RunError) line({ status: e.status, ...errorBody(e) });
						else {
							log().error({ err: e }, 'import failed');
							line({ status: 500, error: { code: 'internal', message: 'The import failed on the server.', details: [] } });
						}
					})
					.finally(() => controller.close());
			}
		});
		return new Response(stream, { status: 200, headers: { 'content-type': 'application/x-ndjson', 'cache-control': 'no-store' } });
	}

	let result: runs.ImportResult;
	try {
		result = await runs.importRun(actor, input);
	} catch (e) {
		return failure(e);
	}
	return json(await finish(result), { status: 201 });
};
