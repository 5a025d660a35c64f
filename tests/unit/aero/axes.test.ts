import { describe, expect, it } from 'vitest';
import { bodyToWind, windToBody, transferMoments, tareAt, subtractTare, windCoefficients } from '$lib/aero/axes';

describe('body to wind axes (Etkin & Reid, Dynamics of Flight, ch. 4; Barlow, Rae & Pope, 3rd ed., balance data; chapter from memory)', () => {
	it.each([
		// N, A, α: L = N cosα − A sinα, D = N sinα + A cosα (hand-evaluated)
		[100, 5, 0, 100, 5],
		[100, 5, 90, -5, 100],
		[200, -4, 30, 200 * Math.cos(Math.PI / 6) + 4 * 0.5, 200 * 0.5 - 4 * Math.cos(Math.PI / 6)]
	])('N = %f, A = %f, α = %f° → L = %f, D = %f (1e-12)', (N, A, a, L, D) => {
		const w = bodyToWind({ normal: N, axial: A }, a);
		expect(w.lift).toBeCloseTo(L, 12);
		expect(w.drag).toBeCloseTo(D, 12);
	});
	it('rotation preserves the force magnitude with sideslip (orthogonal transform)', () => {
		const c = { normal: 120, axial: 8, side: -6 };
		const w = bodyToWind(c, 7, 4);
		expect(Math.hypot(w.lift, w.drag, w.sideForce)).toBeCloseTo(Math.hypot(120, 8, 6), 10);
	});
	it('windToBody inverts bodyToWind at β = 0', () => {
		const w = bodyToWind({ normal: 50, axial: 3 }, 12);
		const b = windToBody(w, 12);
		expect(b.normal).toBeCloseTo(50, 12);
		expect(b.axial).toBeCloseTo(3, 12);
	});
	it('stability-axis moments: rolling/yawing rotate by α (Etkin & Reid ch. 4)', () => {
		const w = bodyToWind({ normal: 0, axial: 0, rolling: 10, yawing: 0 }, 90);
		expect(w.yawing).toBeCloseTo(-10, 12);
		expect(w.rolling).toBeCloseTo(0, 12);
	});
});

describe('moment transfer M_P = M_B + r × F (statics)', () => {
	it('balance centre 0.1 m ahead of the reference point: normal force 100 N adds +10 N·m nose-up', () => {
		const r = transferMoments({ normal: 100, axial: 0, pitching: 2 }, { dx: 0.1 });
		expect(r.pitching).toBeCloseTo(12, 12);
	});
	it('offset below the reference point: axial (drag) force 20 N, dz = 0.05 m gives −1 N·m (nose-down)', () => {
		const r = transferMoments({ normal: 0, axial: 20 }, { dx: 0, dz: 0.05 });
		expect(r.pitching).toBeCloseTo(-1, 12);
	});
	it('side offset: normal force on the right of the reference point rolls left (negative)', () => {
		const r = transferMoments({ normal: 100, axial: 0 }, { dx: 0, dy: 0.2 });
		expect(r.rolling).toBeCloseTo(-20, 12);
	});
});

describe('weight tares interpolated in α (Barlow, Rae & Pope, 3rd ed., balance data; chapter from memory)', () => {
	const tare = [
		{ alphaDeg: -4, normal: 1, axial: 0.2, pitching: -0.1 },
		{ alphaDeg: 0, normal: 2, axial: 0.3, pitching: 0 },
		{ alphaDeg: 8, normal: 6, axial: 0.5, pitching: 0.4 }
	];
	it('linear interpolation between wind-off points', () => {
		const t = tareAt(tare, 4);
		expect(t.normal).toBeCloseTo(4, 12);
		expect(t.axial).toBeCloseTo(0.4, 12);
		expect(t.pitching).toBeCloseTo(0.2, 12);
	});
	it('subtraction', () => {
		const p = subtractTare({ alphaDeg: -2, normal: 50, axial: 2, pitching: 1 }, tare);
		expect(p.normal).toBeCloseTo(48.5, 12);
		expect(p.axial).toBeCloseTo(1.75, 12);
		expect(p.pitching).toBeCloseTo(1.05, 12);
	});
	it.each([
		[() => tareAt(tare, 10), 'tare: α = 10° is outside the wind-off run (-4° to 8°)'],
		[() => tareAt([], 0), 'tare: the wind-off run has no points'],
		[() => tareAt([{ alphaDeg: 0, normal: 1, axial: 0 }, { alphaDeg: 0, normal: 2, axial: 0 }], 0), 'tare: two wind-off points at α = 0°'],
		[() => tareAt(tare, NaN), 'tare: alphaDeg must be a finite number (got NaN)']
	] as Array<[() => unknown, string]>)('bad input %#', (fn, msg) => {
		expect(fn).toThrow(msg);
	});
});

describe('coefficients', () => {
	it('CL = L/(qS), Cm = M/(qSc), Cl = L/(qSb) (definitions)', () => {
		const c = windCoefficients({ lift: 500, drag: 25, sideForce: 0, rolling: 10, pitching: -20, yawing: 0 }, { q: 1000, area: 0.5, chord: 0.25, span: 2 });
		expect(c.CL).toBeCloseTo(1, 12);
		expect(c.CD).toBeCloseTo(0.05, 12);
		expect(c.Cm).toBeCloseTo(-0.16, 12);
		expect(c.Cl).toBeCloseTo(0.01, 12);
	});
	it('refuses q ≤ 0', () => {
		expect(() => windCoefficients({ lift: 1, drag: 0, sideForce: 0, rolling: 0, pitching: 0, yawing: 0 }, { q: 0, area: 1, chord: 1, span: 1 })).toThrow(
			'coefficients: q, area, chord and span must be > 0 (got 0, 1, 1, 1)'
		);
	});
});
