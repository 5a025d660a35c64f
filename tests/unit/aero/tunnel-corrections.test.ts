import { describe, expect, it } from 'vitest';
import {
	correctTunnelPoint,
	solidBlockage,
	thomWakeBlockage,
	maskellWakeBlockage,
	CLOSED_CIRCULAR_JET_DELTA,
	type TunnelSettings
} from '$lib/aero/tunnel-corrections';

const DEG = Math.PI / 180;
// Source of all formulas: Barlow, Rae & Pope, Low-Speed Wind Tunnel Testing,
// 3rd ed. (1999), ch. 10, as summarised in aero-checks.md. Expected values are
// hand-evaluated from those formulas in each test; tolerance 1e-12.

describe('lift interference, closed circular jet δ = 0.125 (method of images; Barlow, Rae & Pope ch. 10)', () => {
	const base: TunnelSettings = { jet: 'closed', testSectionArea: 4, delta: CLOSED_CIRCULAR_JET_DELTA };
	it.each([
		// S, CL: Δα = δ(S/C)CL rad, ΔCD = δ(S/C)CL²
		[0.4, 1.0],
		[0.4, 0.5],
		[0.8, 1.2],
		[0.2, -0.3]
	])('S = %f m², CL = %f', (S, CL) => {
		const r = correctTunnelPoint({ alphaDeg: 5, CL, CD: 0, q: 1000 }, base, { area: S });
		const ratio = S / 4;
		expect(CLOSED_CIRCULAR_JET_DELTA).toBe(0.125);
		expect(r.contributions.liftInterference.dAlphaDeg).toBeCloseTo((0.125 * ratio * CL) / DEG, 12);
		expect(r.contributions.liftInterference.dCD).toBeCloseTo(0.125 * ratio * CL * CL, 12);
		expect(r.alphaDeg).toBeCloseTo(5 + (0.125 * ratio * CL) / DEG, 12);
	});
	it('open jet: the sign reverses (Barlow, Rae & Pope ch. 10)', () => {
		const closed = correctTunnelPoint({ alphaDeg: 5, CL: 1, CD: 0.05, q: 1000 }, base, { area: 0.4 });
		const open = correctTunnelPoint({ alphaDeg: 5, CL: 1, CD: 0.05, q: 1000 }, { ...base, jet: 'open' }, { area: 0.4 });
		expect(open.contributions.liftInterference.dAlphaDeg).toBeCloseTo(-closed.contributions.liftInterference.dAlphaDeg, 12);
		expect(open.contributions.liftInterference.dCD).toBeCloseTo(-closed.contributions.liftInterference.dCD, 12);
	});
	it('streamline curvature adds τ₂δ(S/C)CL to Δα, and 0.25·a·Δα_sc to Cm when a lift slope is given', () => {
		const r = correctTunnelPoint({ alphaDeg: 4, CL: 0.8, CD: 0, Cm: -0.05, q: 900 }, { ...base, tau2: 0.1 }, { area: 0.4, liftSlopePerRad: 4.5 });
		const dsc = 0.1 * 0.125 * 0.1 * 0.8;
		expect(r.contributions.streamlineCurvature.dAlphaDeg).toBeCloseTo(dsc / DEG, 12);
		expect(r.contributions.streamlineCurvature.dCm).toBeCloseTo(0.25 * 4.5 * dsc, 12);
		expect(r.alphaDeg).toBeCloseTo(4 + (0.125 * 0.1 * 0.8 * 1.1) / DEG, 12);
		expect(r.Cm).toBeCloseTo(-0.05 + 0.25 * 4.5 * dsc, 12);
	});
});

