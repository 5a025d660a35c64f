import { describe, expect, it } from 'vitest';
import { biotSavartSegment, biotSavartSemiInfinite, solveHorseshoe, horseshoeDownwash, type Vec3 } from '$lib/aero/horseshoe';
import { solveLiftingLine } from '$lib/aero/lifting-line';
import { taperedWing, type Wing } from '$lib/aero/planform';

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('Biot–Savart law (Anderson, Fundamentals of Aerodynamics, ch. 5; Katz & Plotkin, Low-Speed Aerodynamics, §2.10)', () => {
	it('a long segment approaches the infinite vortex Γ/(2πh), 1e-6 relative', () => {
		const v = biotSavartSegment([0, 0, 2], [0, -1e4, 0], [0, 1e4, 0], 3);
		expect(rel(Math.hypot(...v), 3 / (2 * Math.PI * 2))).toBeLessThan(1e-6);
	});
	it('a segment seen at ±45° gives Γ/(4πh)(cos 45° + cos 45°) (Anderson ch. 5, finite segment), 1e-12', () => {
		const v = biotSavartSegment([0, 0, 1], [0, -1, 0], [0, 1, 0], 1);
		expect(Math.hypot(...v)).toBeCloseTo((1 / (4 * Math.PI)) * Math.SQRT2, 12);
	});
	it('a semi-infinite vortex at its end plane gives half the infinite value, Γ/(4πh) (Anderson ch. 5), 1e-12', () => {
		const v = biotSavartSemiInfinite([0, 0.5, 0], [0, 0, 0], [1, 0, 0], 2);
		expect(Math.hypot(...v)).toBeCloseTo(2 / (4 * Math.PI * 0.5), 12);
	});
	it('the semi-infinite formula is the limit of long segments, 1e-6', () => {
		const p: Vec3 = [0.3, -0.4, 0.2];
		const a = biotSavartSemiInfinite(p, [0, 0, 0], [1, 0, 0], 1);
		const s = biotSavartSegment(p, [0, 0, 0], [1e7, 0, 0], 1);
		for (let k = 0; k < 3; k++) expect(Math.abs(a[k] - s[k])).toBeLessThan(1e-6);
	});
});

describe('single horseshoe: downwash grows without bound toward the tips (Anderson ch. 5)', () => {
	const wing = taperedWing(10, 10, 1);
	const one = solveHorseshoe(wing, 5, { count: 1 });
	const G = one.panels[0].circulationPerV;
	it.each([0, 2.5, 4, 4.9, 4.99, 4.999])('at y = %f m: w = Γ/4π·[1/(b/2 − y) + 1/(b/2 + y)], 1e-9 relative', (y) => {
		const w = horseshoeDownwash(one, y);
		expect(rel(w, (G / (4 * Math.PI)) * (1 / (5 - y) + 1 / (5 + y)))).toBeLessThan(1e-9);
	});
	it('and the growth is unbounded: 1000× closer to the tip, ~1000× the downwash', () => {
		expect(horseshoeDownwash(one, 4.999) / horseshoeDownwash(one, 4)).toBeGreaterThan(400);
		expect(horseshoeDownwash(one, 4.999999)).toBeGreaterThan(1000 * horseshoeDownwash(one, 4.999) * 0.9);
	});
});

describe('many horseshoes converge to the Fourier lifting-line solution (aero-checks.md)', () => {
	const cases: [string, Wing][] = [
		['rectangular AR 6', taperedWing(6, 6, 1)],
		['tapered λ = 0.4 AR 8, 2° washout', { span: 8, stations: [{ eta: 0, chord: 1.43 }, { eta: 1, chord: 0.57, twistDeg: -2 }] }]
	];
	it.each(cases)('%s: error in CL and CDi shrinks with N and is < 0.5 % at N = 200', (_n, w) => {
		const ref = solveLiftingLine(w, { alphaDeg: 5 }, { terms: 120 });
		const errs = [10, 25, 50, 100, 200].map((count) => {
			const h = solveHorseshoe(w, 5, { count });
			return [rel(h.CL, ref.CL), rel(h.CDi, ref.CDi)];
		});
		for (let i = 1; i < errs.length; i++) expect(errs[i][0]).toBeLessThan(errs[i - 1][0] + 1e-6);
		expect(errs[4][0]).toBeLessThan(5e-3);
		expect(errs[4][1]).toBeLessThan(5e-3);
	});
	it('bad input', () => {
		expect(() => solveHorseshoe(taperedWing(6, 6, 1), 5, { count: 0 })).toThrow('horseshoe: count must be an integer in [1, 4000] (got 0)');
		expect(() => solveHorseshoe(taperedWing(6, 6, 1), NaN)).toThrow('horseshoe: alphaDeg must be a finite number (got NaN)');
	});
});
