/**
 * A small campaign of our own for the summary, export and notification
 * tests, built the way people build one: the clean-polar fixture uploaded
 * through the import API (lift scaled per run so every upload has its own
 * bytes and its own delta), a wing configuration through the configuration
 * API, predictions through the correlation API, states through the state API.
 * User text that a spreadsheet could read as a formula is put in on purpose
 * (configuration name starting with '=', a run number starting with '@').
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { randomBytes } from 'node:crypto';
import { QueryTypes } from 'sequelize';
import { getSequelize } from '../../src/lib/server/db';
import { tokenFor } from '../support/auth';
import { baseUrl } from '../support/env';
import { testAddress } from '../support/session';

// The test server reads the client address from X-Forwarded-For (scripts/test.mjs): every request sends one.
const ADDRESS = testAddress();

export interface SummaryCampaign {
	tag: string;
	campaignId: number;
	configurationId: number;
	configurationName: string;
	runIds: number[];
	runNumbers: string[];
	tokens: Record<'test_engineer' | 'aerodynamicist' | 'program_manager' | 'admin', string>;
}

export async function call(token: string, method: string, path: string, body?: unknown): Promise<{ status: number; body: any }> {
	const res = await fetch(`${baseUrl()}/api/v1${path}`, {
		method,
		body: body === undefined ? undefined : JSON.stringify(body),
		headers: { authorization: `Bearer ${token}`, 'x-forwarded-for': ADDRESS, ...(body === undefined ? {} : { 'content-type': 'application/json' }) }
	});
	const text = await res.text();
	let parsed: unknown = text;
	try {
		parsed = JSON.parse(text);
	} catch {
		// not JSON
	}
	return { status: res.status, body: parsed };
}

/** The fixture with its lift column (index 5) scaled: same polar shape, another lift slope, other bytes. */
function scaledFixture(factor: number, tag: string): string {
	// The pitching moment (unused by the deltas) carries the tag in its last digits, so every build uploads bytes of its own.
	const jitter = (parseInt(tag, 16) % 997) * 1e-6;
	const lines = readFileSync(join(process.cwd(), 'fixtures', 'tunnel-clean-polar.csv'), 'utf8').split(/\r?\n/);
	return lines
		.map((l, i) => {
			if (i === 0 || !l.trim()) return l;
			const c = l.split(',');
			c[5] = (Number(c[5]) * factor).toFixed(5);
			c[7] = (Number(c[7]) - jitter).toFixed(6);
			return c.join(',');
		})
		.join('\n');
}

export async function upload(token: string, campaignId: number, params: Record<string, string | number>, body: string): Promise<number> {
	const sp = new URLSearchParams(Object.fromEntries(Object.entries({ name: `summary-${params.runNumber}.csv`, ...params }).map(([k, v]) => [k, String(v)])));
	const res = await fetch(`${baseUrl()}/api/v1/campaigns/${campaignId}/runs?${sp}`, { method: 'POST', body, headers: { authorization: `Bearer ${token}`, 'content-type': 'text/csv', 'x-forwarded-for': ADDRESS } });
	const json = await res.json();
	if (res.status !== 201) throw new Error(`upload failed: ${res.status} ${JSON.stringify(json).slice(0, 400)}`);
	return json.run.id as number;
}

export async function buildSummaryCampaign(): Promise<SummaryCampaign> {
	const tag = randomBytes(3).toString('hex');
	const tokens = {
		test_engineer: await tokenFor('test_engineer'),
		aerodynamicist: await tokenFor('aerodynamicist'),
		program_manager: await tokenFor('program_manager'),
		admin: await tokenFor('admin')
	};
	// Bands: ΔCL at α_ref tight (0.005) so the lift-scaled runs are out of tolerance; the rest at their defaults.
	const [c] = await getSequelize().query<{ id: number }>(
		`INSERT INTO campaigns (code, name, kind, planned_runs, status, tolerances, start_date)
		 VALUES (:code, :name, 'tunnel', 6, 'active', '{"clAtAlpha": 0.005}'::jsonb, '2026-11-02') RETURNING id`,
		{ replacements: { code: `SUM-${tag}`, name: `Summary check ${tag}` }, type: QueryTypes.SELECT }
	);
	const campaignId = Number(c.id);
	// The fixtures' model: S = 0.18 m², c = 0.15 m (fixtures/scenario.ts); a rectangular 1.2 m wing of that area.
	const configurationName = `=HYPERLINK("x") wing ${tag}`;
	const conf = await call(tokens.aerodynamicist, 'POST', '/configurations', {
		name: configurationName,
		campaignId,
		span: 1.2,
		stations: [
			{ eta: 0, chord: 0.15, twistDeg: 0, a0: 6.0, alphaZeroLiftDeg: -2 },
			{ eta: 1, chord: 0.15, twistDeg: 0, a0: 6.0, alphaZeroLiftDeg: -2 }
		],
		segments: [],
		refArea: 0.18,
		refSpan: 1.2,
		refChord: 0.15,
		estimatedCD0: 0.012
	});
	if (conf.status !== 201) throw new Error(`configuration: ${conf.status} ${JSON.stringify(conf.body)}`);
	const configurationId = conf.body.id as number;
	const runNumbers = [`S1-${tag}`, `S2-${tag}`, `@S3-${tag}`, `S4-${tag}`];
	const runIds: number[] = [];
	runIds.push(await upload(tokens.test_engineer, campaignId, { runNumber: runNumbers[0], configurationId }, scaledFixture(1.0, tag)));
	runIds.push(await upload(tokens.test_engineer, campaignId, { runNumber: runNumbers[1], configurationId }, scaledFixture(1.06, tag)));
	// A repeat of the first run, slightly different lift.
	runIds.push(await upload(tokens.test_engineer, campaignId, { runNumber: runNumbers[2], configurationId, repeatOfRunId: runIds[0] }, scaledFixture(1.003, tag)));
	// Imported, never predicted.
	runIds.push(await upload(tokens.test_engineer, campaignId, { runNumber: runNumbers[3], configurationId }, scaledFixture(0.97, tag)));
	await getSequelize().query(`UPDATE runs SET test_date = DATE '2026-11-02' + (id - :first)::int WHERE campaign_id = :campaignId`, { replacements: { first: runIds[0], campaignId } });
	for (const id of runIds.slice(0, 3)) {
		const p = await call(tokens.aerodynamicist, 'POST', `/correlation/runs/${id}/predict`, {});
		if (p.status !== 201) throw new Error(`predict ${id}: ${p.status} ${JSON.stringify(p.body).slice(0, 400)}`);
	}
	// States: S1 accepted, S2 reviewed, S3 reduced, S4 imported.
	const move = async (id: number, to: string, token = tokens.test_engineer) => {
		const r = await call(token, 'POST', `/runs/${id}/state`, { to });
		if (r.status !== 200) throw new Error(`state ${id} → ${to}: ${r.status} ${JSON.stringify(r.body)}`);
	};
	await move(runIds[0], 'reduced');
	await move(runIds[0], 'reviewed');
	await move(runIds[0], 'accepted', tokens.aerodynamicist);
	await move(runIds[1], 'reduced');
	await move(runIds[1], 'reviewed');
	await move(runIds[2], 'reduced');
	return { tag, campaignId, configurationId, configurationName, runIds, runNumbers, tokens };
}
