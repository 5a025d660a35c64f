/**
 * The correlation check of issue 6, end to end over real HTTP and the real
 * database: a known wing whose "measured" points are the model's own
 * prediction plus known offsets must give exactly those offsets as deltas,
 * significant or not according to the stated uncertainty, and the stored
 * prediction must be reproduced exactly by the aero core from its stored inputs.
 *
 * The synthetic runs (with their reduction and points) are inserted through
 * the models, as the import pipeline would leave them; everything a user does
 * (configuration, prediction, reading deltas) goes through the API.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { randomBytes } from 'node:crypto';
import { getModels, closeSequelize } from '../../src/lib/server/db';
import { liftCurve } from '../../src/lib/aero/lifting-line';
import { planformGeometry, type Wing } from '../../src/lib/aero/planform';
import { computePrediction } from '../../src/lib/server/correlation/compute';
import { signedInAs, type Client } from '../support/session';

const tag = randomBytes(3).toString('hex');
const MACH = 0.09;
const ALPHAS = [-4, -2, 0, 2, 4, 6, 8, 10, 12];
const CL_OFFSET = 0.02;
const CD_OFFSET = 0.0015; // 15 drag counts
const CD0_ESTIMATE = 0.012;
/** Untwisted tapered wing: its lifting-line polar is exactly parabolic (constant e), so CD0 and e offsets are exact too. */
const WING: Wing = {
	span: 1.2,
	stations: [
		{ eta: 0, chord: 0.2, twistDeg: 0, a0: 5.9, alphaZeroLiftDeg: -1.8 },
		{ eta: 1, chord: 0.1, twistDeg: 0, a0: 5.9, alphaZeroLiftDeg: -1.8 }
	],
	segments: []
};
const REF_AREA = planformGeometry(WING).area;
/** Stated expanded (k = 2) point uncertainties: small → the offset is significant, large → it is not. */
const SMALL = { CL: 0.004, CD: 0.0002, alphaDeg: 0.05 };
const LARGE = { CL: 0.08, CD: 0.005, alphaDeg: 0.5 };
const TOLERANCES = { clAtAlpha: 0.01, cd0Counts: 20, rmsCl: 0.05 };

let aero: Client;
let manager: Client;
let configurationId: number;
let campaignId: number;
const runIds: Record<'small' | 'large', number> = { small: 0, large: 0 };

async function insertRun(runNumber: string, u: typeof SMALL) {
	const m = getModels();
	const run = await m.Run.create({ campaignId, configurationId, runNumber, kind: 'tunnel', state: 'reduced', conditions: { mach: MACH, reynolds: 3e5 }, testDate: '2026-11-20' });
	const red = await m.Reduction.create({ runId: run.id, version: 1, isCurrent: true, settings: { synthetic: true } });
	const lc = liftCurve(WING, ALPHAS, { mach: MACH });
	// Untwisted: the predicted polar is CD0 + k·CL² with one k; the measured drag lies on it at the measured CL, plus the offset.
	const k = lc.points[6].CDi / lc.points[6].CL ** 2;
	await m.Point.bulkCreate(
		lc.points.map((p, i) => ({
			reductionId: red.id,
			idx: i,
			alphaDeg: p.alphaDeg,
			cl: p.CL + CL_OFFSET,
			cd: CD0_ESTIMATE + k * (p.CL + CL_OFFSET) ** 2 + CD_OFFSET,
			mach: MACH,
			reynolds: 3e5,
			uncertainty: u
		}))
	);
	return Number(run.id);
}

beforeAll(async () => {
	aero = await signedInAs('aerodynamicist');
	manager = await signedInAs('program_manager');
	const m = getModels();
	const campaign = await m.Campaign.create({ code: `CORR-${tag}`, name: 'Synthetic correlation check', kind: 'tunnel', tolerances: TOLERANCES, status: 'active' });
	campaignId = Number(campaign.id);
	const res = await aero.json('POST', '/api/v1/configurations', {
		name: `Synthetic untwisted wing ${tag}`,
		campaignId,
		span: WING.span,
		stations: WING.stations,
		segments: [],
		refArea: REF_AREA,
		refSpan: WING.span,
		refChord: 0.15,
		estimatedCD0: CD0_ESTIMATE
	});
	expect(res.status).toBe(201);
	configurationId = (await res.json()).id;
	runIds.small = await insertRun(`S-${tag}`, SMALL);
	runIds.large = await insertRun(`L-${tag}`, LARGE);
});

