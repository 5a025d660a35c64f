import { z } from 'zod';
import { denyApi } from '$lib/server/auth/guard';
import { apiError } from '$lib/server/http';
import * as exporter from '$lib/server/exports';
import type { RequestHandler } from './$types';

const Query = z.object({
	format: z.enum(['xlsx', 'csv']).default('xlsx'),
	table: z.enum(exporter.RUN_TABLES).default('points')
});

/** GET ?format=xlsx (run, points, deltas sheets) | csv&table=run|points|deltas — a run's points and deltas (read). */
export const GET: RequestHandler = async ({ locals, params, url }) => {
	const denied = denyApi(locals, 'read');
	if (denied) return denied;
	const q = Query.safeParse(Object.fromEntries(url.searchParams));
	if (!q.success) return apiError(400, 'invalid', 'Invalid export parameters.', q.error.issues.map((i) => ({ field: i.path.join('.'), message: i.message })));
	let data: Awaited<ReturnType<typeof exporter.runTables>>;
	try {
		data = await exporter.runTables(Number(params.id));
	} catch (err) {
		if (err instanceof exporter.ExportError) return apiError(404, err.code, err.message);
		throw err;
	}
	const base = `run-${data.runNumber}`;
	if (q.data.format === 'csv') {
		return new Response(exporter.toCsv(data.tables[q.data.table]), {
			headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${exporter.fileName(`${base}-${q.data.table}`, 'csv')}"` }
		});
	}
	const body = exporter.toXlsx(exporter.RUN_TABLES.map((t) => data.tables[t]));
	return new Response(new Uint8Array(body), { headers: { 'content-type': exporter.XLSX_TYPE, 'content-disposition': `attachment; filename="${exporter.fileName(base, 'xlsx')}"` } });
};
