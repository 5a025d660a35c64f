import { describe, expect, it } from 'vitest';
import { balanceUncertainty, combine, numericSensitivities } from '$lib/aero/uncertainty';

const DEG = Math.PI / 180;
const reduce = (x: Record<string, number>) => {
	const a = x.alphaDeg * DEG;
	return {
		CL: (x.normal * Math.cos(a) - x.axial * Math.sin(a)) / (x.q * x.area),
		CD: (x.normal * Math.sin(a) + x.axial * Math.cos(a)) / (x.q * x.area)
	};
};

describe('Taylor-series propagation (AIAA S-071A-1999; ASME PTC 19.1; Coleman & Steele ch. 3)', () => {
	const point = { normal: 600, axial: 30, q: 1200, area: 0.5, alphaDeg: 6 };
	const u = { normal: { systematic: 1.2, random: 0.8 }, axial: { systematic: 0.3, random: 0.2 }, q: { systematic: 6, random: 3 }, area: 0.001, alphaDeg: 0.05 };
	it('analytic sensitivities equal central differences of the reduction equations (1e-6 relative)', () => {
		const r = balanceUncertainty(point, u);
		const nCL = numericSensitivities((x) => reduce(x).CL, point);
		const nCD = numericSensitivities((x) => reduce(x).CD, point);
		for (const k of Object.keys(nCL)) {
			expect(r.uCL.contributions[k].sensitivity).toBeCloseTo(nCL[k], 9);
			expect(Math.abs(r.uCD.contributions[k].sensitivity - nCD[k])).toBeLessThan(1e-6 * Math.max(1e-9, Math.abs(nCD[k])) + 1e-12);
		}
	});
	it('RSS of systematic and random parts and U = 2·u_c (hand-evaluated)', () => {
		const r = balanceUncertainty(point, u);
		const qS = 1200 * 0.5;
		const a = 6 * DEG;
		const CL = r.CL;
		const CD = r.CD;
		const b2 = (Math.cos(a) / qS * 1.2) ** 2 + (Math.sin(a) / qS * 0.3) ** 2 + (CL / 1200 * 6) ** 2 + (CL / 0.5 * 0.001) ** 2 + (CD * DEG * 0.05) ** 2;
		const s2 = (Math.cos(a) / qS * 0.8) ** 2 + (Math.sin(a) / qS * 0.2) ** 2 + (CL / 1200 * 3) ** 2;
		expect(r.uCL.systematic).toBeCloseTo(Math.sqrt(b2), 14);
		expect(r.uCL.random).toBeCloseTo(Math.sqrt(s2), 14);
		expect(r.uCL.standard).toBeCloseTo(Math.sqrt(b2 + s2), 14);
		expect(r.uCL.expanded).toBeCloseTo(2 * Math.sqrt(b2 + s2), 14);
		const shares = Object.values(r.uCL.contributions).reduce((s, c) => s + c.share, 0);
		expect(shares).toBeCloseTo(1, 12);
		expect(r.uAlphaDeg.expanded).toBeCloseTo(0.1, 14);
	});
	it('a Monte Carlo of the reduction agrees with first-order u(CL) within 5 % (Coleman & Steele ch. 3, cross-check)', () => {
		let seed = 12345;
		const rnd = () => ((seed = (seed * 16807) % 2147483647) / 2147483647);
		const gauss = () => Math.sqrt(-2 * Math.log(rnd())) * Math.cos(2 * Math.PI * rnd());
		const sd = { normal: Math.hypot(1.2, 0.8), axial: Math.hypot(0.3, 0.2), q: Math.hypot(6, 3), area: 0.001, alphaDeg: 0.05 };
		const M = 20000;
		let s = 0, ss = 0;
		for (let i = 0; i < M; i++) {
			const x: Record<string, number> = {};
			for (const k of Object.keys(point) as Array<keyof typeof point>) x[k] = point[k] + sd[k] * gauss();
			const v = reduce(x).CL;
			s += v;
			ss += v * v;
		}
		const mcStd = Math.sqrt(ss / M - (s / M) ** 2);
		const r = balanceUncertainty(point, u);
		expect(Math.abs(mcStd - r.uCL.standard) / r.uCL.standard).toBeLessThan(0.05);
	});
	it('Cm = M/(qSc) with its uncertainty', () => {
		const r = balanceUncertainty({ ...point, pitching: -15, chord: 0.25 }, { pitching: 0.1 });
		expect(r.Cm).toBeCloseTo(-15 / (600 * 0.25), 14);
		expect(r.uCm!.standard).toBeCloseTo(0.1 / (600 * 0.25), 14);
	});
	it.each([
		[() => balanceUncertainty({ ...point, q: 0 }, {}), 'uncertainty: q and area must be > 0 (got 0, 0.5)'],
		[() => balanceUncertainty(point, { normal: -1 }), 'uncertainty: normal must be ≥ 0 (got -1)'],
		[() => combine({ x: NaN }, {}), 'uncertainty: sensitivity of x must be a finite number (got NaN)']
	] as Array<[() => unknown, string]>)('bad input %#', (fn, msg) => expect(fn).toThrow(msg));
});
