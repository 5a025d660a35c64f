import { describe, expect, it } from 'vitest';
import { planformGeometry, taperedWing, ellipticWing, validateWing, type Wing } from '$lib/aero/planform';

describe('planform geometry (Raymer, Aircraft Design: A Conceptual Approach, trapezoidal-wing MAC formulas; chapter from memory)', () => {
	// MAC = (2/3)·c_r·(1 + λ + λ²)/(1 + λ); ȳ = (b/6)(1 + 2λ)/(1 + λ). Exact: 1e-12 relative.
	it.each([0, 0.25, 0.5, 1])('taper λ = %f', (lam) => {
		const b = 10;
		const S = 12;
		const g = planformGeometry(taperedWing(b, S, lam));
		const cr = (2 * S) / (b * (1 + lam));
		expect(g.area).toBeCloseTo(S, 12);
		expect(g.aspectRatio).toBeCloseTo((b * b) / S, 12);
		expect(g.taperRatio).toBeCloseTo(lam, 12);
		expect(g.meanAerodynamicChord).toBeCloseTo(((2 / 3) * cr * (1 + lam + lam * lam)) / (1 + lam), 12);
		expect(g.meanAerodynamicChordY).toBeCloseTo(((b / 6) * (1 + 2 * lam)) / (1 + lam), 12);
	});
	it('cranked wing: area is the sum of trapezoids (geometry, exact)', () => {
		const w: Wing = { span: 10, stations: [{ eta: 0, chord: 2 }, { eta: 0.4, chord: 2 }, { eta: 1, chord: 1 }] };
		// semi-span 5 m: 2 m × 2 m + 3 m × 1.5 m = 8.5 m², both sides 17 m²
		expect(planformGeometry(w).area).toBeCloseTo(17, 12);
	});
	it('elliptic stations approach S = π·b·c₀/4 (geometry), 1e-4 relative with 401 stations', () => {
		const g = planformGeometry(ellipticWing(8, 8, 401));
		expect(Math.abs(g.area - 8) / 8).toBeLessThan(1e-4);
		expect(g.tipChord).toBe(0);
	});
	it('a one-sided segment marks the wing asymmetric', () => {
		const w = taperedWing(10, 10, 0.5);
		w.segments = [{ etaStart: 0.6, etaEnd: 0.9, deltaAlphaZeroLiftDeg: -4, side: 'left' }];
		expect(planformGeometry(w).asymmetric).toBe(true);
	});
});

describe('planform: invalid geometry names the station and the problem', () => {
	const ok = (s: Wing['stations']): Wing => ({ span: 10, stations: s });
	it.each([
		[ok([{ eta: 0, chord: 1 }]), 'wing: at least two stations are needed (got 1)'],
		[{ span: 10 } as unknown as Wing, 'wing: at least two stations are needed (got none)'],
		[{ span: -2, stations: [{ eta: 0, chord: 1 }, { eta: 1, chord: 1 }] }, 'wing: span must be > 0 (got -2)'],
		[{ span: NaN, stations: [{ eta: 0, chord: 1 }, { eta: 1, chord: 1 }] }, 'wing: span must be a finite number (got NaN)'],
		[ok([{ eta: 0, chord: 1 }, { eta: 0.5, chord: 1 }, { eta: 0.5, chord: 1 }, { eta: 1, chord: 1 }]), 'station 2: eta must increase from station to station (got 0.5 after 0.5)'],
		[ok([{ eta: 0, chord: 1 }, { eta: 0.5, chord: -0.2 }, { eta: 1, chord: 1 }]), 'station 1: chord must be > 0 (got -0.2)'],
		[ok([{ eta: 0, chord: 1 }, { eta: 1, chord: -0.1 }]), 'station 1: chord must be > 0 (or 0 at the tip) (got -0.1)'],
		[ok([{ eta: 0, chord: 0 }, { eta: 1, chord: 1 }]), 'station 0: chord must be > 0 (got 0)'],
		[ok([{ eta: 0, chord: 1 }, { eta: 1.2, chord: 1 }]), 'station 1: eta must be within [0, 1] (got 1.2)'],
		[ok([{ eta: 0.1, chord: 1 }, { eta: 1, chord: 1 }]), 'station 0: the first station must be at the root, eta = 0 (got 0.1)'],
		[ok([{ eta: 0, chord: 1 }, { eta: 0.9, chord: 1 }]), 'station 1: the last station must be at the tip, eta = 1 (got 0.9)'],
		[ok([{ eta: 0, chord: 1 }, { eta: 1, chord: NaN }]), 'station 1: chord must be a finite number (got NaN)'],
		[ok([{ eta: 0, chord: 1, a0: 0 }, { eta: 1, chord: 1 }]), 'station 0: a0 must be > 0 per rad (got 0)'],
		[
			{ span: 10, stations: [{ eta: 0, chord: 1 }, { eta: 1, chord: 1 }], segments: [{ etaStart: 0.8, etaEnd: 0.5, deltaAlphaZeroLiftDeg: -3, name: 'aileron' }] },
			'segment 0 (aileron): need 0 ≤ etaStart < etaEnd ≤ 1 (got 0.8 to 0.5)'
		]
	] as Array<[Wing, string]>)('%#: %s', (w, msg) => {
		expect(() => validateWing(w)).toThrow(msg);
	});
});
