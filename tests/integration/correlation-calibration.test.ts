/**
 * Model calibration over the API and database: runs whose measured lift is
 * the lifting line of a wing with a known a₀ scale and α_L0 shift give back
 * those parameters; each calibration is stored with its runs and time, so a
 * later calibration after more runs shows the drift; the calibrated model is
 * checked against every run of the campaign.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { randomBytes } from 'node:crypto';
import { getModels, closeSequelize } from '../../src/lib/server/db';
import { liftCurve } from '../../src/lib/aero/lifting-line';
import { calibratedWing } from '../../src/lib/aero/calibration';
import { planformGeometry, type Wing } from '../../src/lib/aero/planform';
import { signedInAs, type Client } from '../support/session';

const tag = randomBytes(3).toString('hex');
const WING: Wing = {
	span: 1.0,
	stations: [
		{ eta: 0, chord: 0.16, twistDeg: 0, a0: 6.2, alphaZeroLiftDeg: -1 },
		{ eta: 1, chord: 0.08, twistDeg: -2, a0: 6.2, alphaZeroLiftDeg: -1 }
	],
	segments: []
};
const ALPHAS = [-4, -2, 0, 2, 4, 6, 8];
let aero: Client;
let manager: Client;
let campaignId: number;
let configurationId: number;

async function acceptedRun(n: string, s: number, d: number) {
	const m = getModels();
	const run = await m.Run.create({ campaignId, configurationId, runNumber: n, kind: 'tunnel', state: 'accepted', conditions: { mach: 0.1 } });
	const red = await m.Reduction.create({ runId: run.id, version: 1, isCurrent: true });
	const lc = liftCurve(calibratedWing(WING, s, d), ALPHAS, { mach: 0.1 });
	await m.Point.bulkCreate(lc.points.map((p, i) => ({ reductionId: red.id, idx: i, alphaDeg: p.alphaDeg, cl: p.CL, cd: 0.01 + p.CDi, mach: 0.1, uncertainty: { CL: 0.003, CD: 0.0002, alphaDeg: 0.05 } })));
	return Number(run.id);
}

beforeAll(async () => {
	aero = await signedInAs('aerodynamicist');
	manager = await signedInAs('program_manager');
	const c = await getModels().Campaign.create({ code: `CAL-${tag}`, name: 'Calibration check', kind: 'tunnel', status: 'active' });
	campaignId = Number(c.id);
	const res = await aero.json('POST', '/api/v1/configurations', { name: `Calibration wing ${tag}`, campaignId, span: WING.span, stations: WING.stations, segments: [], refArea: planformGeometry(WING).area });
	expect(res.status).toBe(201);
	configurationId = (await res.json()).id;
});
afterAll(async () => {
	await closeSequelize();
});

describe('calibration through the API', () => {
	it('recovers the a0 scale and alpha_L0 shift of the measured wing from the accepted runs (1e-6)', async () => {
		await acceptedRun(`C1-${tag}`, 0.92, -0.7);
		await acceptedRun(`C2-${tag}`, 0.92, -0.7);
		expect((await manager.json('POST', `/api/v1/correlation/campaigns/${campaignId}/calibration`, { configurationId })).status).toBe(403);
		const res = await aero.json('POST', `/api/v1/correlation/campaigns/${campaignId}/calibration`, { configurationId, fitSpanEfficiency: true });
		expect(res.status).toBe(201);
		const cal = await res.json();
		expect(cal.runIds).toHaveLength(2);
		expect(cal.observations).toBe(2 * ALPHAS.length);
		expect(cal.result.a0Scale.value).toBeCloseTo(0.92, 6);
		expect(cal.result.alphaZeroLiftShiftDeg.value).toBeCloseTo(-0.7, 6);
		expect(cal.result.effectiveA0.value).toBeCloseTo(0.92 * 6.2, 5);
		// CD = 0.01 + CDi of the measured wing; the original model's CDi differs a little, so κ is near, not at, 1.
		expect(cal.result.spanEfficiencyFactor.value).toBeGreaterThan(0.8);
		expect(cal.result.spanEfficiencyFactor.value).toBeLessThan(1.25);
	});

	it('keeps each calibration with its runs and time, so the drift shows as runs arrive', async () => {
		await acceptedRun(`C3-${tag}`, 0.86, -0.4);
		const res = await aero.json('POST', `/api/v1/correlation/campaigns/${campaignId}/calibration`, { configurationId });
		expect(res.status).toBe(201);
		const hist = await (await manager.json('GET', `/api/v1/correlation/campaigns/${campaignId}/calibration`)).json();
		expect(hist.items).toHaveLength(2);
		const [first, second] = hist.items;
		expect(second.runIds).toHaveLength(3);
		expect(new Date(second.createdAt).getTime()).toBeGreaterThanOrEqual(new Date(first.createdAt).getTime());
		// The third run's lower a₀ pulls the estimate down: the drift the history is for.
		expect(second.result.a0Scale.value).toBeLessThan(first.result.a0Scale.value);
		expect(second.result.a0Scale.value).toBeGreaterThan(0.86);
	});

	it('shows the calibrated model against every run of the campaign', async () => {
		const hist = await (await aero.json('GET', `/api/v1/correlation/campaigns/${campaignId}/calibration`)).json();
		const res = await manager.json('GET', `/api/v1/correlation/calibrations/${hist.items[0].id}`);
		expect(res.status).toBe(200);
		const body = await res.json();
		expect(body.runs).toHaveLength(3);
		for (const r of body.runs.filter((x: { usedInFit: boolean }) => x.usedInFit)) {
			expect(r.rmsCalibrated).toBeLessThan(1e-8);
			expect(r.rmsOriginal).toBeGreaterThan(0.01);
		}
		const later = body.runs.find((x: { usedInFit: boolean }) => !x.usedInFit);
		expect(later.rmsCalibrated).toBeGreaterThan(1e-4);
	});

	it('refuses a calibration without usable runs, naming why', async () => {
		const c = await getModels().Campaign.create({ code: `CAL0-${tag}`, name: 'Empty', kind: 'tunnel' });
		const res = await aero.json('POST', `/api/v1/correlation/campaigns/${c.id}/calibration`, { configurationId });
		expect(res.status).toBe(409);
		expect((await res.json()).error.message).toMatch(/No reduced runs/);
		expect((await aero.json('POST', `/api/v1/correlation/campaigns/${c.id}/calibration`, {})).status).toBe(400);
	});
});
