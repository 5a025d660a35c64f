import { describe, expect, it } from 'vitest';
import {
	solveLiftingLine,
	liftCurve,
	ellipticLiftingLine,
	helmboldLiftSlope,
	datcomLiftSlope,
	raymerOswaldEfficiency
} from '$lib/aero/lifting-line';
import { ellipticWing, taperedWing, type Wing } from '$lib/aero/planform';

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);
const DEG = Math.PI / 180;

describe('elliptic planform (Anderson, Fundamentals of Aerodynamics, ch. 5)', () => {
	it('closed form: AR 8, a0 = 2π, α = 5° → CL = 0.43865, CDi = 0.0076559 (aero-checks.md), 1e-5 relative (printed digits)', () => {
		const r = ellipticLiftingLine({ aspectRatio: 8, alphaDeg: 5 });
		expect(rel(r.CL, 0.43865)).toBeLessThan(1e-5);
		expect(rel(r.CDi, 0.0076559)).toBeLessThan(1e-5);
		expect(r.alphaInducedDeg * DEG).toBeCloseTo(r.CL / (Math.PI * 8), 12);
	});
	it('closed form: Γ₀ = 2V∞·S·CL/(π·b), exact', () => {
		const r = ellipticLiftingLine({ aspectRatio: 8, alphaDeg: 5, span: 8, area: 8 });
		expect(r.rootCirculationPerV).toBeCloseTo((2 * 8 * r.CL) / (Math.PI * 8), 14);
	});
	// Fourier solver on 401 linear stations approximating the ellipse; terms
	// chosen so collocation points do not sit on stations. 0.5 % (converged numerical).
	it.each([17, 33, 61])('solver with %i terms reproduces CL, CDi, e = 1 and constant αᵢ', (terms) => {
		const w = ellipticWing(8, 8, 401);
		const r = solveLiftingLine(w, { alphaDeg: 5 }, { terms });
		const ref = ellipticLiftingLine({ aspectRatio: r.aspectRatio, alphaDeg: 5 });
		expect(rel(r.CL, ref.CL)).toBeLessThan(5e-3);
		expect(rel(r.CDi, ref.CDi)).toBeLessThan(5e-3);
		expect(r.delta).toBeLessThan(1e-3);
		expect(Math.abs(r.e - 1)).toBeLessThan(1e-3);
		for (const s of r.loading.slice(2, -2)) expect(Math.abs(s.alphaInducedDeg - ref.alphaInducedDeg)).toBeLessThan(0.01);
	});
});

describe('convergence with the number of terms (Glauert series; Anderson ch. 5)', () => {
	it('rectangular AR 6: successive changes of CL and δ shrink, and 200 terms agree with 100 to 0.1 %', () => {
		const w = taperedWing(6, 6, 1);
		const Ns = [8, 16, 32, 64, 100, 200];
		const res = Ns.map((terms) => solveLiftingLine(w, { alphaDeg: 6 }, { terms }));
		const dCL = res.slice(1).map((r, i) => Math.abs(r.CL - res[i].CL));
		for (let i = 1; i < dCL.length - 1; i++) expect(dCL[i]).toBeLessThan(dCL[i - 1]);
		expect(rel(res[4].CL, res[5].CL)).toBeLessThan(1e-3);
		expect(Math.abs(res[4].delta - res[5].delta)).toBeLessThan(2e-3);
	});
});

