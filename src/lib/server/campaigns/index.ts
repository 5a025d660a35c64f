import { QueryTypes } from 'sequelize';
import { getSequelize } from '../db';

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
