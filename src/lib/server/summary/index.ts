/**
 * Campaign summary for program managers: runs done against planned, every
 * configuration with its deltas and their state, trends and repeatability,
 * the worst offenders and a short text generated from the numbers.
 *
 * One SQL statement (./queries.ts) computes a summary. The response body is
 * built as text with the large trend part spliced in unparsed (the API never
 * parses and re-serialises thousands of values) and kept in
 * summary_snapshots with a fingerprint of the data it came from; a request
 * first compares fingerprints (one cheap statement) and recomputes only when
 * the runs, reductions, predictions, configurations or campaign changed.
 * `getSummary` returns the parsed object for exports, the report page and
 * the digest.
 */
import { QueryTypes } from 'sequelize';
import { getSequelize } from '$lib/server/db';
import { DELTA_QUANTITIES, resolveTolerances, type DeltaState } from '$lib/server/correlation/quantities';
import { SNAPSHOT_IF_CHANGED_SQL, SNAPSHOT_SQL, STORE_SNAPSHOT_SQL, SUMMARY_SQL, STATE_CODES, WORST_OFFENDERS } from './queries';
import { describeSummary } from './text';

export { SNAPSHOT_SQL, SUMMARY_SQL, STATE_CODES, WORST_OFFENDERS } from './queries';
export { describeSummary } from './text';

/** The caution shown wherever these results are presented. */
export const CAUTION =
	'Predictions are preliminary engineering estimates. Flight-test and airworthiness decisions follow the organisation’s approved procedures, local regulations and licensed practice.';

import type { RunCounts, QuantityInfo, SummaryCell, SummaryConfiguration, WorstOffender, PooledRepeatability, SummaryFacts, TrendSeries, RepeatGroup, SummaryTrends, CampaignSummary } from '$lib/summary-types';
export type { RunCounts, QuantityInfo, SummaryCell, SummaryConfiguration, WorstOffender, PooledRepeatability, SummaryFacts, TrendSeries, RepeatGroup, SummaryTrends, CampaignSummary } from '$lib/summary-types';

export class SummaryError extends Error {
	constructor(public code: 'not_found', message: string) {
		super(message);
	}
}

const STATE_ORDER: DeltaState[] = ['out_of_tolerance', 'not_significant', 'within_tolerance', 'not_available'];

/* eslint-disable @typescript-eslint/no-explicit-any */
function cellOf(r: any): SummaryCell {
	const counts: Record<DeltaState, number> = {
		out_of_tolerance: Number(r.out_of_tolerance),
		not_significant: Number(r.not_significant),
		within_tolerance: Number(r.within_tolerance),
		not_available: Number(r.not_available)
	};
	let state: DeltaState = 'not_available';
	let best = 0;
	// STATE_ORDER runs from worse to better, so a tie keeps the worse state.
	for (const s of STATE_ORDER.slice(0, 3)) {
		if (counts[s] > best) {
			best = counts[s];
			state = s;
		}
	}
	return {
		quantity: r.quantity,
		runs: Number(r.n),
		mean: r.mean,
		stddev: r.stddev,
		worst: r.worst,
		worstRatio: r.worst_ratio,
		counts,
		state,
		latest: r.latest_run_number == null ? null : { value: r.latest_value, state: r.latest_state, runNumber: r.latest_run_number }
	};
}

function factsOf(raw: any): SummaryFacts {
	if (!raw.campaign) throw new SummaryError('not_found', 'No such campaign.');
	const { tolerances, sources } = resolveTolerances(raw.campaign.tolerances);
	const quantities: QuantityInfo[] = DELTA_QUANTITIES.map((q) => ({ key: q.key, label: q.label, unit: q.unit, tolerance: tolerances[q.key], toleranceSource: sources[q.key] }));
	const label = new Map(DELTA_QUANTITIES.map((q) => [q.key as string, q.label as string]));
	const byName = new Map<string, SummaryConfiguration>();
	for (const c of raw.configurations as any[]) {
		byName.set(c.name, { name: c.name, ids: c.ids.map(Number), versions: c.versions.map(Number), runs: Number(c.runs), runsWithDeltas: Number(c.runsWithDeltas), outOfTolerance: 0, worstRatio: null, deltas: {} });
	}
	for (const r of raw.cells as any[]) {
		const conf = byName.get(r.configuration_name);
		if (!conf) continue;
		const cell = cellOf(r);
		conf.deltas[r.quantity] = cell;
		conf.outOfTolerance += cell.counts.out_of_tolerance;
		if (cell.worstRatio !== null && (conf.worstRatio === null || cell.worstRatio > conf.worstRatio)) conf.worstRatio = cell.worstRatio;
	}
	// Worst first: most out-of-tolerance deltas, then the largest excess over the band, then by name.
	const configurations = [...byName.values()].sort(
		(a, b) => b.outOfTolerance - a.outOfTolerance || (b.worstRatio ?? -1) - (a.worstRatio ?? -1) || a.name.localeCompare(b.name)
	);
	const counts = raw.counts;
	const { campaign } = raw;
	const facts: SummaryFacts = {
		campaign: {
			id: Number(campaign.id),
			code: campaign.code,
			name: campaign.name,
			kind: campaign.kind,
			status: campaign.status,
			plannedRuns: campaign.plannedRuns,
			startDate: campaign.startDate,
			endDate: campaign.endDate,
			facilityName: campaign.facilityName
		},
		generatedAt: new Date().toISOString(),
		runs: {
			planned: campaign.plannedRuns,
			total: Number(counts.total),
			imported: Number(counts.imported),
			reduced: Number(counts.reduced),
			reviewed: Number(counts.reviewed),
			accepted: Number(counts.accepted),
			returned: Number(counts.returned),
			tare: Number(raw.tareRuns),
			withDeltas: Number(raw.runsWithDeltas),
			points: Number(raw.points),
			firstDate: counts.first_date,
			lastDate: counts.last_date
		},
		quantities,
		configurations,
		worstOffenders: (raw.worst as any[]).map((w) => ({ ...w, label: label.get(w.quantity) ?? w.quantity })),
		repeatability: (raw.pooled as any[]).map((p) => ({ quantity: p.quantity, groups: Number(p.groups), runs: Number(p.runs), pooledStddev: p.pooled_stddev })),
		text: [],
		caution: CAUTION
	};
	facts.text = describeSummary(facts);
	return facts;
}
/* eslint-enable @typescript-eslint/no-explicit-any */

