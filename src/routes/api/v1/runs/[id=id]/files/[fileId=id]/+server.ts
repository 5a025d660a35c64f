import { Readable } from 'node:stream';
import { denyApi } from '$lib/server/auth/guard';
import { apiError } from '$lib/server/http';
import * as runs from '$lib/server/runs';
import * as storage from '$lib/server/storage';
import type { RequestHandler } from './$types';

/** GET /api/v1/runs/{id}/files/{fileId} — the original bytes, as uploaded. */
export const GET: RequestHandler = async ({ locals, params }) => {
	const denied = denyApi(locals, 'read');
	if (denied) return denied;
	const file = await runs.sourceFile(Number(params.id), Number(params.fileId));
	if (!file) return apiError(404, 'not_found', 'No such file of this run.');
	const body = await storage.openFile(file);
	return new Response(Readable.toWeb(body) as ReadableStream, {
		headers: {
			'content-type': file.contentType ?? 'application/octet-stream',
			'content-length': String(file.size),
			'content-disposition': `attachment; filename="${file.name.replace(/["\\\r\n]/g, '_')}"`,
			'x-spanline-sha256': file.sha256
		}
	});
};
