/**
 * Section cl(α) tables and flap segments end to end over real HTTP and the
 * real database: configurations carry tables (shared by name or per
 * station), predictions switch to the nonlinear lifting line when tables
 * exist, and the check of issue 6 holds at the correlation level: below
 * stall, with a linear table, the nonlinear prediction equals the linear one
 * to 1e-4 in CL (Anderson, Fundamentals of Aerodynamics, ch. 5: the
 * nonlinear method reduces to Prandtl's for linear sections). With stalling
 * tables ΔCLmax becomes available.
 *
 * Synthetic runs are inserted through the models, as the import pipeline
 * would leave them; configurations and predictions go through the API.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { randomBytes } from 'node:crypto';
import { getModels, closeSequelize } from '../../src/lib/server/db';
import { liftCurve } from '../../src/lib/aero/lifting-line';
import { planformGeometry, type Wing } from '../../src/lib/aero/planform';
import { computePrediction, SOLVER_NONLINEAR } from '../../src/lib/server/correlation/compute';
import { signedInAs, type Client } from '../support/session';

const tag = randomBytes(3).toString('hex');
const MACH = 0.08;
const A0 = 5.9;
const AL0 = -1.8;
const RAD = Math.PI / 180;
const CL_OFFSET = 0.02;
const range = (a: number, b: number) => Array.from({ length: b - a + 1 }, (_, i) => a + i);
const WING: Wing = {
	span: 1.2,
	stations: [
		{ eta: 0, chord: 0.2, twistDeg: 0, a0: A0, alphaZeroLiftDeg: AL0 },
		{ eta: 1, chord: 0.1, twistDeg: 0, a0: A0, alphaZeroLiftDeg: AL0 }
	],
	segments: []
};
const REF_AREA = planformGeometry(WING).area;
const TABLE_ALPHA = range(-20, 30);
const LINEAR_CL = TABLE_ALPHA.map((a) => A0 * (a - AL0) * RAD);
/** Invented demo section: straight to 10°, then rounding over to a peak at 14° and falling. */
const STALL_CL = TABLE_ALPHA.map((a) => (a <= 10 ? A0 * (a - AL0) * RAD : A0 * RAD * (10 - AL0 + (a - 10) - (a - 10) ** 2 / 8)));
const U = { CL: 0.004, CD: 0.0002, alphaDeg: 0.05 };

let aero: Client;
let campaignId: number;

async function createConfiguration(name: string, extra: Record<string, unknown>) {
	const res = await aero.json('POST', '/api/v1/configurations', {
		name: `${name} ${tag}`,
		campaignId,
		span: WING.span,
		stations: WING.stations,
		segments: [],
		refArea: REF_AREA,
		refSpan: WING.span,
		refChord: 0.15,
		...extra
	});
	expect(res.status, await res.clone().text()).toBe(201);
	return (await res.json()) as { id: number; geometry: Record<string, any> };
}

async function insertRun(configurationId: number, runNumber: string, points: { alphaDeg: number; CL: number }[]) {
	const m = getModels();
	const run = await m.Run.create({ campaignId, configurationId, runNumber, kind: 'tunnel', state: 'reduced', conditions: { mach: MACH, reynolds: 3e5 }, testDate: '2026-11-21' });
	const red = await m.Reduction.create({ runId: run.id, version: 1, isCurrent: true, settings: { synthetic: true } });
	await m.Point.bulkCreate(points.map((p, i) => ({ reductionId: red.id, idx: i, alphaDeg: p.alphaDeg, cl: p.CL, cd: null, mach: MACH, reynolds: 3e5, uncertainty: U })));
	return Number(run.id);
}

beforeAll(async () => {
	aero = await signedInAs('aerodynamicist');
	const campaign = await getModels().Campaign.create({ code: `NLL-${tag}`, name: 'Section table check', kind: 'tunnel', tolerances: {}, status: 'active' });
	campaignId = Number(campaign.id);
});

afterAll(async () => {
	await closeSequelize();
});

type Delta = { quantity: string; value: number | null; state: string; details: { note?: string } };
const byQ = (ds: Delta[]) => Object.fromEntries(ds.map((d) => [d.quantity, d])) as Record<string, Delta>;

