/**
 * Predictions with section cl(α) tables: the nonlinear lifting line
 * (Anderson, Fundamentals of Aerodynamics, ch. 5, numerical nonlinear
 * lifting-line method) must reduce to the linear Glauert solution when the
 * tables are straight lines (check stated in issue 6: equal to 1e-4 in CL
 * below stall), and must give a CLmax, hence a ΔCLmax, when the tables stall.
 */
import { describe, it, expect } from 'vitest';
import { computeDeltas, computePrediction, SOLVER_LINEAR, SOLVER_NONLINEAR, type MeasuredPoint, type PredictionInputs } from '$lib/server/correlation/compute';
import { DEFAULT_DELTA_SETTINGS, resolveTolerances } from '$lib/server/correlation/quantities';
import { sectionTablesOf, toWing, type StoredGeometry } from '$lib/server/configurations';
import { planformGeometry, type Wing } from '$lib/aero/planform';
import type { SectionTable } from '$lib/aero/nonlinear-lifting-line';

const A0 = 6;
const AL0 = -2;
const RAD = Math.PI / 180;
const wing: Wing = { span: 1, stations: [{ eta: 0, chord: 0.16, a0: A0, alphaZeroLiftDeg: AL0 }, { eta: 1, chord: 0.08, a0: A0, alphaZeroLiftDeg: AL0 }] };
const area = planformGeometry(wing).area;
const range = (a: number, b: number, step = 1) => Array.from({ length: Math.round((b - a) / step) + 1 }, (_, i) => a + i * step);

/** cl = a₀(α − α_L0) sampled every degree: a straight line (pchip reproduces it exactly). */
const linearTable = (eta: number): SectionTable => {
	const alphaDeg = range(-20, 30);
	return { eta, alphaDeg, cl: alphaDeg.map((a) => A0 * (a - AL0) * RAD) };
};
/** Straight to 10°, then a smooth roll-over to a peak at 14° and a fall (an invented demo section). */
const stallTable = (eta: number): SectionTable => {
	const alphaDeg = range(-20, 30);
	return {
		eta,
		alphaDeg,
		cl: alphaDeg.map((a) => (a <= 10 ? A0 * (a - AL0) * RAD : A0 * RAD * (10 - AL0 + (a - 10) - (a - 10) ** 2 / 8)))
	};
};

const alphas = [-4, -2, 0, 2, 4, 6, 8];
const inputs = (sections: SectionTable[] | null, over: Partial<PredictionInputs> = {}): PredictionInputs => ({
	wing,
	alphasDeg: alphas,
	pointIdx: alphas.map((_, i) => i),
	mach: 0.1,
	reynolds: 2.5e5,
	refArea: area,
	profileDragCD0: 0.01,
	alphaRefDeg: 4,
	clRef: 0.4,
	reductionId: 1,
	warnings: [],
	sections,
	...over
});

describe('nonlinear prediction with linear section tables equals the linear prediction (issue 6 check, 1e-4 in CL)', () => {
	const lin = computePrediction(inputs(null), { solver: SOLVER_LINEAR });
	const non = computePrediction(inputs([linearTable(0), linearTable(1)]), { solver: SOLVER_NONLINEAR });
	it('at the measured α, on the plotted curve, at α_ref and at CL_ref', () => {
		non.points.forEach((p, i) => expect(Math.abs(p.CL - lin.points[i].CL)).toBeLessThan(1e-4));
		non.points.forEach((p, i) => expect(Math.abs(p.CDi - lin.points[i].CDi)).toBeLessThan(1e-5));
		non.curve.forEach((p, i) => expect(Math.abs(p.CL - lin.curve[i].CL)).toBeLessThan(1e-4));
		expect(Math.abs(non.atAlphaRef.CL - lin.atAlphaRef.CL)).toBeLessThan(1e-4);
		expect(Math.abs(non.atClRef.CL - 0.4)).toBeLessThan(1e-4);
		expect(non.liftSlopePerDeg / lin.liftSlopePerDeg).toBeCloseTo(1, 5);
		expect(non.alphaZeroLiftDeg).toBeCloseTo(lin.alphaZeroLiftDeg, 4);
	});
	it('has no CLmax (the straight tables never stall) and says so', () => {
		expect(non.CLmax).toBeNull();
		expect(non.stall?.peakFound).toBe(false);
		expect(non.warnings.join(' ')).toMatch(/CLmax is not predicted/);
	});
	it('a station without a table uses its own linear section: same result as tables everywhere', () => {
		const geometry: StoredGeometry = {
			span: 1,
			stations: [
				{ eta: 0, chord: 0.16, twistDeg: 0, a0: A0, alphaZeroLiftDeg: AL0, sectionTable: 'lin' },
				{ eta: 1, chord: 0.08, twistDeg: 0, a0: A0, alphaZeroLiftDeg: AL0 }
			],
			segments: [],
			sectionTables: [{ name: 'lin', alphaDeg: Array.from(linearTable(0).alphaDeg), cl: Array.from(linearTable(0).cl) }]
		};
		const t = sectionTablesOf(geometry);
		expect(t.sections).toHaveLength(2);
		expect(t.warnings.join(' ')).toMatch(/station 1: no section table/);
		const mixed = computePrediction(inputs(t.sections), { solver: SOLVER_NONLINEAR });
		mixed.points.forEach((p, i) => expect(Math.abs(p.CL - lin.points[i].CL)).toBeLessThan(1e-4));
		expect(sectionTablesOf({ ...geometry, stations: geometry.stations.map(({ sectionTable: _s, ...s }) => s) }).sections).toBeNull();
	});
	it('refuses the nonlinear solver without tables', () => {
		expect(() => computePrediction(inputs(null), { solver: SOLVER_NONLINEAR })).toThrow('prediction: the nonlinear solver needs section tables (the configuration has none)');
	});
});

