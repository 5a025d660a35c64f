import { describe, expect, it } from 'vitest';
import { flapEffectiveness, flapEffectivenessTau, largeDeflectionFactor } from '$lib/aero/flap';
import * as aero from '$lib/aero';

/**
 * Thin-airfoil flap effectiveness (Glauert; Anderson, Fundamentals of
 * Aerodynamics, ch. 4, thin airfoil theory, the flapped airfoil — section and
 * equation number from memory). The reference is the closed form
 * Δα_L0 = −(δ/π)·∫_{θh}^{π}(1 − cos θ)dθ over the flap, written here
 * independently in the hinge angle θh (x_h/c = (1 − cos θh)/2), so the test
 * does not reuse the implementation's form τ = (θf + sin θf)/π.
 */
function tauFromHinge(chordRatio: number): number {
	const xh = 1 - chordRatio; // hinge position x_h/c
	const thetaH = Math.acos(1 - 2 * xh);
	return 1 - (thetaH - Math.sin(thetaH)) / Math.PI;
}

/** Numerical quadrature of (1/π)∫_{θh}^{π}(1 − cos θ)dθ by the composite Simpson rule: an independent check of the closed form. */
function tauByQuadrature(chordRatio: number, n = 2000): number {
	const thetaH = Math.acos(1 - 2 * (1 - chordRatio));
	const h = (Math.PI - thetaH) / n;
	let s = 0;
	for (let k = 0; k <= n; k++) {
		const w = k === 0 || k === n ? 1 : k % 2 ? 4 : 2;
		s += w * (1 - Math.cos(thetaH + k * h));
	}
	return (s * h) / 3 / Math.PI;
}

describe('flap effectiveness τ (thin-airfoil theory, closed form, 1e-9 relative)', () => {
	it.each([0.05, 0.1, 0.2, 0.25, 0.3, 0.4, 0.5, 0.7, 0.9])('cf/c = %f matches the hinge-angle closed form and a quadrature', (E) => {
		const tau = flapEffectivenessTau(E);
		expect(Math.abs(tau - tauFromHinge(E)) / tauFromHinge(E)).toBeLessThan(1e-9);
		expect(Math.abs(tau - tauByQuadrature(E))).toBeLessThan(1e-9);
	});

	it('cf/c = 0.25: θh = 2π/3, τ = 1/3 + √3/(2π) ≈ 0.609 (closed form)', () => {
		const exact = 1 / 3 + Math.sqrt(3) / (2 * Math.PI);
		expect(flapEffectivenessTau(0.25)).toBeCloseTo(exact, 12);
		expect(flapEffectivenessTau(0.25)).toBeCloseTo(0.609, 3);
	});

	it('cf/c = 0.5: θ = π/2, τ = 1/2 + 1/π = 0.8183… (closed form)', () => {
		expect(flapEffectivenessTau(0.5)).toBeCloseTo(0.5 + 1 / Math.PI, 12);
	});

	it('limits: τ → 0 as cf/c → 0 (like √E) and τ → 1 as cf/c → 1 (whole chord turns)', () => {
		expect(flapEffectivenessTau(0)).toBe(0);
		expect(flapEffectivenessTau(1)).toBeCloseTo(1, 12);
		// Small E: θf ≈ 2√E, so τ ≈ 4√E/π (series of the closed form).
		const E = 1e-8;
		expect(flapEffectivenessTau(E) / ((4 * Math.sqrt(E)) / Math.PI)).toBeCloseTo(1, 6);
		// Monotone in E.
		let last = -1;
		for (let k = 0; k <= 100; k++) {
			const t = flapEffectivenessTau(k / 100);
			expect(t).toBeGreaterThan(last);
			last = t;
		}
	});
});

describe('Δα_L0 of a deflected flap', () => {
	it('Δα_L0 = −τ·δf: 15° of a 25 % flap lowers α_L0 by about 9.13°', () => {
		const r = flapEffectiveness(0.25, 15);
		expect(r.deltaAlphaZeroLiftDeg).toBeCloseTo(-15 * tauFromHinge(0.25), 12);
		expect(r.deltaAlphaZeroLiftDeg).toBeCloseTo(-9.135, 2);
		expect(r.correction).toBe(1);
		expect(r.thetaF).toBeCloseTo(Math.PI / 3, 12);
		expect(flapEffectiveness(0.25, -10).deltaAlphaZeroLiftDeg).toBeCloseTo(10 * tauFromHinge(0.25), 12);
		expect(Object.is(flapEffectiveness(0.3, 0).deltaAlphaZeroLiftDeg, 0)).toBe(true);
	});

	it('optional correction factor (common practice, no source): a number, or the large-deflection reduction', () => {
		expect(flapEffectiveness(0.25, 20, { correction: 0.8 }).tau).toBeCloseTo(0.8 * tauFromHinge(0.25), 12);
		expect(largeDeflectionFactor(5)).toBe(1);
		expect(largeDeflectionFactor(10)).toBe(1);
		expect(largeDeflectionFactor(35)).toBeCloseTo(0.75, 12);
		expect(largeDeflectionFactor(60)).toBeCloseTo(0.5, 12);
		expect(largeDeflectionFactor(80)).toBeCloseTo(0.5, 12);
		const r = flapEffectiveness(0.25, 35, { correction: 'large-deflection' });
		expect(r.deltaAlphaZeroLiftDeg).toBeCloseTo(-35 * 0.75 * tauFromHinge(0.25), 12);
		expect(r.tauThinAirfoil).toBeCloseTo(tauFromHinge(0.25), 12);
	});

	it.each([
		[() => flapEffectivenessTau(-0.1), 'flap: chord ratio cf/c must be within [0, 1] (got -0.1)'],
		[() => flapEffectivenessTau(1.5), 'flap: chord ratio cf/c must be within [0, 1] (got 1.5)'],
		[() => flapEffectivenessTau(Number.NaN), 'flap: chord ratio cf/c must be a finite number (got NaN)'],
		[() => flapEffectiveness(0.25, 120), 'flap: deflection must be within ±90° (got 120)'],
		[() => flapEffectiveness(0.25, 10, { correction: 1.5 }), "flap: correction must be a number in (0, 1] or 'large-deflection' (got 1.5)"]
	])('refuses bad input (%#)', (fn, message) => {
		expect(fn).toThrow(message);
	});

	it('is exported from the aero index', () => {
		expect(typeof aero.flapEffectiveness).toBe('function');
		expect(typeof aero.flapEffectivenessTau).toBe('function');
	});
});