async function compute(campaignId: number): Promise<{ facts: SummaryFacts; bulk: string }> {
	const rows = await getSequelize().query<{ facts: string; bulk: string }>(SUMMARY_SQL, { replacements: { campaignId }, type: QueryTypes.SELECT });
	return { facts: factsOf(JSON.parse(rows[0].facts)), bulk: rows[0].bulk };
}

function bodyOf(facts: SummaryFacts, bulk: string): string {
	const head = JSON.stringify(facts);
	return `${head.slice(0, -1)},"trends":${bulk}}`;
}

async function campaignExists(campaignId: number): Promise<boolean> {
	const rows = await getSequelize().query('SELECT 1 FROM campaigns WHERE id = :campaignId', { replacements: { campaignId }, type: QueryTypes.SELECT });
	return rows.length > 0;
}

/**
 * The summary as the API's JSON text: the stored snapshot when its
 * fingerprint still matches, else computed and stored. Concurrent requests
 * for a stale summary compute it once (an advisory lock per campaign).
 */
/**
 * The last body this process served per campaign, with its fingerprint: it is
 * served again only while the database reports the same fingerprint, so it is
 * exactly as fresh as the stored snapshot.
 */
const bodies = new Map<number, { fingerprint: string; body: string }>();
const HELD_CAMPAIGNS = 64;

function hold(campaignId: number, fingerprint: string, body: string): string {
	bodies.delete(campaignId);
	if (bodies.size >= HELD_CAMPAIGNS) bodies.delete(bodies.keys().next().value!);
	bodies.set(campaignId, { fingerprint, body });
	return body;
}

export async function summaryJson(campaignId: number): Promise<string> {
	const sequelize = getSequelize();
	const held = bodies.get(campaignId);
	const [hit] = await sequelize.query<{ fingerprint: string; same: boolean; body: string | null }>(SNAPSHOT_IF_CHANGED_SQL, {
		replacements: { campaignId, known: held?.fingerprint ?? '' },
		type: QueryTypes.SELECT
	});
	if (hit.same && held) return held.body;
	if (hit.body !== null) return hold(campaignId, hit.fingerprint, hit.body);
	if (!(await campaignExists(campaignId))) throw new SummaryError('not_found', 'No such campaign.');
	return sequelize.transaction(async (transaction) => {
		// 0x5355 ('SU'): our lock class, so the key never meets another module's advisory locks.
		await sequelize.query('SELECT pg_advisory_xact_lock(21333, :campaignId)', { replacements: { campaignId }, transaction });
		const [again] = await sequelize.query<{ fingerprint: string; body: string | null }>(SNAPSHOT_SQL, { replacements: { campaignId }, type: QueryTypes.SELECT, transaction });
		if (again.body !== null) return hold(campaignId, again.fingerprint, again.body);
		const rows = await sequelize.query<{ facts: string; bulk: string }>(SUMMARY_SQL, { replacements: { campaignId }, type: QueryTypes.SELECT, transaction });
		const body = bodyOf(factsOf(JSON.parse(rows[0].facts)), rows[0].bulk);
		await sequelize.query(STORE_SNAPSHOT_SQL, { replacements: { campaignId, fingerprint: again.fingerprint, body }, transaction });
		return hold(campaignId, again.fingerprint, body);
	});
}

/** The summary as an object (from the snapshot when current). */
export async function getSummary(campaignId: number): Promise<CampaignSummary> {
	return JSON.parse(await summaryJson(campaignId)) as CampaignSummary;
}

/** A freshly computed summary without the trend series (digest mail), bypassing the snapshot. */
export async function getSummaryFacts(campaignId: number): Promise<SummaryFacts> {
	return (await compute(campaignId)).facts;
}
