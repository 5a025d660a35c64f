import { describe, it, expect } from 'vitest';
import { calibrateLiftingLine, calibratedWing, type CalibrationObservation } from '$lib/aero/calibration';
import { liftCurve } from '$lib/aero/lifting-line';
import { fitLiftCurve } from '$lib/aero/polar-fit';
import { ellipticWing, taperedWing } from '$lib/aero/planform';

const DEG = Math.PI / 180;
const alphas = [-4, -2, 0, 2, 4, 6, 8, 10];

/** Deterministic pseudo-noise (no Math.random in tests): a fixed sine sequence. */
const wiggle = (i: number, amp: number) => amp * Math.sin(1.7 * i + 0.3);

describe('calibrateLiftingLine', () => {
	it('recovers the a0 scale and alpha_L0 shift used to generate the data (self-consistency, 1e-8)', () => {
		const wing = taperedWing(1.0, 0.125, 0.5, { a0: 6.0, twistDeg: 0 });
		wing.stations[1].twistDeg = -2;
		const truth = calibratedWing(wing, 0.9, -1.5);
		const lc = liftCurve(truth, alphas);
		const obs: CalibrationObservation[] = lc.points.map((p) => ({ alphaDeg: p.alphaDeg, CL: p.CL }));
		const r = calibrateLiftingLine(wing, obs);
		expect(r.a0Scale.value).toBeCloseTo(0.9, 8);
		expect(r.alphaZeroLiftShiftDeg.value).toBeCloseTo(-1.5, 8);
		expect(r.effectiveA0.value).toBeCloseTo(5.4, 7);
		expect(r.rmsResidual).toBeLessThan(1e-10);
		expect(r.iterations).toBeLessThan(20);
	});

	it('matches the elliptic closed form a = a0/(1 + a0/(pi AR)) (Anderson, Fundamentals of Aerodynamics, ch. 5; 0.5 %)', () => {
		// "Measured" data: the exact elliptic-wing lift curve of AR 8 with a0 = 5.7 /rad, alpha_L0 = -2 deg.
		const AR = 8;
		const a0 = 5.7;
		const a = a0 / (1 + a0 / (Math.PI * AR));
		const obs = alphas.map((al) => ({ alphaDeg: al, CL: a * (al + 2) * DEG }));
		const wing = ellipticWing(8, 8, 101); // span 8 m, area 8 m² → AR 8, a0 = 2π by default
		const r = calibrateLiftingLine(wing, obs);
		expect(Math.abs(r.effectiveA0.value - a0) / a0).toBeLessThan(0.005);
		expect(r.alphaZeroLiftShiftDeg.value).toBeCloseTo(-2, 2);
		expect(r.alphaZeroLiftDeg).toBeCloseTo(-2, 2);
		expect(Math.abs(r.liftSlope - a) / a).toBeLessThan(0.005);
	});

	it("gives the same alpha_L0 interval as the linear lift-curve fit, the model being a reparametrised straight line (Montgomery & Runger ch. 11; 1e-4 relative)", () => {
		const wing = taperedWing(1.0, 0.125, 0.5, { a0: 6.0 });
		const truth = calibratedWing(wing, 0.95, -1);
		const lc = liftCurve(truth, alphas);
		const obs = lc.points.map((p, i) => ({ alphaDeg: p.alphaDeg, CL: p.CL + wiggle(i, 0.004) }));
		const r = calibrateLiftingLine(wing, obs);
		const lin = fitLiftCurve(alphas, obs.map((o) => o.CL), { linearTolerance: 1 });
		expect(lin.linearRange.indices.length).toBe(alphas.length);
		// Same straight line, so the same zero-lift angle and the same standard error.
		expect(r.alphaZeroLiftDeg).toBeCloseTo(lin.alphaZeroLiftDeg.value, 6);
		expect(r.alphaZeroLiftShiftDeg.standardError / lin.alphaZeroLiftDeg.standardError).toBeCloseTo(1, 4);
		expect(r.dof).toBe(lin.dof);
		expect(r.alphaZeroLiftShiftDeg.ci95[0]).toBeLessThan(-1);
		expect(r.alphaZeroLiftShiftDeg.ci95[1]).toBeGreaterThan(-1.05);
	});

	it('fits a span-efficiency factor and profile drag exactly when CD = CD0 + CDi/kappa', () => {
		const wing = taperedWing(1.0, 0.125, 0.4, { a0: 6.0 });
		const lc = liftCurve(wing, alphas);
		const obs = lc.points.map((p) => ({ alphaDeg: p.alphaDeg, CL: p.CL, CD: 0.009 + p.CDi / 0.88 }));
		const r = calibrateLiftingLine(wing, obs, { fitSpanEfficiency: true });
		expect(r.spanEfficiencyFactor!.value).toBeCloseTo(0.88, 9);
		expect(r.profileDragCD0!.value).toBeCloseTo(0.009, 10);
	});

	it('handles points at several Mach numbers (Prandtl–Glauert per group)', () => {
		const wing = taperedWing(1.0, 0.125, 0.5, { a0: 6.0 });
		const truth = calibratedWing(wing, 1.05, 0.5);
		const obs: CalibrationObservation[] = [];
		for (const mach of [0.1, 0.3]) {
			const lc = liftCurve(truth, alphas, { mach });
			lc.points.forEach((p) => obs.push({ alphaDeg: p.alphaDeg, CL: p.CL, mach }));
		}
		const r = calibrateLiftingLine(wing, obs);
		expect(r.a0Scale.value).toBeCloseTo(1.05, 8);
		expect(r.alphaZeroLiftShiftDeg.value).toBeCloseTo(0.5, 8);
	});

	it.each([
		[[{ alphaDeg: 0, CL: 0.1 }, { alphaDeg: 2, CL: 0.3 }], /at least 3 observations/],
		[[{ alphaDeg: 2, CL: 0.1 }, { alphaDeg: 2, CL: 0.3 }, { alphaDeg: 2, CL: 0.2 }], /alphaDeg does not vary/],
		[[{ alphaDeg: 0, CL: 0.1 }, { alphaDeg: NaN, CL: 0.3 }, { alphaDeg: 2, CL: 0.2 }], /observation 1: alphaDeg/],
		[[{ alphaDeg: 0, CL: 0.1, mach: 1.2 }, { alphaDeg: 1, CL: 0.3 }, { alphaDeg: 2, CL: 0.2 }], /observation 0: mach/]
	])('refuses bad input with a message naming the problem (%#)', (obs, message) => {
		const wing = taperedWing(1.0, 0.125, 0.5);
		expect(() => calibrateLiftingLine(wing, obs as CalibrationObservation[])).toThrow(message);
	});

	it('asks for CD when the span-efficiency fit is requested', () => {
		const wing = taperedWing(1.0, 0.125, 0.5);
		const obs = alphas.map((a) => ({ alphaDeg: a, CL: 0.08 * a }));
		expect(() => calibrateLiftingLine(wing, obs, { fitSpanEfficiency: true })).toThrow(/observation 0: CD is needed/);
	});
});
