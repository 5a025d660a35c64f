import { describe, expect, it } from 'vitest';
import { linearRegression, rSquared, linearRegressionLine } from 'simple-statistics';
import { PolynomialRegression } from 'ml-regression';
import {
	studentTQuantile,
	studentTCdf,
	regularizedIncompleteBeta,
	logGamma,
	fitLiftCurve,
	fitParabolicPolar,
	fitOffsetPolar,
	meanResponseBand
} from '$lib/aero/polar-fit';

describe('Student t quantiles (Montgomery & Runger, Applied Statistics and Probability for Engineers, appendix t table, table number from memory; any t table), ±5e-4 (table digits)', () => {
	it.each([
		[0.975, 10, 2.228],
		[0.975, 1, 12.706],
		[0.975, 2, 4.303],
		[0.975, 5, 2.571],
		[0.95, 5, 2.015],
		[0.995, 20, 2.845],
		[0.975, 30, 2.042],
		[0.99, 15, 2.602],
		[0.975, 120, 1.98],
		[0.9, 3, 1.638]
	])('t_%f(%i) = %f', (p, dof, t) => {
		expect(Math.abs(studentTQuantile(p, dof) - t)).toBeLessThan(5e-4);
	});
	it('large ν tends to the normal quantile 1.959964 (standard normal table), 1e-5', () => {
		expect(Math.abs(studentTQuantile(0.975, 1e7) - 1.959964)).toBeLessThan(1e-5);
	});
	it.each([0.6, 0.9, 0.975, 0.999])('closed forms: ν = 1 (Cauchy) t = tan(π(p − ½)); ν = 2 t = (2p−1)/√(2p(1−p)), p = %f, 1e-9 relative', (p) => {
		expect(studentTQuantile(p, 1)).toBeCloseTo(Math.tan(Math.PI * (p - 0.5)), 8);
		const t2 = (2 * p - 1) / Math.sqrt(2 * p * (1 - p));
		expect(Math.abs(studentTQuantile(p, 2) - t2) / t2).toBeLessThan(1e-9);
	});
	it('symmetry and the CDF inverse', () => {
		expect(studentTQuantile(0.025, 10)).toBeCloseTo(-studentTQuantile(0.975, 10), 12);
		expect(studentTCdf(studentTQuantile(0.9, 7), 7)).toBeCloseTo(0.9, 12);
	});
	it('incomplete beta identities: I_x(a,1) = x^a, I_x(1,b) = 1 − (1−x)^b, I_½(a,a) = ½ (Abramowitz & Stegun 26.5)', () => {
		expect(regularizedIncompleteBeta(0.3, 2.5, 1)).toBeCloseTo(0.3 ** 2.5, 13);
		expect(regularizedIncompleteBeta(0.3, 1, 4)).toBeCloseTo(1 - 0.7 ** 4, 13);
		expect(regularizedIncompleteBeta(0.5, 7.3, 7.3)).toBeCloseTo(0.5, 13);
	});
	it('ln Γ: Γ(5) = 24, Γ(½) = √π (exact), 1e-13', () => {
		expect(logGamma(5)).toBeCloseTo(Math.log(24), 13);
		expect(logGamma(0.5)).toBeCloseTo(0.5 * Math.log(Math.PI), 13);
	});
	it.each([
		[() => studentTQuantile(1, 5), 'Student t: probability must be within (0, 1) (got 1)'],
		[() => studentTQuantile(0.9, 0), 'Student t: degrees of freedom must be > 0 (got 0)']
	] as Array<[() => unknown, string]>)('bad input %#', (fn, msg) => expect(fn).toThrow(msg));
});

// Invented lift curve: CL = 0.1(α + 2) with a small deterministic scatter, stalling above 10°.
const alpha = [-4, -2, 0, 2, 4, 6, 8, 10, 12, 14, 16];
const scatter = [0.002, -0.003, 0.001, 0.0025, -0.002, 0.0015, -0.001, 0.002, 0, 0, 0];
const CLcurve = alpha.map((a, i) => (a <= 10 ? 0.1 * (a + 2) : a === 12 ? 1.3 : a === 14 ? 1.36 : 1.3) + scatter[i]);

