import { describe, expect, it } from 'vitest';
import { solveNonlinearLiftingLine, sweepToStall, type SectionTable } from '$lib/aero/nonlinear-lifting-line';
import { solveLiftingLine } from '$lib/aero/lifting-line';
import { taperedWing, type Wing } from '$lib/aero/planform';

const DEG = Math.PI / 180;
// Invented section data of our own scenario (not a published aerofoil):
// linear to 10°, peak cl ≈ 1.34 near 14°, gentle fall after.
const A = [-10, -5, 0, 5, 10, 12, 13, 14, 15, 16, 18, 20, 25, 30, 40];
const CL = [-1.05, -0.525, 0, 0.525, 1.05, 1.22, 1.3, 1.34, 1.33, 1.28, 1.15, 1.05, 0.95, 0.9, 0.85];
const CD = A.map((a) => 0.008 + 0.0001 * a * a);
const stallTable: SectionTable = { eta: 0, alphaDeg: A, cl: CL, cd: CD };

describe('nonlinear lifting line = linear Glauert solution below stall (issue 3: 1e-4 in CL)', () => {
	const wing: Wing = { span: 8, stations: [{ eta: 0, chord: 1.33, alphaZeroLiftDeg: -1.5 }, { eta: 1, chord: 0.67, twistDeg: -2, alphaZeroLiftDeg: -1.5 }] };
	const a0 = 2 * Math.PI;
	const linear: SectionTable = { eta: 0, alphaDeg: [-20, 30], cl: [-20, 30].map((a) => a0 * (a + 1.5) * DEG) };
	it.each([
		[-2, 'pchip'],
		[3, 'pchip'],
		[8, 'linear'],
		[11, 'pchip']
	] as const)('α = %f° (%s interpolation)', (alphaDeg, interpolation) => {
		const nl = solveNonlinearLiftingLine(wing, [linear], { alphaDeg }, { terms: 40, interpolation });
		const ll = solveLiftingLine(wing, { alphaDeg }, { terms: 40 });
		expect(nl.converged).toBe(true);
		expect(Math.abs(nl.CL - ll.CL)).toBeLessThan(1e-4);
		expect(Math.abs(nl.CDi - ll.CDi)).toBeLessThan(1e-6);
		expect(nl.stalledEta).toEqual([]);
	});
	it('two tables blended in η reproduce a linearly varying α_L0 (1e-4 in CL)', () => {
		const w: Wing = { span: 8, stations: [{ eta: 0, chord: 1.33, alphaZeroLiftDeg: -2 }, { eta: 1, chord: 0.67, alphaZeroLiftDeg: 0 }] };
		const root: SectionTable = { eta: 0, alphaDeg: [-20, 30], cl: [-20, 30].map((a) => a0 * (a + 2) * DEG) };
		const tip: SectionTable = { eta: 1, alphaDeg: [-20, 30], cl: [-20, 30].map((a) => a0 * a * DEG) };
		const nl = solveNonlinearLiftingLine(w, [tip, root], { alphaDeg: 4 }, { terms: 40 });
		expect(Math.abs(nl.CL - solveLiftingLine(w, { alphaDeg: 4 }, { terms: 40 }).CL)).toBeLessThan(1e-4);
	});
	it('a one-sided flap: rolling moment matches the linear solver (1e-4)', () => {
		const w: Wing = { ...wing, segments: [{ etaStart: 0.5, etaEnd: 0.9, deltaAlphaZeroLiftDeg: -4, side: 'right' }] };
		const nl = solveNonlinearLiftingLine(w, [linear], { alphaDeg: 3 }, { terms: 40 });
		const ll = solveLiftingLine(w, { alphaDeg: 3 }, { terms: 40 });
		expect(Math.abs(nl.Cl - ll.Cl)).toBeLessThan(1e-4);
		expect(nl.Cl).toBeLessThan(0);
	});
});

