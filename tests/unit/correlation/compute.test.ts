import { describe, it, expect } from 'vitest';
import { computeDeltas, computePrediction, SOLVER_LINEAR, type MeasuredPoint, type PredictionInputs } from '$lib/server/correlation/compute';
import { resolveTolerances, deltaState, DEFAULT_DELTA_SETTINGS, DELTA_KEYS } from '$lib/server/correlation/quantities';
import { liftCurve } from '$lib/aero/lifting-line';
import { planformGeometry, type Wing } from '$lib/aero/planform';

const wing: Wing = { span: 1, stations: [{ eta: 0, chord: 0.16, a0: 6, alphaZeroLiftDeg: -2 }, { eta: 1, chord: 0.08, a0: 6, alphaZeroLiftDeg: -2 }] };
const alphas = [-4, -2, 0, 2, 4, 6, 8, 10, 12, 13, 14];
const area = planformGeometry(wing).area;
const inputs = (over: Partial<PredictionInputs> = {}): PredictionInputs => ({
	wing,
	alphasDeg: alphas,
	pointIdx: alphas.map((_, i) => i),
	mach: 0.1,
	reynolds: 2.5e5,
	refArea: area,
	profileDragCD0: 0.01,
	alphaRefDeg: 4,
	clRef: 0.5,
	reductionId: 1,
	warnings: [],
	...over
});

describe('computePrediction', () => {
	it('is the lifting-line solution at the stored α and Mach, re-referenced to the reference area', () => {
		const out = computePrediction(inputs({ refArea: area / 2 }), { solver: SOLVER_LINEAR });
		const lc = liftCurve(wing, alphas, { mach: 0.1 });
		expect(out.areaRatio).toBe(2);
		out.points.forEach((p, i) => expect(p.CL).toBe(lc.points[i].CL * 2));
		expect(out.liftSlopePerDeg).toBeCloseTo(lc.liftSlope * (Math.PI / 180) * 2, 14);
		expect(out.atClRef.CL).toBeCloseTo(0.5, 12);
		expect(out.CLmax).toBeNull();
	});

	it('is deterministic: the same inputs give identical outputs, and a JSON round trip changes nothing', () => {
		const a = computePrediction(inputs(), { solver: SOLVER_LINEAR });
		const b = computePrediction(JSON.parse(JSON.stringify(inputs())), { solver: SOLVER_LINEAR });
		expect(b).toEqual(a);
		expect(JSON.parse(JSON.stringify(a))).toEqual(a);
	});

	it('refuses an unknown solver by name', () => {
		expect(() => computePrediction(inputs(), { solver: 'vortex-soup' as typeof SOLVER_LINEAR })).toThrow(/unknown solver 'vortex-soup'/);
	});
});

describe('computeDeltas', () => {
	const pred = computePrediction(inputs(), { solver: SOLVER_LINEAR });
	// Measured: prediction + 0.03 in the linear part, then a stall break above 12° (lift falls off);
	// drag on the predicted polar (untwisted wing: CDi = k·CL² exactly) at the measured CL, plus 20 counts.
	const k = pred.points[8].CDi / pred.points[8].CL ** 2;
	const measured: MeasuredPoint[] = pred.points.map((p, i) => {
		const cl = p.CL + 0.03 - (p.alphaDeg > 12 ? 0.15 * (p.alphaDeg - 12) : 0);
		return {
		idx: i,
		alphaDeg: p.alphaDeg,
		CL: cl,
		CD: 0.01 + k * cl * cl + 0.002,
		uCL: 0.003,
		uCD: 0.0002,
		uAlphaDeg: 0.05
		};
	});
	const { tolerances } = resolveTolerances({});
	const d = Object.fromEntries(computeDeltas(measured, pred, DEFAULT_DELTA_SETTINGS, tolerances).map((x) => [x.quantity, x]));

	it('returns every quantity once', () => {
		expect(Object.keys(d).sort()).toEqual([...DELTA_KEYS].sort());
	});

	it('finds the offset over the linear range only (stall points trimmed)', () => {
		expect(d.clAtAlpha.value).toBeCloseTo(0.03, 9);
		expect(d.rmsCl.value).toBeCloseTo(0.03, 9);
		expect(d.cd0Counts.value).toBeCloseTo(20, 6);
		expect(Math.abs(d.e.value as number)).toBeLessThan(1e-8);
		expect(Math.abs(d.cdiCounts.value as number)).toBeLessThan(1e-6);
		// Stall reached: measured CLmax exists, the linear prediction has none.
		expect(d.clMax.details.measured).toBeGreaterThan(0);
		expect(d.clMax.value).toBeNull();
		expect(d.clMax.details.note).toMatch(/no CLmax/);
	});

	it('applies the default bands (common practice, no source) and campaign overrides, reading the generic cl/cd keys', () => {
		expect(d.cd0Counts.tolerance).toBe(10);
		expect(d.cd0Counts.outOfTolerance).toBe(true);
		const r = resolveTolerances({ cl: 0.04, cd: 0.003, rmsCl: 0.01 });
		expect(r.tolerances.clAtAlpha).toBe(0.04);
		expect(r.tolerances.cd0Counts).toBeCloseTo(30, 12);
		expect(r.tolerances.rmsCl).toBe(0.01);
		expect(r.sources.e).toBe('default');
	});

	it('states a delta by significance first, then tolerance', () => {
		expect(deltaState({ value: null, significant: null, outOfTolerance: null })).toBe('not_available');
		expect(deltaState({ value: 0.05, significant: true, outOfTolerance: true })).toBe('out_of_tolerance');
		expect(deltaState({ value: 0.05, significant: false, outOfTolerance: true })).toBe('not_significant');
		expect(deltaState({ value: 0.01, significant: true, outOfTolerance: false })).toBe('within_tolerance');
	});

	it('refuses mismatched point counts', () => {
		expect(() => computeDeltas(measured.slice(1), pred, DEFAULT_DELTA_SETTINGS, tolerances)).toThrow(/10 measured points but 11 predicted/);
	});
});
