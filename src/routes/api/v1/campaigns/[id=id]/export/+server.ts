import { z } from 'zod';
import { denyApi } from '$lib/server/auth/guard';
import { apiError } from '$lib/server/http';
import * as exporter from '$lib/server/exports';
import type { RequestHandler } from './$types';

const Query = z.object({
	format: z.enum(['xlsx', 'csv']).default('xlsx'),
	table: z.enum(exporter.CAMPAIGN_TABLES).default('deltas')
});

/** GET ?format=xlsx (every table, one sheet each) | csv&table=summary|configurations|deltas|worst|runs — the campaign summary export (read). */
export const GET: RequestHandler = async ({ locals, params, url }) => {
	const denied = denyApi(locals, 'read');
	if (denied) return denied;
	const q = Query.safeParse(Object.fromEntries(url.searchParams));
	if (!q.success) return apiError(400, 'invalid', 'Invalid export parameters.', q.error.issues.map((i) => ({ field: i.path.join('.'), message: i.message })));
	let data: Awaited<ReturnType<typeof exporter.campaignTables>>;
	try {
		data = await exporter.campaignTables(Number(params.id));
	} catch (err) {
		if (err instanceof exporter.ExportError) return apiError(404, err.code, err.message);
		throw err;
	}
	const base = `${data.code}-summary`;
	if (q.data.format === 'csv') {
		return new Response(exporter.toCsv(data.tables[q.data.table]), {
			headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${exporter.fileName(`${base}-${q.data.table}`, 'csv')}"` }
		});
	}
	const body = exporter.toXlsx(exporter.CAMPAIGN_TABLES.map((t) => data.tables[t]));
	return new Response(new Uint8Array(body), { headers: { 'content-type': exporter.XLSX_TYPE, 'content-disposition': `attachment; filename="${exporter.fileName(base, 'xlsx')}"` } });
};
