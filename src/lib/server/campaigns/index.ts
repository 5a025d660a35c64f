import { statement } from '../db/sql';

/** A campaign as pages and the API see it. */
export interface CampaignListItem {
	id: number;
	code: string;
	name: string;
	kind: 'tunnel' | 'flight';
	status: string;
	facilityName: string | null;
	plannedRuns: number | null;
	runCount: number;
	acceptedRuns: number;
	startDate: string | null;
	endDate: string | null;
}

interface CampaignRow {
	id: string | number;
	code: string;
	name: string;
	kind: 'tunnel' | 'flight';
	status: string;
	facility_name: string | null;
	planned_runs: number | null;
	run_count: string | number;
	accepted_runs: string | number;
	start_date: string | null;
	end_date: string | null;
}

/** All campaigns, newest first, with their run counts (one query, no N+1). */
export async function listCampaigns(): Promise<CampaignListItem[]> {
	const rows = await statement<CampaignRow>(
		`SELECT c.id, c.code, c.name, c.kind, c.status, f.name AS facility_name, c.planned_runs,
		        c.start_date, c.end_date,
		        COUNT(r.id) FILTER (WHERE NOT COALESCE(r.is_tare, false)) AS run_count,
		        COUNT(r.id) FILTER (WHERE r.state = 'accepted') AS accepted_runs
		   FROM campaigns c
		   LEFT JOIN facilities f ON f.id = c.facility_id
		   LEFT JOIN runs r ON r.campaign_id = c.id
		  GROUP BY c.id, f.name
		  ORDER BY c.start_date DESC NULLS LAST, c.id DESC`
	);
	return rows.map((r) => ({
		id: Number(r.id),
		code: r.code,
		name: r.name,
		kind: r.kind,
		status: r.status,
		facilityName: r.facility_name,
		plannedRuns: r.planned_runs,
		runCount: Number(r.run_count),
		acceptedRuns: Number(r.accepted_runs),
		startDate: r.start_date,
		endDate: r.end_date
	}));
}

export interface CampaignDetail {
	campaign: { id: number; code: string; name: string; description: string | null; kind: 'tunnel' | 'flight'; status: string; plannedRuns: number | null; tolerances: Record<string, unknown>; startDate: string | null; endDate: string | null };
	facility: { id: number; name: string; code: string; kind: string; testSection: unknown; corrections: unknown } | null;
	configurations: { id: number; name: string; version: number; parentId: number | null; refArea: number | null; refSpan: number | null; refChord: number | null; momentRef: unknown }[];
}

/** One campaign with its facility and configurations, or null: one statement (it is read on every campaign page and API call). */
export async function getCampaign(id: number): Promise<CampaignDetail | null> {
	const [row] = await statement<{
		id: number;
		code: string;
		name: string;
		description: string | null;
		kind: 'tunnel' | 'flight';
		status: string;
		planned_runs: number | null;
		tolerances: Record<string, unknown> | null;
		start_date: string | null;
		end_date: string | null;
		facility: CampaignDetail['facility'];
		configurations: CampaignDetail['configurations'];
	}>(
		`SELECT c.id, c.code, c.name, c.description, c.kind, c.status, c.planned_runs, c.tolerances,
		        c.start_date::text AS start_date, c.end_date::text AS end_date,
		        (SELECT json_build_object('id', f.id, 'name', f.name, 'code', f.code, 'kind', f.kind, 'testSection', f.test_section, 'corrections', f.corrections)
		           FROM facilities f WHERE f.id = c.facility_id) AS facility,
		        (SELECT coalesce(json_agg(json_build_object('id', x.id, 'name', x.name, 'version', x.version, 'parentId', x.parent_id, 'refArea', x.ref_area,
		                                                    'refSpan', x.ref_span, 'refChord', x.ref_chord, 'momentRef', x.moment_ref) ORDER BY x.name, x.version), '[]')
		           FROM configurations x WHERE x.campaign_id = c.id) AS configurations
		   FROM campaigns c WHERE c.id = $1`,
		[id]
	);
	if (!row) return null;
	return {
		campaign: { id: Number(row.id), code: row.code, name: row.name, description: row.description ?? null, kind: row.kind, status: row.status, plannedRuns: row.planned_runs ?? null, tolerances: row.tolerances ?? {}, startDate: row.start_date, endDate: row.end_date },
		facility: row.facility ? { ...row.facility, id: Number(row.facility.id), testSection: row.facility.testSection ?? null, corrections: row.facility.corrections ?? null } : null,
		configurations: row.configurations.map((x) => ({ ...x, id: Number(x.id), parentId: x.parentId === null ? null : Number(x.parentId), refArea: x.refArea ?? null, refSpan: x.refSpan ?? null, refChord: x.refChord ?? null, momentRef: x.momentRef ?? null }))
	};
}