describe('sweep to stall and CLmax (Anderson, Fundamentals of Aerodynamics, ch. 5, nonlinear lifting line)', () => {
	it('CLmax of a finite wing is below the section cl,max and occurs at a higher root α (finite-wing effect, Anderson ch. 5)', () => {
		const s = sweepToStall(taperedWing(8, 8, 0.5), [stallTable], { terms: 40 });
		expect(s.peakFound).toBe(true);
		expect(s.CLmax).toBeLessThan(1.34);
		expect(s.CLmax).toBeGreaterThan(1.1);
		expect(s.alphaAtCLmaxDeg).toBeGreaterThan(14);
		expect(s.stallOnset).not.toBeNull();
		expect(s.stallOnset!.alphaDeg).toBeLessThanOrEqual(s.alphaAtCLmaxDeg + 0.5);
	});
	it('stall begins inboard on a rectangular wing and outboard on a highly tapered one (Anderson ch. 5; Raymer, wing-geometry discussion of taper — qualitative, from memory)', () => {
		const rect = sweepToStall(taperedWing(8, 8, 1), [stallTable], { terms: 40 });
		const tapered = sweepToStall(taperedWing(8, 8, 0.2), [stallTable], { terms: 40 });
		expect(rect.stallOnset!.eta).toBeLessThan(0.5);
		expect(tapered.stallOnset!.eta).toBeGreaterThan(0.6);
	});
	it('washout moves stall onset inboard (common practice, no source)', () => {
		const plain = sweepToStall(taperedWing(8, 8, 0.3), [stallTable], { terms: 40 });
		const twisted = sweepToStall({ span: 8, stations: [{ eta: 0, chord: 1.538 }, { eta: 1, chord: 0.462, twistDeg: -4 }] }, [stallTable], { terms: 40 });
		expect(twisted.stallOnset!.eta).toBeLessThan(plain.stallOnset!.eta);
	});
	it('profile drag from the cd table: CDp = (1/S)∫c·cd dy; with a uniform cd it equals that cd (1e-3 relative)', () => {
		const flat: SectionTable = { eta: 0, alphaDeg: [-20, 30], cl: [-20, 30].map((a) => 0.1 * a), cd: [0.01, 0.01] };
		const r = solveNonlinearLiftingLine(taperedWing(8, 8, 0.5), [flat], { alphaDeg: 4 }, { terms: 60 });
		expect(Math.abs(r.CDp! - 0.01) / 0.01).toBeLessThan(1e-3);
	});
});

describe('nonlinear lifting line: bad input', () => {
	const w = taperedWing(8, 8, 0.5);
	it.each([
		[() => solveNonlinearLiftingLine(w, [], { alphaDeg: 2 }), 'nonlinear lifting line: at least one section table is needed (got none)'],
		[() => solveNonlinearLiftingLine(w, [{ eta: 0, alphaDeg: [0], cl: [0] }], { alphaDeg: 2 }), 'section table 0: needs at least 2 points (got 1)'],
		[() => solveNonlinearLiftingLine(w, [{ eta: 0, alphaDeg: [0, 0], cl: [0, 1] }], { alphaDeg: 2 }), 'section table 0: alphaDeg must increase (index 1: 0 after 0)'],
		[() => solveNonlinearLiftingLine(w, [{ eta: 0, alphaDeg: [0, 5], cl: [0] }], { alphaDeg: 2 }), 'section table 0: cl has 1 values but alphaDeg has 2'],
		[() => solveNonlinearLiftingLine(w, [{ eta: 0, alphaDeg: [0, 5], cl: [0, NaN] }], { alphaDeg: 2 }), 'section table 0: cl[1] must be a finite number (got NaN)'],
		[() => solveNonlinearLiftingLine(w, [{ eta: 0, alphaDeg: [-5, 5], cl: [-0.5, 0.5] }], { alphaDeg: 12 }), /station \d+ \(η = .*\): effective α .*° is outside its section table \(-5.000° to 5.000°\)/],
		[() => solveNonlinearLiftingLine(w, [stallTable], { alphaDeg: NaN }), 'nonlinear lifting line: alphaDeg must be a finite number (got NaN)'],
		[() => sweepToStall(w, [stallTable], { alphaStepDeg: 0 }), 'stall sweep: alphaStepDeg must be > 0 (got 0)']
	] as Array<[() => unknown, string | RegExp]>)('%#', (fn, msg) => {
		expect(fn).toThrow(msg);
	});
});
