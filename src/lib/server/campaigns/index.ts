import { QueryTypes } from 'sequelize';
import { getModels, getSequelize } from '../db';

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
	const rows = await getSequelize().query<CampaignRow>(
		`SELECT c.id, c.code, c.name, c.kind, c.status, f.name AS facility_name, c.planned_runs,
		        c.start_date, c.end_date,
		        COUNT(r.id) FILTER (WHERE NOT COALESCE(r.is_tare, false)) AS run_count,
		        COUNT(r.id) FILTER (WHERE r.state = 'accepted') AS accepted_runs
		   FROM campaigns c
		   LEFT JOIN facilities f ON f.id = c.facility_id
		   LEFT JOIN runs r ON r.campaign_id = c.id
		  GROUP BY c.id, f.name
		  ORDER BY c.start_date DESC NULLS LAST, c.id DESC`,
		{ type: QueryTypes.SELECT }
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

/** One campaign with its facility and configurations, or null. */
export async function getCampaign(id: number): Promise<CampaignDetail | null> {
	const { Campaign, Facility, Configuration } = getModels();
	const c = await Campaign.findByPk(id);
	if (!c) return null;
	const f = c.facilityId ? await Facility.findByPk(c.facilityId) : null;
	const configs = await Configuration.findAll({ where: { campaignId: id }, order: [['name', 'ASC'], ['version', 'ASC']] });
	return {
		campaign: { id: Number(c.id), code: c.code, name: c.name, description: c.description ?? null, kind: c.kind, status: c.status, plannedRuns: c.plannedRuns ?? null, tolerances: c.tolerances ?? {}, startDate: c.startDate ?? null, endDate: c.endDate ?? null },
		facility: f ? { id: Number(f.id), name: f.name, code: f.code, kind: f.kind, testSection: f.testSection ?? null, corrections: f.corrections ?? null } : null,
		configurations: configs.map((x) => ({ id: Number(x.id), name: x.name, version: x.version, parentId: x.parentId === null || x.parentId === undefined ? null : Number(x.parentId), refArea: x.refArea ?? null, refSpan: x.refSpan ?? null, refChord: x.refChord ?? null, momentRef: x.momentRef ?? null }))
	};
}
