/**
 * reduce.ts and fits.ts are pure: column arrays (SI) in, points and fits out.
 *
 * Hand calculations:
 * - Body to wind axes: L = N·cos α − A·sin α, D = N·sin α + A·cos α
 *   (Anderson, Fundamentals of Aerodynamics, 5th ed., §1.5, eqs. 1.1–1.2);
 *   CL = L/(q·S), CD = D/(q·S), Cm = M/(q·S·c).
 * - Flight, steady level unaccelerated flight at sea-level standard
 *   (ISO 2533: p = 101325 Pa, T = 288.15 K, ρ = 1.225 kg/m³, where CAS = EAS
 *   = TAS): CL = W/(q·S), CD = T·cos α/(q·S) (Kimberlin, Flight Testing of
 *   Fixed-Wing Aircraft, AIAA 2003, ch. 8, energy method with ḣ = V̇ = 0).
 */
import { describe, it, expect } from 'vitest';
import { reduce, type Columns, type ReduceContext } from '../../../src/lib/server/runs/reduce';
import { fitReduction, DEFAULT_UNCERTAINTY, tunnelPointUncertainty, resolveUncertainty } from '../../../src/lib/server/runs/fits';

const DEG = Math.PI / 180;

function tunnelCtx(n: number, over: Partial<ReduceContext> = {}): ReduceContext {
	return {
		kind: 'tunnel',
		rowNumbers: Uint32Array.from({ length: n }, (_, i) => i + 2),
		facility: null,
		reference: { area: 0.2, span: 1.0, chord: 0.2, momentRef: null },
		tare: null,
		...over
	};
}

describe('tunnel reduction: body-axis forces to wind-axis coefficients', () => {
	// α = 5°, N = 100 N, A = 5 N, M = 2 N·m, q = 500 Pa, S = 0.2 m², c = 0.2 m → q·S = 100 N.
	// cos 5° = 0.99619469809, sin 5° = 0.08715574275 (tables).
	// L = 99.619469809 − 0.435778714 = 99.183691095 N; D = 8.715574275 + 4.980973490 = 13.696547765 N.
	const hand = { CL: 0.99183691095, CD: 0.13696547765, Cm: 2 / (100 * 0.2) };
	const cols: Columns = new Map<string, ArrayLike<number>>([
		['alpha', [5 * DEG, 0]],
		['normal_force', [100, 10]],
		['axial_force', [5, 1]],
		['pitching_moment', [2, 0]],
		['q', [500, 500]]
	]);

	it('matches the hand calculation to 1e-10', () => {
		const out = reduce(cols, tunnelCtx(2), {});
		const p = out.points[0];
		expect(p.alphaDeg).toBeCloseTo(5, 12);
		expect(p.CL).toBeCloseTo(hand.CL, 10);
		expect(p.CD).toBeCloseTo(hand.CD, 10);
		expect(p.Cm).toBeCloseTo(hand.Cm, 12);
		// At α = 0 the axes coincide: CL = N/(qS), CD = A/(qS).
		expect(out.points[1].CL).toBeCloseTo(0.1, 12);
		expect(out.points[1].CD).toBeCloseTo(0.01, 12);
		expect(out.corrections).toMatchObject({ applied: false });
		expect(out.settings.inputs).toBe('body-axis forces');
	});

	it('the same loads given in wind axes reduce to the same coefficients', () => {
		const wind: Columns = new Map<string, ArrayLike<number>>([
			['alpha', [5 * DEG]],
			['lift', [99.183691095]],
			['drag', [13.696547765]],
			['q', [500]]
		]);
		const p = reduce(wind, tunnelCtx(1), {}).points[0];
		expect(p.CL).toBeCloseTo(hand.CL, 10);
		expect(p.CD).toBeCloseTo(hand.CD, 10);
	});

	it('q from ½ρV² when only velocity and density are given', () => {
		// ½·1.2·(28.8675134595)² = 500 Pa.
		const c: Columns = new Map<string, ArrayLike<number>>([
			['alpha', [5 * DEG]],
			['normal_force', [100]],
			['axial_force', [5]],
			['velocity', [Math.sqrt(500 / 0.6)]],
			['density', [1.2]]
		]);
		const p = reduce(c, tunnelCtx(1), {}).points[0];
		expect(p.qPa).toBeCloseTo(500, 9);
		expect(p.CL).toBeCloseTo(hand.CL, 10);
	});

	it('without a reference area, forces cannot become coefficients: a clear error', () => {
		expect(() => reduce(cols, tunnelCtx(2, { reference: { area: null, span: null, chord: null, momentRef: null } }), {})).toThrow(/reference area is not known/);
	});

	it('per-point uncertainty: with only u(α) given, U(CL) = 2·|CD|·u(α) and U(CD) = 2·|CL|·u(α) (∂CL/∂α = −CD, ∂CD/∂α = CL, per rad)', () => {
		const u = { ...resolveUncertainty({ balanceFractionOfMax: 0, qFraction: 0, areaFraction: 0, alphaDeg: 0.1 }, null) };
		const r = tunnelPointUncertainty({ normal: 100, axial: 5, q: 500, area: 0.2, alphaDeg: 5 }, u, { normal: 100, axial: 5, pitching: 0 });
		// Stored to 6 significant digits.
		expect(r.CL / (2 * hand.CD * 0.1 * DEG)).toBeCloseTo(1, 5);
		expect(r.CD / (2 * hand.CL * 0.1 * DEG)).toBeCloseTo(1, 5);
		expect(r.alphaDeg).toBeCloseTo(0.2, 12);
		expect(r.coverage).toBe(2);
	});

	it('per-point uncertainty: q alone at 0.5 % gives U(CL) = 2·0.005·CL', () => {
		const u = resolveUncertainty({ balanceFractionOfMax: 0, qFraction: 0.005, areaFraction: 0, alphaDeg: 0 }, null);
		const r = tunnelPointUncertainty({ normal: 100, axial: 5, q: 500, area: 0.2, alphaDeg: 5 }, u, { normal: 100, axial: 5, pitching: 0 });
		expect(r.CL).toBeCloseTo(2 * 0.005 * hand.CL, 6);
		expect(r.CD).toBeCloseTo(2 * 0.005 * hand.CD, 6);
	});

	it('uncertainty sources: settings over the facility calibration sheet over the documented defaults', () => {
		expect(resolveUncertainty(undefined, null)).toMatchObject({ source: DEFAULT_UNCERTAINTY.source, alphaDeg: 0.05 });
		expect(resolveUncertainty(undefined, { uncertainty: { alphaDeg: 0.02 } })).toMatchObject({ source: 'facility calibration sheet', alphaDeg: 0.02 });
		expect(resolveUncertainty({ alphaDeg: 0.01 }, { uncertainty: { alphaDeg: 0.02 } })).toMatchObject({ source: 'reduction settings', alphaDeg: 0.01 });
	});
});