describe('nonlinear prediction with stalling tables gives CLmax and ΔCLmax', () => {
	const stallAlphas = range(-4, 20);
	const pred = computePrediction(inputs([stallTable(0), stallTable(1)], { alphasDeg: stallAlphas, pointIdx: stallAlphas.map((_, i) => i) }), { solver: SOLVER_NONLINEAR });
	const linPred = computePrediction(inputs(null, { alphasDeg: stallAlphas, pointIdx: stallAlphas.map((_, i) => i) }), { solver: SOLVER_LINEAR });
	it('is linear well below stall and bracketed at the peak', () => {
		// Below 4° the effective α of every section stays under 10°, on the straight part of the table.
		stallAlphas.forEach((a, i) => {
			if (a <= 4) expect(Math.abs(pred.points[i].CL - linPred.points[i].CL)).toBeLessThan(1e-4);
		});
		expect(pred.CLmax).not.toBeNull();
		expect(pred.stall?.peakFound).toBe(true);
		// The wing cannot exceed the CL its sections would give at their maximum (cl_max = 1.466 at 14°, /β).
		const clmaxSection = (A0 * RAD * (10 - AL0 + 4 - 2)) / Math.sqrt(1 - 0.01);
		expect(pred.CLmax!).toBeLessThan(clmaxSection);
		expect(pred.CLmax!).toBeGreaterThan(0.8 * clmaxSection);
		expect(pred.stall?.stallOnset).not.toBeNull();
	});
	it('measured = predicted + 0.02 gives a ΔCLmax near 0.02 (the measured peak is a sampled maximum)', () => {
		const measured: MeasuredPoint[] = pred.points.map((p, i) => ({ idx: i, alphaDeg: p.alphaDeg, CL: p.CL + 0.02, CD: null, uCL: 0.003, uCD: 0, uAlphaDeg: 0.02 }));
		const d = computeDeltas(measured, pred, DEFAULT_DELTA_SETTINGS, resolveTolerances({}).tolerances);
		const clMax = d.find((x) => x.quantity === 'clMax')!;
		expect(clMax.value).not.toBeNull();
		expect(Math.abs(clMax.value! - 0.02)).toBeLessThan(0.01);
	});
});

describe('flap segments given as chord ratio and deflection', () => {
	it('toWing turns cf/c and δf into Δα_L0 = −τ·δf (thin-airfoil theory) and says so', () => {
		const { wing: w, warnings } = toWing({
			span: 1,
			stations: [{ eta: 0, chord: 0.16, twistDeg: 0, a0: A0, alphaZeroLiftDeg: AL0 }, { eta: 1, chord: 0.08, twistDeg: 0, a0: A0, alphaZeroLiftDeg: AL0 }],
			segments: [
				{ name: 'flap', kind: 'flap', etaStart: 0.1, etaEnd: 0.6, deflectionDeg: 15, chordFraction: 0.25 },
				{ name: 'stated', kind: 'flap', etaStart: 0.6, etaEnd: 0.8, deflectionDeg: 15, chordFraction: 0.25, deltaAlphaZeroLiftDeg: -5 },
				{ name: 'bare', kind: 'other', etaStart: 0.8, etaEnd: 0.9, deflectionDeg: 0 }
			]
		});
		const tau = 1 / 3 + Math.sqrt(3) / (2 * Math.PI); // cf/c = 0.25 closed form
		expect(w.segments![0].deltaAlphaZeroLiftDeg).toBeCloseTo(-15 * tau, 12);
		expect(w.segments![1].deltaAlphaZeroLiftDeg).toBe(-5);
		expect(w.segments![2].deltaAlphaZeroLiftDeg).toBe(0);
		expect(warnings[0]).toMatch(/segment 0 \(flap\): Δα_L0 = -9\.135° from thin-airfoil flap effectiveness/);
		expect(warnings[1]).toMatch(/segment 2 \(bare\): no Δα_L0 and no flap chord ratio given/);
	});
});