describe('section tables in configurations', () => {
	it('stores a table shared by name by several stations and a table of a station’s own', async () => {
		const cfg = await createConfiguration('Shared table wing', {
			sectionTables: [{ name: 'demo section', alphaDeg: TABLE_ALPHA, cl: LINEAR_CL, source: 'invented for the test' }],
			stations: [{ ...WING.stations[0], sectionTable: 'demo section' }, { ...WING.stations[1], sectionTable: { alphaDeg: [-10, 0, 10], cl: [-0.8, 0.2, 1.2] } }]
		});
		expect(cfg.geometry.sectionTables[0].name).toBe('demo section');
		expect(cfg.geometry.stations[0].sectionTable).toBe('demo section');
		expect(cfg.geometry.stations[1].sectionTable.cl).toEqual([-0.8, 0.2, 1.2]);
	});

	it.each([
		['a station names a table that does not exist', { stations: [{ ...WING.stations[0], sectionTable: 'nowhere' }, WING.stations[1]] }, 'stations[0].sectionTable', /no section table named “nowhere”/],
		['α does not increase', { sectionTables: [{ name: 't', alphaDeg: [0, 5, 5], cl: [0, 0.5, 0.6] }] }, 'sectionTables.0.alphaDeg.2', /alphaDeg must increase \(row 2: 5 after 5\)/],
		['cl and α lengths differ', { sectionTables: [{ name: 't', alphaDeg: [0, 5, 10], cl: [0, 0.5] }] }, 'sectionTables.0.cl', /cl has 2 values but alphaDeg has 3/],
		['two tables share a name', { sectionTables: [{ name: 't', alphaDeg: [0, 5], cl: [0, 0.5] }, { name: 't', alphaDeg: [0, 5], cl: [0, 0.5] }] }, 'sectionTables.1.name', /two section tables are named “t”/]
	])('refuses a configuration where %s (400, the field named)', async (_what, extra, field, message) => {
		const res = await aero.json('POST', '/api/v1/configurations', { name: `Bad table ${tag} ${randomBytes(2).toString('hex')}`, span: WING.span, stations: WING.stations, segments: [], ...extra });
		expect(res.status).toBe(400);
		const body = await res.json();
		const d = body.error.details.find((x: { field?: string }) => x.field === field);
		expect(d, JSON.stringify(body.error.details)).toBeTruthy();
		expect(d.message).toMatch(message);
	});
});

describe('predictions with section tables', () => {
	it('uses the nonlinear solver when tables exist; with a linear table it equals the linear prediction to 1e-4 in CL', async () => {
		const cfg = await createConfiguration('Linear table wing', {
			sectionTables: [{ name: 'linear', alphaDeg: TABLE_ALPHA, cl: LINEAR_CL }],
			stations: WING.stations.map((s) => ({ ...s, sectionTable: 'linear' }))
		});
		const alphas = range(-4, 10);
		const lc = liftCurve(WING, alphas, { mach: MACH });
		const runId = await insertRun(cfg.id, `NL-${tag}`, lc.points.map((p) => ({ alphaDeg: p.alphaDeg, CL: p.CL + CL_OFFSET })));
		const res = await aero.json('POST', `/api/v1/correlation/runs/${runId}/predict`, {});
		expect(res.status, await res.clone().text()).toBe(201);
		const body = await res.json();
		expect(body.prediction.solver).toBe(SOLVER_NONLINEAR);
		body.prediction.outputs.points.forEach((p: { CL: number }, i: number) => expect(Math.abs(p.CL - lc.points[i].CL)).toBeLessThan(1e-4));
		const d = byQ(body.deltas);
		expect(Math.abs(d.clAtAlpha.value! - CL_OFFSET)).toBeLessThan(1e-4);
		expect(Math.abs(d.rmsCl.value! - CL_OFFSET)).toBeLessThan(1e-4);
		// A straight table never stalls: ΔCLmax stays unavailable, and says why.
		expect(d.clMax.state).toBe('not_available');
		// The stored inputs reproduce the stored outputs exactly.
		const stored = await (await aero.json('GET', `/api/v1/correlation/predictions/${body.prediction.id}`)).json();
		expect(stored.inputs.sections).toHaveLength(2);
		expect(computePrediction(stored.inputs, stored.settings)).toEqual(stored.outputs);
		// The linear solver can still be asked for by name.
		const lin = await aero.json('POST', `/api/v1/correlation/runs/${runId}/predict`, { solver: { solver: 'lifting-line-glauert' } });
		expect(lin.status).toBe(201);
		const linBody = await lin.json();
		linBody.prediction.outputs.points.forEach((p: { CL: number }, i: number) => expect(Math.abs(p.CL - body.prediction.outputs.points[i].CL)).toBeLessThan(1e-4));
	});

	it('makes ΔCLmax available when the tables stall', async () => {
		const cfg = await createConfiguration('Stalling table wing', {
			stations: WING.stations.map((s) => ({ ...s, sectionTable: { alphaDeg: TABLE_ALPHA, cl: STALL_CL } }))
		});
		// "Measured": the model's own nonlinear prediction through stall plus a known offset.
		const alphas = range(-4, 20);
		const sections = WING.stations.map((s) => ({ eta: s.eta, alphaDeg: TABLE_ALPHA, cl: STALL_CL }));
		const own = computePrediction(
			{ wing: WING, alphasDeg: alphas, pointIdx: alphas.map((_, i) => i), mach: MACH, reynolds: 3e5, refArea: REF_AREA, profileDragCD0: null, alphaRefDeg: 4, clRef: 0.5, reductionId: 0, warnings: [], sections },
			{ solver: SOLVER_NONLINEAR }
		);
		expect(own.CLmax).not.toBeNull();
		const runId = await insertRun(cfg.id, `NS-${tag}`, own.points.map((p) => ({ alphaDeg: p.alphaDeg, CL: p.CL + CL_OFFSET })));
		const res = await aero.json('POST', `/api/v1/correlation/runs/${runId}/predict`, {});
		expect(res.status, await res.clone().text()).toBe(201);
		const body = await res.json();
		expect(body.prediction.outputs.CLmax).toBeCloseTo(own.CLmax!, 9);
		const d = byQ(body.deltas);
		expect(d.clMax.value).not.toBeNull();
		// The measured peak is the largest sampled point (1° steps), the predicted one a parabola through the sweep's peak.
		expect(Math.abs(d.clMax.value! - CL_OFFSET)).toBeLessThan(0.01);
		expect(d.clMax.state).not.toBe('not_available');
		expect(Math.abs(d.clAtAlpha.value! - CL_OFFSET)).toBeLessThan(1e-4);
	});

	it('turns a flap segment given as chord ratio and deflection into Δα_L0 = −τ·δf', async () => {
		const cfg = await createConfiguration('Flap by chord ratio wing', {
			segments: [{ name: 'inboard flap', kind: 'flap', etaStart: 0.1, etaEnd: 0.6, deflectionDeg: 10, chordFraction: 0.3 }]
		});
		const alphas = range(-4, 8);
		const runId = await insertRun(cfg.id, `NF-${tag}`, alphas.map((a) => ({ alphaDeg: a, CL: 0.3 + 0.07 * a })));
		const res = await aero.json('POST', `/api/v1/correlation/runs/${runId}/predict`, {});
		expect(res.status).toBe(201);
		const body = await res.json();
		// Thin-airfoil closed form for cf/c = 0.3 (Glauert): cos θf = 1 − 2·0.3, τ = (θf + sin θf)/π.
		const th = Math.acos(0.4);
		const tau = (th + Math.sin(th)) / Math.PI;
		expect(body.prediction.inputs.wing.segments[0].deltaAlphaZeroLiftDeg).toBeCloseTo(-10 * tau, 12);
		expect(body.prediction.outputs.warnings.join(' ')).toMatch(/thin-airfoil flap effectiveness/);
		// The flap lowers α_L0 of the wing compared with the clean wing.
		expect(body.prediction.outputs.alphaZeroLiftDeg).toBeLessThan(AL0 - 1);
	});
});