describe('fits of a reduction', () => {
	it('fewer than 3 points: each fit stores its reason instead of failing', () => {
		const f = fitReduction(
			[
				{ idx: 1, alphaDeg: 0, CL: 0.1, CD: 0.01, excluded: false },
				{ idx: 2, alphaDeg: 2, CL: 0.3, CD: 0.02, excluded: false },
				{ idx: 3, alphaDeg: 4, CL: 0.5, CD: 0.03, excluded: true }
			],
			8
		);
		expect(f.liftCurve).toMatchObject({ status: 'not_fitted', n: 2 });
		expect(f.polar).toMatchObject({ status: 'not_fitted', reason: expect.stringMatching(/at least 3 points/) });
		expect(f.offsetPolar).toMatchObject({ status: 'not_fitted', reason: expect.stringMatching(/at least 4 points/) });
		expect(f.warnings.join('\n')).toMatch(/polar not fitted/);
	});

	it('an exact line and parabola are recovered, outliers are reported by point number and kept', () => {
		// CL = 0.1·(α + 2), CD = 0.02 + 0.05·CL²; point 6 is off the lift line by 0.2.
		const pts = Array.from({ length: 12 }, (_, i) => {
			const a = -4 + i;
			const CL = 0.1 * (a + 2) + (i === 5 ? 0.2 : 0);
			return { idx: i + 1, alphaDeg: a, CL, CD: 0.02 + 0.05 * CL * CL, excluded: false };
		});
		const f = fitReduction(pts, 8);
		if (f.polar.status !== 'fitted' || f.liftCurve.status !== 'fitted') throw new Error('not fitted');
		expect(f.polar.CD0.value).toBeCloseTo(0.02, 10);
		expect(f.polar.k.value).toBeCloseTo(0.05, 10);
		expect(f.polar.e!.value).toBeCloseTo(1 / (Math.PI * 8 * 0.05), 9);
		expect(f.liftCurve.outliers.map((o) => o.idx)).toEqual([6]);
		expect(f.liftCurve.n).toBe(12);
	});
});

describe('flight reduction: a synthetic steady segment', () => {
	// 40 s at 10 Hz, 50 m/s CAS at sea level standard, 1000 kg, n = 1, α = 4°, thrust 900 N, S = 16 m².
	const n = 400;
	const fill = (v: number) => new Float64Array(n).fill(v);
	const cols: Columns = new Map<string, ArrayLike<number>>([
		['time', Float64Array.from({ length: n }, (_, i) => i / 10)],
		['airspeed_cas', fill(50)],
		['pressure_altitude', fill(0)],
		['oat', fill(288.15)],
		['weight', fill(1000)],
		['load_factor', fill(1)],
		['alpha', fill(4 * DEG)],
		['thrust', fill(900)]
	]);
	const ctx: ReduceContext = { kind: 'flight', rowNumbers: Uint32Array.from({ length: n }, (_, i) => i + 2), facility: null, reference: { area: 16, span: 10, chord: 1.6, momentRef: null }, tare: null };

	it('one point: CL = W/(qS), CD = T·cos α/(qS), q = ½ρ₀V²', () => {
		const out = reduce(cols, ctx, {});
		expect(out.points).toHaveLength(1);
		const p = out.points[0];
		// ρ = p/(R·T) with R = 287.053 J/(kg·K) is 1.2249991 kg/m³, 7e-7 under the tabulated 1.225:
		// compare to 2e-6 relative.
		const q = 0.5 * 1.225 * 50 * 50; // 1531.25 Pa
		const rel = (a: number | null, b: number) => Math.abs((a as number) / b - 1);
		expect(rel(p.qPa, q)).toBeLessThan(2e-6);
		expect(rel(p.CL, (1000 * 9.80665) / (q * 16))).toBeLessThan(2e-6);
		expect(rel(p.CD, (900 * Math.cos(4 * DEG)) / (q * 16))).toBeLessThan(2e-6);
		expect(p.alphaDeg).toBeCloseTo(4, 12);
		expect(p.velocity).toBeCloseTo(50, 4);
		expect(p.values.segment).toMatchObject({ start: 0, end: n - 1, count: n });
		expect(p.uncertainty!.CL).toBeGreaterThan(0);
		// One point: no fit, and the reduction says why.
		expect(out.fits.polar).toMatchObject({ status: 'not_fitted' });
	});

	it('no reference area → a clear error', () => {
		expect(() => reduce(cols, { ...ctx, reference: { area: null, span: null, chord: null, momentRef: null } }, {})).toThrow(/reference area and chord are not known/);
	});
});