describe('Kutta–Joukowski integrals versus the Fourier result (aero-checks.md; Anderson ch. 5)', () => {
	const cases: Array<[string, Wing, number]> = [
		['tapered λ = 0.4, AR 8, 3° washout', { span: 8, stations: [{ eta: 0, chord: 1.43, twistDeg: 0 }, { eta: 1, chord: 0.57, twistDeg: -3 }] }, 6],
		['rectangular with one-sided flap', { span: 10, stations: [{ eta: 0, chord: 1 }, { eta: 1, chord: 1 }], segments: [{ etaStart: 0.5, etaEnd: 0.9, deltaAlphaZeroLiftDeg: -6, side: 'right' }] }, 3]
	];
	it.each(cases)('%s: L = ρV∫Γdy, Dᵢ = ρV∫Γαᵢdy by midpoint quadrature in θ, 1e-6 relative', (_n, w, alphaDeg) => {
		const V = 40;
		const rho = 1.2;
		const M = 400;
		const r = solveLiftingLine(w, { alphaDeg, velocity: V, density: rho }, { terms: 60, outputStations: M });
		const b = w.span;
		let L = 0;
		let Di = 0;
		let trailing = 0;
		let maxG = 0;
		const dth = Math.PI / M;
		for (const s of r.loading) {
			const th = Math.acos((-2 * s.y) / b);
			const dy = (b / 2) * Math.sin(th) * dth;
			L += rho * V * s.circulation! * dy;
			Di += rho * V * s.circulation! * s.alphaInducedDeg * DEG * dy;
			trailing += s.dGammaDyPerV * dy;
			maxG = Math.max(maxG, Math.abs(s.circulationPerV));
			expect(s.liftPerSpan).toBeCloseTo(rho * V * s.circulation!, 9);
		}
		const q = 0.5 * rho * V * V;
		expect(rel(L / (q * r.area), r.CL)).toBeLessThan(1e-6);
		expect(rel(Di / (q * r.area), r.CDi)).toBeLessThan(1e-6);
		// Trailing sheet: total strength ∫(dΓ/dy)dy = Γ(b/2) − Γ(−b/2) = 0 (aero-checks.md).
		expect(Math.abs(trailing)).toBeLessThan(1e-9 * maxG);
	});
	it('rolling moment: Cl = −(1/qSb)∫yL′dy equals (π·AR/4)·A₂ (Glauert), 1e-6 relative; right flap down rolls left (negative)', () => {
		const [, w, alphaDeg] = cases[1];
		const M = 400;
		const r = solveLiftingLine(w, { alphaDeg }, { terms: 60, outputStations: M });
		let mx = 0;
		for (const s of r.loading) {
			const th = Math.acos((-2 * s.y) / w.span);
			mx += -s.y * s.circulationPerV * (w.span / 2) * Math.sin(th) * (Math.PI / M);
		}
		const ClQuad = (2 * mx) / (r.area * w.span);
		expect(r.symmetric).toBe(false);
		expect(r.Cl).toBeLessThan(0);
		expect(rel(ClQuad, r.Cl)).toBeLessThan(1e-6);
	});
	it('a symmetric wing has zero rolling moment and odd harmonics only', () => {
		const r = solveLiftingLine(cases[0][1], { alphaDeg: 4 });
		expect(r.Cl).toBe(0);
		expect(r.harmonics.every((n) => n % 2 === 1)).toBe(true);
	});
	it('symmetric and general modes agree on a symmetric wing (1e-3 relative in CL: the root kink of linear twist slows both series)', () => {
		const w = cases[0][1];
		const s = solveLiftingLine(w, { alphaDeg: 4 }, { terms: 40 });
		const g = solveLiftingLine(w, { alphaDeg: 4 }, { terms: 80, symmetry: 'general' });
		expect(rel(g.CL, s.CL)).toBeLessThan(1e-3);
		expect(Math.abs(g.Cl)).toBeLessThan(1e-12);
	});
});

describe('induced-drag factor δ versus taper (Anderson, Fundamentals of Aerodynamics, Fig. 5.20, chart-read, ±20 %)', () => {
	const deltaAt = (AR: number, lam: number) => solveLiftingLine(taperedWing(AR, AR, lam), { alphaDeg: 5 }, { terms: 80 }).delta;
	it.each([4, 6, 8, 10])('AR %i: minimum of δ lies at taper 0.2–0.4 and the rectangular wing is worse than any taper 0.2–0.8', (AR) => {
		const tapers = [0, 0.1, 0.2, 0.3, 0.35, 0.4, 0.5, 0.6, 0.8, 1];
		const ds = tapers.map((l) => deltaAt(AR, l));
		const iMin = ds.indexOf(Math.min(...ds));
		expect(tapers[iMin]).toBeGreaterThanOrEqual(0.2);
		expect(tapers[iMin]).toBeLessThanOrEqual(0.4);
		expect(ds[ds.length - 1]).toBeGreaterThan(Math.max(...ds.slice(2, -1)));
	});
	it('rectangular AR 6: δ ≈ 0.05 (chart reading), ±20 %', () => {
		expect(rel(deltaAt(6, 1), 0.05)).toBeLessThan(0.2);
	});
	it('lift slope obeys a = a₀/[1 + (a₀/πAR)(1+τ)] with the returned τ (definition, 1e-12)', () => {
		const r = solveLiftingLine(taperedWing(6, 6, 1), { alphaDeg: 5 });
		const a0 = 2 * Math.PI;
		expect(r.liftSlope).toBeCloseTo(a0 / (1 + (a0 / (Math.PI * 6)) * (1 + r.tau)), 12);
		expect(r.tau).toBeGreaterThan(0.1); // Anderson ch. 5, τ-versus-taper chart: τ ≈ 0.15–0.2 for AR 6 rectangular (chart-read, from memory)
		expect(r.tau).toBeLessThan(0.25);
	});
});