describe('lift-curve fit', () => {
	it('slope and intercept agree with simple-statistics linearRegression on the linear range (general-purpose reference library), 1e-12', () => {
		const f = fitLiftCurve(alpha, CLcurve);
		expect(f.linearRange.alphaMinDeg).toBe(-4);
		expect(f.linearRange.alphaMaxDeg).toBe(10);
		const pts = f.linearRange.indices.map((i) => [alpha[i], CLcurve[i]]);
		const ref = linearRegression(pts);
		expect(f.liftSlopePerDeg.value).toBeCloseTo(ref.m, 12);
		expect(f.alphaZeroLiftDeg.value).toBeCloseTo(-ref.b / ref.m, 10);
		expect(f.r2).toBeCloseTo(rSquared(pts, linearRegressionLine(ref)), 12);
		expect(f.liftSlopePerRad.value).toBeCloseTo((ref.m * 180) / Math.PI, 9);
	});
	it('standard error of the slope s/√Sxx and the 95 % interval ±t₀.₉₇₅(n−2)·SE (Montgomery & Runger ch. 11), 1e-10', () => {
		const f = fitLiftCurve(alpha, CLcurve);
		const xs = f.linearRange.indices.map((i) => alpha[i]);
		const ys = f.linearRange.indices.map((i) => CLcurve[i]);
		const n = xs.length;
		const xb = xs.reduce((a, b) => a + b) / n;
		const Sxx = xs.reduce((a, x) => a + (x - xb) ** 2, 0);
		const ref = linearRegression(xs.map((x, i) => [x, ys[i]]));
		const sse = xs.reduce((a, x, i) => a + (ys[i] - (ref.m * x + ref.b)) ** 2, 0);
		const se = Math.sqrt(sse / (n - 2) / Sxx);
		expect(f.liftSlopePerDeg.standardError).toBeCloseTo(se, 10);
		const t = studentTQuantile(0.975, n - 2);
		expect(f.liftSlopePerDeg.ci95[1] - f.liftSlopePerDeg.value).toBeCloseTo(t * se, 10);
		expect(f.dof).toBe(n - 2);
	});
	it('CLmax and α at CLmax are the measured peak', () => {
		const f = fitLiftCurve(alpha, CLcurve);
		expect(f.CLmax).toBe(1.36);
		expect(f.alphaAtCLmaxDeg).toBe(14);
		expect(f.CLmaxAtEdge).toBe(false);
	});
	it('an interior outlier is reported, not dropped, and does not trim the range', () => {
		const bad = [...CLcurve];
		bad[4] += 0.12;
		const f = fitLiftCurve(alpha, bad);
		expect(f.outliers.map((o) => o.index)).toEqual([4]);
		expect(f.linearRange.indices).toContain(4);
		expect(f.linearRange.alphaMaxDeg).toBe(10);
	});
	it('the input order does not matter', () => {
		const perm = [5, 0, 10, 3, 8, 1, 6, 9, 2, 7, 4];
		const f = fitLiftCurve(perm.map((i) => alpha[i]), perm.map((i) => CLcurve[i]));
		expect(f.liftSlopePerDeg.value).toBeCloseTo(fitLiftCurve(alpha, CLcurve).liftSlopePerDeg.value, 12);
	});
	it.each([
		[[1, 2], [0.1, 0.2], 'lift-curve fit: need at least 3 points (got 2)'],
		[[], [], 'lift-curve fit: need at least 3 points (got 0)'],
		[[1, 2, 3], [0.1, NaN, 0.3], 'lift-curve fit: CL[1] must be a finite number (got NaN)'],
		[[1, 2, 3], [0.1, 0.2], 'lift-curve fit: alphaDeg has 3 values but CL has 2'],
		[[2, 2, 2], [0.1, 0.2, 0.3], 'lift-curve fit: the regressor does not vary, so the fit is singular']
	])('bad input %#', (a, c, msg) => {
		expect(() => fitLiftCurve(a, c)).toThrow(msg);
	});
});

