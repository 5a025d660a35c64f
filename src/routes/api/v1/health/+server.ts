import { json } from '@sveltejs/kit';
import * as db from '$lib/server/db';
import { APP_VERSION } from '$lib/server/version';
import { apiError } from '$lib/server/http';
import type { RequestHandler } from './$types';

/** Public liveness and database reachability, for operators and load balancers. */
export const GET: RequestHandler = async () => {
	const database = await db.checkDatabase();
	if (!database.ok) {
		return apiError(503, 'database_unavailable', 'The database is not reachable.', [
			{ field: 'database', message: database.error ?? 'no answer' }
		]);
	}
	return json({ status: 'ok', version: APP_VERSION, database: { ok: true, latencyMs: database.latencyMs } });
};