describe('blockage (Barlow, Rae & Pope ch. 10)', () => {
	it('solid blockage ε_sb = K₁τ₁·V/C^1.5', () => {
		expect(solidBlockage(0.9, 0.01, 4)).toBeCloseTo((0.9 * 0.01) / 8, 14);
	});
	it('Thom wake blockage ε_wb = (S/4C)·CDu', () => {
		expect(thomWakeBlockage(0.4, 4, 0.06)).toBeCloseTo((0.4 / 16) * 0.06, 14);
	});
	it('Maskell ε_wb = (S/4C)CD0 + (5S/4C)(CDu − CDi − CD0); attached flow reduces to CD0 only', () => {
		expect(maskellWakeBlockage(0.4, 4, 0.2, 0.01, 0.05)).toBeCloseTo(0.025 * 0.01 + 0.125 * 0.14, 14);
		expect(maskellWakeBlockage(0.4, 4, 0.05, 0.01, 0.05)).toBeCloseTo(0.025 * 0.01, 14);
	});
	it('q = qu(1+ε)², CL = CLu(1−2ε), CD = CDu(1−3ε_sb−2ε_wb), each part reported', () => {
		const settings: TunnelSettings = { jet: 'closed', testSectionArea: 4, delta: 0, solidBlockage: { k1Tau1: 0.9, modelVolume: 0.01 }, wakeMethod: 'thom' };
		const r = correctTunnelPoint({ alphaDeg: 2, CL: 0.5, CD: 0.03, Cm: 0.02, q: 1000, velocity: 40 }, settings, { area: 0.4 });
		const esb = (0.9 * 0.01) / 8;
		const ewb = (0.4 / 16) * 0.03;
		const e = esb + ewb;
		expect(r.contributions.solidBlockage.epsilon).toBeCloseTo(esb, 14);
		expect(r.contributions.wakeBlockage.epsilon).toBeCloseTo(ewb, 14);
		expect(r.q).toBeCloseTo(1000 * (1 + e) ** 2, 10);
		expect(r.velocity).toBeCloseTo(40 * (1 + e), 12);
		expect(r.CL).toBeCloseTo(0.5 * (1 - 2 * e), 14);
		expect(r.CD).toBeCloseTo(0.03 * (1 - 3 * esb - 2 * ewb), 14);
		expect(r.Cm).toBeCloseTo(0.02 * (1 - 2 * e), 14);
		expect(r.contributions.blockage.dCL).toBeCloseTo(-0.5 * 2 * e, 14);
		expect(r.alphaDeg).toBe(2);
	});
	it('Maskell from aspect ratio estimates CDi = CL²/(π·AR·e)', () => {
		const r = correctTunnelPoint(
			{ alphaDeg: 14, CL: 1.1, CD: 0.2, q: 800 },
			{ jet: 'closed', testSectionArea: 4, delta: 0.125, wakeMethod: 'maskell', maskell: { CD0: 0.012, aspectRatio: 6, e: 0.9 } },
			{ area: 0.4 }
		);
		const CDi = (1.1 * 1.1) / (Math.PI * 6 * 0.9);
		expect(r.contributions.wakeBlockage.epsilon).toBeCloseTo(0.025 * 0.012 + 0.125 * (0.2 - CDi - 0.012), 14);
	});
});

describe('tunnel corrections: bad input', () => {
	const s: TunnelSettings = { jet: 'closed', testSectionArea: 4, delta: 0.125 };
	it.each([
		[() => correctTunnelPoint({ alphaDeg: NaN, CL: 1, CD: 0, q: 1 }, s, { area: 1 }), 'tunnel correction: alphaDeg must be a finite number (got NaN)'],
		[() => correctTunnelPoint({ alphaDeg: 1, CL: 1, CD: 0, q: 1 }, { ...s, testSectionArea: 0 }, { area: 1 }), 'tunnel correction: test-section area must be > 0 (got 0)'],
		[() => correctTunnelPoint({ alphaDeg: 1, CL: 1, CD: 0, q: 1 }, { ...s, delta: -0.1 }, { area: 1 }), 'delta is a magnitude and must be ≥ 0'],
		[() => correctTunnelPoint({ alphaDeg: 1, CL: 1, CD: 0, q: 1 }, { ...s, jet: 'slotted' as never }, { area: 1 }), 'jet must be closed or open (got slotted)'],
		[() => correctTunnelPoint({ alphaDeg: 1, CL: 1, CD: 0, q: 1 }, { ...s, wakeMethod: 'maskell' }, { area: 1 }), 'Maskell wake blockage needs'],
		[() => correctTunnelPoint({ alphaDeg: 1, CL: 1, CD: 0, q: -5 }, s, { area: 1 }), 'tunnel correction: q must be > 0 (got -5)']
	] as Array<[() => unknown, string]>)('%#', (fn, msg) => {
		expect(fn).toThrow(msg);
	});
});