describe('drag polars', () => {
	// Invented polar: CD = 0.025 + 0.045·CL² exactly (AR 8 → e = 1/(π·8·0.045) = 0.8842).
	const CL = [-0.2, 0, 0.2, 0.4, 0.6, 0.8, 1.0, 1.2];
	const CD = CL.map((c) => 0.025 + 0.045 * c * c);
	it('parabolic polar recovers CD0, k and e = 1/(π·AR·k) (Anderson ch. 5; Kimberlin ch. 8), 1e-10', () => {
		const f = fitParabolicPolar(CL, CD, 8);
		expect(f.CD0.value).toBeCloseTo(0.025, 10);
		expect(f.k.value).toBeCloseTo(0.045, 10);
		expect(f.e!.value).toBeCloseTo(1 / (Math.PI * 8 * 0.045), 9);
		expect(f.r2).toBeCloseTo(1, 10);
	});
	it('parabolic polar on CL² matches simple-statistics linearRegression and rSquared (reference library), 1e-12', () => {
		const noisy = CD.map((v, i) => v + [0.0004, -0.0003, 0.0002, -0.0005, 0.0001, 0.0003, -0.0002, 0.0001][i]);
		const f = fitParabolicPolar(CL, noisy);
		const pts = CL.map((c, i) => [c * c, noisy[i]]);
		const ref = linearRegression(pts);
		expect(f.k.value).toBeCloseTo(ref.m, 12);
		expect(f.CD0.value).toBeCloseTo(ref.b, 12);
		expect(f.r2).toBeCloseTo(rSquared(pts, linearRegressionLine(ref)), 12);
		expect(f.k.ci95[0]).toBeLessThan(f.k.value);
		expect(f.k.ci95[1]).toBeGreaterThan(f.k.value);
	});
	it('offset polar recovers CDmin, k and CL,minD of CD = 0.022 + 0.05(CL − 0.15)², 1e-10', () => {
		const cd = CL.map((c) => 0.022 + 0.05 * (c - 0.15) ** 2);
		const f = fitOffsetPolar(CL, cd, 7);
		expect(f.CDmin.value).toBeCloseTo(0.022, 10);
		expect(f.k.value).toBeCloseTo(0.05, 10);
		expect(f.CLminDrag.value).toBeCloseTo(0.15, 10);
	});
	it('offset-polar quadratic coefficients agree with ml-regression PolynomialRegression (independent solver), 1e-10', () => {
		const cd = CL.map((c, i) => 0.022 + 0.05 * (c - 0.15) ** 2 + [0.0004, -0.0003, 0.0002, -0.0005, 0.0001, 0.0003, -0.0002, 0.0001][i]);
		const f = fitOffsetPolar(CL, cd);
		const p = new PolynomialRegression(CL, cd, 2).coefficients;
		expect(f.quadratic[0]).toBeCloseTo(p[0], 10);
		expect(f.quadratic[1]).toBeCloseTo(p[1], 10);
		expect(f.quadratic[2]).toBeCloseTo(p[2], 10);
		expect(f.CLminDrag.standardError).toBeGreaterThan(0);
	});
	it('an outlying drag point is reported', () => {
		const cd = CL.map((c, i) => 0.025 + 0.045 * c * c + [0.0001, -0.0001, 0.0001, -0.0001, 0.0001, -0.0001, 0.0001, -0.0001][i]);
		const many = [...CL, 0.3, 0.5, 0.7, 0.9];
		const cdm = [...cd, 0.025 + 0.045 * 0.09 + 0.0001, 0.025 + 0.045 * 0.25 + 0.004, 0.025 + 0.045 * 0.49 - 0.0001, 0.025 + 0.045 * 0.81];
		const f = fitParabolicPolar(many, cdm);
		expect(f.outliers.map((o) => o.index)).toEqual([9]);
	});
	it.each([
		[() => fitParabolicPolar([0.1, 0.2], [0.02, 0.03]), 'parabolic polar fit: need at least 3 points (got 2)'],
		[() => fitOffsetPolar([0.1, 0.2, 0.3], [0.02, 0.03, 0.04]), 'offset polar fit: need at least 4 points (got 3)'],
		[() => fitParabolicPolar([0.5, 0.5, 0.5], [0.02, 0.03, 0.04]), 'parabolic polar fit: the regressor does not vary, so the fit is singular'],
		[() => fitParabolicPolar([0.1, 0.2, 0.3], [0.02, 0.03, 0.04], -1), 'parabolic polar fit: aspectRatio must be > 0 (got -1)'],
		[() => fitOffsetPolar([0, 0.2, 0.4, 0.6], [0.05, 0.04, 0.03, 0.02]), 'the quadratic term is not positive']
	] as Array<[() => unknown, string]>)('bad input %#', (fn, msg) => expect(fn).toThrow(msg));
});

describe('confidence band on the mean response of a straight line', () => {
	// Oxygen-purity data (x: hydrocarbon level %, y: purity %), Montgomery & Runger,
	// Applied Statistics and Probability for Engineers, ch. 11 (table 11-1; the worked
	// 95 % interval on the mean response at x0 = 1.00 %, 89.23 ± 0.75, is example 11-6).
	// Data, result and numbering are quoted from memory; simple-statistics checks the fit itself.
	const x = [0.99, 1.02, 1.15, 1.29, 1.46, 1.36, 0.87, 1.23, 1.55, 1.4, 1.19, 1.15, 0.98, 1.01, 1.11, 1.2, 1.26, 1.32, 1.43, 0.95];
	const y = [90.01, 89.05, 91.43, 93.74, 96.73, 94.45, 87.59, 91.77, 99.42, 93.65, 93.54, 92.52, 90.56, 89.54, 89.85, 90.39, 93.25, 93.41, 94.98, 87.33];
	const { m, b } = linearRegression(x.map((v, i) => [v, y[i]]));
	const sse = x.reduce((acc, v, i) => acc + (y[i] - (b + m * v)) ** 2, 0);
	const s = Math.sqrt(sse / (x.length - 2));

	it('reproduces the fit (ŷ = 74.283 + 14.947 x) and the half-width 0.75 at x0 = 1.00', () => {
		expect(b).toBeCloseTo(74.283, 2);
		expect(m).toBeCloseTo(14.947, 2);
		expect(b + m * 1.0).toBeCloseTo(89.23, 1);
		// ±0.01: the book rounds σ̂² and Sxx before the square root (full precision gives 0.745).
		expect(Math.abs(meanResponseBand(x, s, x.length - 2)(1.0) - 0.75)).toBeLessThan(0.01);
	});

	it('is narrowest at the mean of x and grows symmetrically away from it', () => {
		const band = meanResponseBand(x, s, x.length - 2);
		const xbar = x.reduce((a, v) => a + v, 0) / x.length;
		expect(band(xbar)).toBeCloseTo(studentTQuantile(0.975, 18) * s / Math.sqrt(x.length), 12);
		expect(band(xbar + 0.3)).toBeCloseTo(band(xbar - 0.3), 12);
		expect(band(xbar + 0.3)).toBeGreaterThan(band(xbar + 0.1));
	});
});