describe('an imported run with the seeded configurations', () => {
	it('predicts a run imported through the API with the clean wing and with the flap-15 wing (Δα_L0 from cf/c and δf)', async () => {
		const { readFileSync } = await import('node:fs');
		const { join } = await import('node:path');
		const engineer = await signedInAs('test_engineer');
		const list = await (await engineer.json('GET', '/api/v1/campaigns')).json();
		const campaign = list.items.find((c: { code: string }) => c.code === 'ET1-WT-01');
		const detail = await (await engineer.json('GET', `/api/v1/campaigns/${campaign.id}`)).json();
		const fixture = readFileSync(join(process.cwd(), 'fixtures', 'tunnel-clean-polar.csv'));
		for (const name of ['ET-1 model clean wing', 'ET-1 model flap 15']) {
			const cfg = detail.configurations.filter((c: { name: string }) => c.name === name).sort((a: { version: number }, b: { version: number }) => b.version - a.version)[0];
			const body = Buffer.concat([Buffer.from(`Note,correlation check ${name} ${tag}\n`), fixture]);
			const q = new URLSearchParams({ name: 'clean.csv', kind: 'tunnel', runNumber: `NI-${name.length}-${tag}`, configurationId: String(cfg.id) });
			const up = await engineer.request('POST', `/api/v1/campaigns/${campaign.id}/runs?${q}`, { body, headers: { 'content-type': 'text/csv', accept: 'application/json' } });
			expect(up.status, await up.clone().text()).toBe(201);
			const runId = (await up.json()).run.id;
			const res = await aero.json('POST', `/api/v1/correlation/runs/${runId}/predict`, {});
			expect(res.status, await res.clone().text()).toBe(201);
			const p = (await res.json()).prediction;
			expect(p.solver).toBe('lifting-line-glauert');
			expect(p.outputs.points).toHaveLength(21);
		}
	});
});

describe('requests without a forwarded client address (a browser straight at the server)', () => {
	it('creates a configuration and predicts without the X-Forwarded-For header the test server is told to read (no 500)', async () => {
		const { baseUrl } = await import('../support/env');
		const headers = { cookie: [...aero.cookies].map(([k, v]) => `${k}=${v}`).join('; '), 'content-type': 'application/json', accept: 'application/json' };
		const res = await fetch(new URL('/api/v1/configurations', baseUrl()), {
			method: 'POST',
			headers,
			body: JSON.stringify({ name: `No forwarded address ${tag}`, campaignId, span: WING.span, stations: WING.stations, segments: [], refArea: REF_AREA })
		});
		expect(res.status, await res.clone().text()).toBe(201);
		const cfg = await res.json();
		const runId = await insertRun(cfg.id, `NX-${tag}`, range(-4, 8).map((a) => ({ alphaDeg: a, CL: 0.3 + 0.07 * a })));
		const pred = await fetch(new URL(`/api/v1/correlation/runs/${runId}/predict`, baseUrl()), { method: 'POST', headers, body: '{}' });
		expect(pred.status, await pred.clone().text()).toBe(201);
	});
});
