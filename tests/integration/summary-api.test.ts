/**
 * GET /api/v1/campaigns/{id}/summary over real HTTP against the real
 * database: every number is checked against a direct SQL count or the stored
 * deltas of the campaign built in summary-campaign.ts (fixture uploads,
 * predictions and state changes through the API).
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { QueryTypes } from 'sequelize';
import { getSequelize, closeSequelize } from '../../src/lib/server/db';
import { buildSummaryCampaign, call, type SummaryCampaign } from './summary-campaign';
import { baseUrl } from '../support/env';

let C: SummaryCampaign;
let S: any;

const q = <T extends object>(sql: string, replacements: Record<string, unknown>) => getSequelize().query<T>(sql, { replacements, type: QueryTypes.SELECT });

beforeAll(async () => {
	C = await buildSummaryCampaign();
	const r = await call(C.tokens.program_manager, 'GET', `/campaigns/${C.campaignId}/summary`);
	expect(r.status, JSON.stringify(r.body).slice(0, 300)).toBe(200);
	S = r.body;
});

afterAll(async () => {
	await closeSequelize();
});

describe('campaign summary API', () => {
	it('answers 401 without credentials and 404 for an unknown campaign', async () => {
		const anon = await fetch(`${baseUrl()}/api/v1/campaigns/${C.campaignId}/summary`);
		expect(anon.status).toBe(401);
		const missing = await call(C.tokens.program_manager, 'GET', '/campaigns/987654321/summary');
		expect(missing.status).toBe(404);
		expect(missing.body.error.code).toBe('not_found');
	});

	it('counts runs by state as the runs table does', async () => {
		const rows = await q<{ state: string; n: number }>('SELECT state, count(*)::int AS n FROM runs WHERE campaign_id = :id AND NOT is_tare GROUP BY state', { id: C.campaignId });
		const by = Object.fromEntries(rows.map((r) => [r.state, r.n]));
		expect(S.runs).toMatchObject({ planned: 6, total: 4, imported: by.imported ?? 0, reduced: by.reduced ?? 0, reviewed: by.reviewed ?? 0, accepted: by.accepted ?? 0, returned: 0, withDeltas: 3 });
		expect([S.runs.accepted, S.runs.reviewed, S.runs.reduced, S.runs.imported]).toEqual([1, 1, 1, 1]);
		const [pts] = await q<{ n: number }>(
			'SELECT count(*)::int AS n FROM points p JOIN reductions rd ON rd.id = p.reduction_id AND rd.is_current JOIN runs r ON r.id = rd.run_id WHERE r.campaign_id = :id AND NOT p.excluded',
			{ id: C.campaignId }
		);
		expect(S.runs.points).toBe(pts.n);
		expect(S.runs.points).toBe(4 * 21); // 21 points per fixture file (fixtures/README.md)
	});

	it('lists the configuration with each delta, its counts by state and its mean, as stored', async () => {
		const conf = S.configurations.find((c: any) => c.name === C.configurationName);
		expect(conf).toBeDefined();
		expect(conf.runs).toBe(4);
		expect(conf.runsWithDeltas).toBe(3);
		const stored = await q<{ quantity: string; value: number | null; state: string; run_id: number }>(
			`SELECT quantity, value, run_id, CASE WHEN value IS NULL OR significant IS NULL THEN 'not_available' WHEN significant AND out_of_tolerance THEN 'out_of_tolerance'
			   WHEN NOT significant THEN 'not_significant' ELSE 'within_tolerance' END AS state
			 FROM deltas WHERE is_current AND run_id IN (:ids)`,
			{ ids: C.runIds }
		);
		expect(stored.length).toBeGreaterThanOrEqual(3 * 8);
		for (const quantity of new Set(stored.map((d) => d.quantity))) {
			const ds = stored.filter((d) => d.quantity === quantity);
			const cell = conf.deltas[quantity];
			expect(cell.runs).toBe(ds.length);
			for (const st of ['within_tolerance', 'out_of_tolerance', 'not_significant', 'not_available']) {
				expect(cell.counts[st], `${quantity} ${st}`).toBe(ds.filter((d) => d.state === st).length);
			}
			const vals = ds.map((d) => d.value).filter((v): v is number => v !== null);
			if (vals.length) expect(cell.mean).toBeCloseTo(vals.reduce((a, b) => a + b, 0) / vals.length, 12);
			else expect(cell.mean).toBeNull();
		}
		// The band of ΔCL at α_ref is the campaign's 0.005; the others are defaults.
		expect(S.quantities.find((x: any) => x.key === 'clAtAlpha')).toMatchObject({ tolerance: 0.005, toleranceSource: 'campaign' });
		expect(S.quantities.find((x: any) => x.key === 'cd0Counts').toleranceSource).toBe('default');
	});

	it('puts the 6 % lift run first among the worst offenders, sorted by excess over the band', async () => {
		expect(S.worstOffenders.length).toBeGreaterThan(0);
		const ratios = S.worstOffenders.map((w: any) => w.ratio);
		expect([...ratios].sort((a: number, b: number) => b - a)).toEqual(ratios);
		for (const w of S.worstOffenders) expect(Math.abs(w.value) / w.tolerance).toBeCloseTo(w.ratio, 12);
		const cl = S.worstOffenders.filter((w: any) => w.quantity === 'clAtAlpha');
		expect(cl[0].runNumber).toBe(C.runNumbers[1]);
	});

	it('gives the trend series per run in run order, equal to the stored deltas (rounded to 1e-6)', async () => {
		const series = S.trends.series.find((s: any) => s.configurationName === C.configurationName && s.quantity === 'clAtAlpha');
		expect(series.runId).toEqual(C.runIds.slice(0, 3));
		const stored = await q<{ run_id: number; value: number }>(`SELECT run_id, value FROM deltas WHERE is_current AND quantity = 'clAtAlpha' AND run_id IN (:ids) ORDER BY run_id`, { ids: C.runIds });
		stored.forEach((d, i) => expect(Math.abs(series.value[i] - d.value)).toBeLessThanOrEqual(5e-7));
		expect(S.trends.runs.id).toEqual(C.runIds);
		expect(S.trends.runs.seq).toEqual([1, 2, 3, 4]);
		expect(S.trends.runs.repeatOf[2]).toBe(C.runIds[0]);
		const states = series.state.map((k: number) => S.trends.stateCodes[k]);
		const storedStates = await q<{ state: string }>(
			`SELECT CASE WHEN value IS NULL OR significant IS NULL THEN 'not_available' WHEN significant AND out_of_tolerance THEN 'out_of_tolerance'
			   WHEN NOT significant THEN 'not_significant' ELSE 'within_tolerance' END AS state
			 FROM deltas WHERE is_current AND quantity = 'clAtAlpha' AND run_id IN (:ids) ORDER BY run_id`,
			{ ids: C.runIds }
		);
		expect(states).toEqual(storedStates.map((x) => x.state));
		expect(states[1]).toBe('out_of_tolerance');
	});

	it('groups the repeat run with its original for repeatability (sample standard deviation)', async () => {
		const g = S.trends.repeatGroups.find((x: any) => x.quantity === 'clAtAlpha' && x.configurationName === C.configurationName);
		expect(g.groupRunId).toBe(C.runIds[0]);
		expect(g.runId).toEqual([C.runIds[0], C.runIds[2]]);
		const [a, b] = g.value;
		// Two values: s = |a − b| / √2.
		expect(g.stddev).toBeCloseTo(Math.abs(a - b) / Math.SQRT2, 12);
		const pooled = S.repeatability.find((p: any) => p.quantity === 'clAtAlpha');
		expect(pooled.pooledStddev).toBeCloseTo(g.stddev, 12);
	});

	it('writes a text from the numbers and carries the caution', () => {
		expect(S.text[0]).toBe('4 runs of 6 planned are in the database (1 accepted, 1 reviewed, 1 reduced and 1 imported only).');
		expect(S.text.join(' ')).toContain(`run ${C.runNumbers[1]}`);
		expect(S.caution).toMatch(/preliminary engineering estimates/);
	});

	it('serves the stored snapshot while nothing changed, and recomputes after a state change', async () => {
		const again = await call(C.tokens.test_engineer, 'GET', `/campaigns/${C.campaignId}/summary`);
		expect(again.body.generatedAt).toBe(S.generatedAt);
		const moved = await call(C.tokens.test_engineer, 'POST', `/runs/${C.runIds[3]}/state`, { to: 'reduced' });
		expect(moved.status).toBe(200);
		const after = await call(C.tokens.test_engineer, 'GET', `/campaigns/${C.campaignId}/summary`);
		expect(after.body.generatedAt).not.toBe(S.generatedAt);
		expect(after.body.runs.imported).toBe(0);
		expect(after.body.runs.reduced).toBe(2);
	});
});