describe('lift curve from one factorisation (superposition in α)', () => {
	const w: Wing = { span: 9, stations: [{ eta: 0, chord: 1.3, alphaZeroLiftDeg: -2 }, { eta: 1, chord: 0.6, twistDeg: -2.5, alphaZeroLiftDeg: -1.5 }] };
	it('every point equals an independent solve (1e-10 relative)', () => {
		const alphas = Array.from({ length: 41 }, (_, i) => -10 + i * 0.5);
		const lc = liftCurve(w, alphas, { terms: 40 });
		for (const i of [0, 7, 20, 33, 40]) {
			const r = solveLiftingLine(w, { alphaDeg: alphas[i] }, { terms: 40, outputStations: 0 });
			expect(lc.points[i].CL).toBeCloseTo(r.CL, 10);
			expect(lc.points[i].CDi).toBeCloseTo(r.CDi, 12);
		}
		// CL is linear in α with the reported slope and zero-lift angle.
		expect(lc.points[40].CL - lc.points[0].CL).toBeCloseTo(lc.liftSlope * 20 * DEG, 10);
		const CLat = lc.liftSlope * (0 - lc.alphaZeroLiftDeg) * DEG;
		expect(CLat).toBeCloseTo(lc.points[20].CL, 10);
	});
	it('Prandtl–Glauert: the lift slope at M 0.5 equals a solve with a₀/β (Anderson ch. 11), 1e-12', () => {
		const beta = Math.sqrt(1 - 0.25);
		const scaled: Wing = { ...w, stations: w.stations.map((s) => ({ ...s, a0: (2 * Math.PI) / beta })) };
		expect(liftCurve(w, [2], { mach: 0.5 }).liftSlope).toBeCloseTo(liftCurve(scaled, [2]).liftSlope, 12);
	});
	it('warns above M 0.6 and refuses M ≥ 1', () => {
		expect(solveLiftingLine(w, { alphaDeg: 2, mach: 0.7 }).warnings[0]).toMatch(/above 0.6/);
		expect(solveLiftingLine(w, { alphaDeg: 2, mach: 0.3 }).warnings).toEqual([]);
		expect(() => solveLiftingLine(w, { alphaDeg: 2, mach: 1 })).toThrow('Prandtl–Glauert scaling is undefined at M ≥ 1 (got 1)');
	});
});

describe('closed-form lift slopes', () => {
	it('Helmbold: a₀ = 6.02 /rad, AR 6 → a ≈ 4.397 /rad (Anderson, Aircraft Performance and Design, Eq. 2.18a, Example 2.8), 1e-3 relative', () => {
		expect(rel(helmboldLiftSlope(6.02, 6), 4.397)).toBeLessThan(1e-3);
	});
	it.each([[2, 5.8], [6, 6.02], [12, 6.28]])('DATCOM §4.1.3.2 (from memory) reduces to Helmbold at Λ = 0, M = 0: AR %f, a₀ %f (identity, 1e-12)', (AR, a0) => {
		expect(datcomLiftSlope(AR, a0)).toBeCloseTo(helmboldLiftSlope(a0, AR), 12);
	});
	it('Raymer straight-wing Oswald estimate: A = 8 → e = 0.811 (Raymer, Aircraft Design, straight-wing formula as in aero-checks.md), ±0.001', () => {
		expect(Math.abs(raymerOswaldEfficiency(8) - 0.811)).toBeLessThan(1e-3);
	});
});

describe('lifting line: bad input', () => {
	const w = taperedWing(8, 8, 0.5);
	it.each([
		[() => solveLiftingLine(w, { alphaDeg: NaN }), 'lifting line: alphaDeg must be a finite number (got NaN)'],
		[() => solveLiftingLine(w, { alphaDeg: 2 }, { terms: 0 }), 'lifting line: terms must be an integer in [1, 2000] (got 0)'],
		[() => solveLiftingLine(w, { alphaDeg: 2, velocity: -3 }), 'lifting line: velocity must be > 0 (got -3)'],
		[() => solveLiftingLine({ span: -1, stations: w.stations }, { alphaDeg: 2 }), 'wing: span must be > 0 (got -1)'],
		[() => solveLiftingLine({ span: 8, stations: [] }, { alphaDeg: 2 }), 'wing: at least two stations are needed (got 0)'],
		[() => liftCurve(w, []), 'liftCurve: alphasDeg must contain at least one angle'],
		[() => liftCurve(w, [1, NaN]), 'liftCurve: alphasDeg[1] must be a finite number (got NaN)'],
		[
			() => solveLiftingLine({ ...w, segments: [{ etaStart: 0.5, etaEnd: 1, deltaAlphaZeroLiftDeg: 3, side: 'left' }] }, { alphaDeg: 1 }, { symmetry: 'symmetric' }),
			'symmetry "symmetric" was requested but a segment acts on one side only'
		]
	] as Array<[() => unknown, string]>)('%#', (fn, msg) => {
		expect(fn).toThrow(msg);
	});
});