afterAll(async () => {
	await closeSequelize();
});

type Delta = { quantity: string; value: number | null; uncertainty: number | null; significant: boolean | null; outOfTolerance: boolean | null; state: string; tolerance: number };
const byQ = (ds: Delta[]) => Object.fromEntries(ds.map((d) => [d.quantity, d])) as Record<string, Delta>;

/** Independent first-order propagation for CL at α_ref from the linear fit (Coleman & Steele, 3rd ed., ch. 3). */
function expectedUClAtAlpha(u: typeof SMALL, slopePerDeg: number, alphaRef: number) {
	const n = ALPHAS.length;
	const xbar = ALPHAS.reduce((a, b) => a + b, 0) / n;
	const sxx = ALPHAS.reduce((t, x) => t + (x - xbar) ** 2, 0);
	const w = ALPHAS.map((x) => 1 / n + ((alphaRef - xbar) * (x - xbar)) / sxx);
	const uFromCl = Math.sqrt(w.reduce((t, wi) => t + wi * wi * u.CL * u.CL, 0));
	return Math.hypot(uFromCl, slopePerDeg * u.alphaDeg);
}

describe('predictions and deltas through the API', () => {
	it('refuses a prediction to a program manager (403) and lets them read', async () => {
		const res = await manager.json('POST', `/api/v1/correlation/runs/${runIds.small}/predict`, {});
		expect(res.status).toBe(403);
		expect((await res.json()).error.code).toBe('forbidden');
		expect((await manager.json('GET', `/api/v1/correlation/runs/${runIds.small}`)).status).toBe(200);
	});

	it('gives exactly the built-in offsets as deltas and marks significance by the stated uncertainty', async () => {
		const small = await aero.json('POST', `/api/v1/correlation/runs/${runIds.small}/predict`, {});
		expect(small.status).toBe(201);
		const s = await small.json();
		const large = await aero.json('POST', `/api/v1/correlation/runs/${runIds.large}/predict`, {});
		expect(large.status).toBe(201);
		const l = await large.json();
		const ds = byQ(s.deltas);
		const dl = byQ(l.deltas);
		const slope = s.prediction.outputs.liftSlopePerDeg;
		// Offsets are exact; the tolerances below are round-off of the fits (stated per quantity).
		expect(ds.clAtAlpha.value).toBeCloseTo(CL_OFFSET, 9);
		expect(ds.rmsCl.value).toBeCloseTo(CL_OFFSET, 9);
		expect(ds.alphaZeroLiftDeg.value).toBeCloseTo(-CL_OFFSET / slope, 8);
		expect(Math.abs(ds.clAlphaPct.value!)).toBeLessThan(1e-7);
		expect(ds.cd0Counts.value).toBeCloseTo(CD_OFFSET * 1e4, 6);
		expect(Math.abs(ds.e.value!)).toBeLessThan(1e-8);
		expect(Math.abs(ds.cdiCounts.value!)).toBeLessThan(1e-6);
		// Stall not reached in the points, and the linear solver has no CLmax.
		expect(ds.clMax.value).toBeNull();
		expect(ds.clMax.state).toBe('not_available');
		// The same deltas for the second run: only the uncertainty differs.
		expect(dl.clAtAlpha.value).toBeCloseTo(CL_OFFSET, 9);

		const uSmall = expectedUClAtAlpha(SMALL, slope, 4);
		const uLarge = expectedUClAtAlpha(LARGE, slope, 4);
		expect(ds.clAtAlpha.uncertainty! / uSmall).toBeCloseTo(1, 6);
		expect(dl.clAtAlpha.uncertainty! / uLarge).toBeCloseTo(1, 6);
		expect(uSmall).toBeLessThan(CL_OFFSET);
		expect(uLarge).toBeGreaterThan(CL_OFFSET);
		expect(ds.clAtAlpha.significant).toBe(true);
		expect(dl.clAtAlpha.significant).toBe(false);
		// Tolerance band 0.01 < 0.02: out of tolerance in both; the state says whether the data can tell.
		expect(ds.clAtAlpha.outOfTolerance).toBe(true);
		expect(ds.clAtAlpha.state).toBe('out_of_tolerance');
		expect(dl.clAtAlpha.state).toBe('not_significant');
		// 15 counts inside the 20-count band: significant (U ≈ 0.9 counts) and within tolerance.
		expect(ds.cd0Counts.tolerance).toBe(20);
		expect(ds.cd0Counts.state).toBe('within_tolerance');
		// Default band where the campaign sets none (common practice, no source).
		expect(ds.clAlphaPct.tolerance).toBe(5);
	});

	it('stores inputs that reproduce the stored outputs exactly with the aero core', async () => {
		const cur = await (await aero.json('GET', `/api/v1/correlation/runs/${runIds.small}`)).json();
		const res = await aero.json('GET', `/api/v1/correlation/predictions/${cur.prediction.id}`);
		expect(res.status).toBe(200);
		const p = await res.json();
		expect(p.configurationId).toBe(configurationId);
		expect(p.configurationVersion).toBe(1);
		expect(p.inputs.alphasDeg).toEqual(ALPHAS);
		expect(p.inputs.mach).toBe(MACH);
		// Re-running the stored inputs gives the stored outputs, bit for bit.
		expect(computePrediction(p.inputs, p.settings)).toEqual(p.outputs);
		// And the stored CL are the lifting-line solver's for the stored wing.
		const lc = liftCurve(p.inputs.wing, p.inputs.alphasDeg, { mach: p.inputs.mach });
		expect(p.outputs.areaRatio).toBe(1);
		p.outputs.points.forEach((pt: { CL: number; CDi: number }, i: number) => {
			expect(pt.CL).toBe(lc.points[i].CL);
			expect(pt.CDi).toBe(lc.points[i].CDi);
		});
	});

	it('keeps the old prediction when the configuration gets a new version, and predicts the new one as a new record', async () => {
		const cfg = await (await aero.json('GET', `/api/v1/configurations/${configurationId}`)).json();
		const edited = { ...cfg, name: cfg.name, span: cfg.geometry.span, stations: cfg.geometry.stations.map((s: object, i: number) => (i === 1 ? { ...s, twistDeg: -3 } : s)), segments: [], estimatedCD0: CD0_ESTIMATE };
		const saved = await aero.json('POST', `/api/v1/configurations/${configurationId}/versions`, edited);
		expect(saved.status).toBe(201);
		const v2 = await saved.json();
		expect(v2.version).toBe(2);
		const before = await (await aero.json('GET', `/api/v1/correlation/runs/${runIds.small}`)).json();
		expect(before.stale.join(' ')).toMatch(/version 2 is newer/);
		const res = await aero.json('POST', `/api/v1/correlation/runs/${runIds.small}/predict`, { configurationId: v2.id });
		expect(res.status).toBe(201);
		const after = await res.json();
		expect(after.prediction.configurationVersion).toBe(2);
		const list = await (await aero.json('GET', `/api/v1/correlation/runs/${runIds.small}/predictions`)).json();
		expect(list.items).toHaveLength(2);
		expect(list.items.filter((x: { isCurrent: boolean }) => x.isCurrent)).toHaveLength(1);
		expect(list.items[1].configurationVersion).toBe(1);
		// The old prediction and its deltas are still readable.
		const old = await (await aero.json('GET', `/api/v1/correlation/predictions/${list.items[1].id}`)).json();
		expect(byQ(old.deltas).clAtAlpha.value).toBeCloseTo(CL_OFFSET, 9);
		// Washout lowers the predicted lift, so the measured-minus-predicted CL grows.
		expect(byQ(after.deltas).clAtAlpha.value).toBeGreaterThan(CL_OFFSET);
	});

	it('lists the campaign’s current deltas and a per-configuration summary in one call', async () => {
		const res = await manager.json('GET', `/api/v1/correlation/campaigns/${campaignId}/deltas`);
		expect(res.status).toBe(200);
		const body = await res.json();
		expect(body.items).toHaveLength(2 * 8); // two runs × eight quantities, current only
		const cl = body.summary.filter((r: { quantity: string }) => r.quantity === 'clAtAlpha');
		expect(cl.map((r: { runs: number }) => r.runs).reduce((a: number, b: number) => a + b, 0)).toBe(2);
		expect(body.quantities.map((q: { key: string }) => q.key)).toContain('rmsCl');
	});

	it('answers a run without a reduction with 409 not_ready and an unknown run with 404', async () => {
		const m = getModels();
		const bare = await m.Run.create({ campaignId, configurationId, runNumber: `N-${tag}`, kind: 'tunnel' });
		const res = await aero.json('POST', `/api/v1/correlation/runs/${bare.id}/predict`, {});
		expect(res.status).toBe(409);
		expect((await res.json()).error.message).toMatch(/no current reduction/);
		expect((await aero.json('GET', '/api/v1/correlation/runs/999999999')).status).toBe(404);
	});
});
