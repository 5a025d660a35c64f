/**
 * Large tunnel runs must reduce without running out of heap or call stack:
 * the Theil–Sen line of the linear-range search used to allocate n² slots
 * (20,000 points took the server out of heap) and Math.min(...array) spreads
 * overflowed the stack at 300,000 points. No timing here (speed is measured
 * by a benchmark script); only that the reduction completes with sane fits.
 *
 * Synthetic run (invented, demo only): CL = 0.1·(α + 2°) up to α = 12°, then
 * a parabolic stall CL = 1.4 − 0.05(α − 12)²; CD = 0.02 + 0.05·CL²; balance
 * noise of ±0.001 in CL. Lift and drag given in wind axes with q = 500 Pa,
 * S = 0.2 m², so L = 100·CL N.
 */
import { describe, it, expect } from 'vitest';
import { reduce, type Columns, type ReduceContext } from '../../../src/lib/server/runs/reduce';

const DEG = Math.PI / 180;

function synthetic(n: number): { cols: Columns; ctx: ReduceContext } {
	const a = new Float64Array(n), L = new Float64Array(n), D = new Float64Array(n), M = new Float64Array(n), q = new Float64Array(n);
	let seed = 7;
	const rnd = () => (seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648 - 0.5;
	for (let i = 0; i < n; i++) {
		const ad = -4 + (20 * i) / (n - 1);
		const cl = ad < 12 ? 0.1 * (ad + 2) : 1.4 - 0.05 * (ad - 12) ** 2;
		a[i] = ad * DEG;
		q[i] = 500;
		L[i] = 100 * cl + 0.2 * rnd();
		D[i] = 100 * (0.02 + 0.05 * cl * cl) + 0.02 * rnd();
		M[i] = -0.05 * cl * 20;
	}
	return {
		cols: new Map<string, ArrayLike<number>>([['alpha', a], ['lift', L], ['drag', D], ['pitching_moment', M], ['q', q]]),
		ctx: { kind: 'tunnel', rowNumbers: Uint32Array.from({ length: n }, (_, i) => i + 2), facility: null, reference: { area: 0.2, span: 1.0, chord: 0.2, momentRef: null }, tare: null }
	};
}

function checkSane(n: number) {
	const { cols, ctx } = synthetic(n);
	const out = reduce(cols, ctx, {});
	expect(out.points).toHaveLength(n);
	const f = out.fits as any;
	expect(f.liftCurve.status).toBe('fitted');
	expect(f.liftCurve.liftSlopePerDeg.value).toBeCloseTo(0.1, 3);
	expect(f.liftCurve.alphaZeroLiftDeg.value).toBeCloseTo(-2, 1);
	// The stall region is trimmed: the linear range ends near 12°, not at 16°.
	expect(f.liftCurve.linearRange.alphaMaxDeg).toBeGreaterThan(10);
	expect(f.liftCurve.linearRange.alphaMaxDeg).toBeLessThan(13.5);
	expect(f.liftCurve.linearRange.alphaMinDeg).toBeCloseTo(-4, 1);
	expect(f.liftCurve.CLmax).toBeCloseTo(1.4, 2);
	expect(f.polar.status).toBe('fitted');
	expect(f.polar.CD0.value).toBeCloseTo(0.02, 3);
	expect(f.polar.k.value).toBeCloseTo(0.05, 2);
	expect(f.offsetPolar.status).toBe('fitted');
	expect(f.liftCurve.curve).toHaveLength(41);
}

describe('reduction of large tunnel runs', () => {
	it('reduces 20,000 points', () => checkSane(20_000));
	it('reduces 300,000 points', () => checkSane(300_000), 300_000);
});
