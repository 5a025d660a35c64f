/**
 * Fits of measured data: lift curve (CLα, α_L0, linear range, CLmax),
 * parabolic polar CD = CD0 + k·CL² and offset polar
 * CD = CDmin + k(CL − CL,minD)², each with standard errors, 95 % confidence
 * intervals (Student t) and R². Outliers are reported, never dropped.
 *
 * Least squares by `ml-regression` (MultivariateLinearRegression, which also
 * returns the coefficient covariance). Confidence intervals: Montgomery &
 * Runger, *Applied Statistics and Probability for Engineers*, ch. 11–12.
 * Derived quantities (CL,minD, CDmin, e) by first-order (delta-method)
 * propagation of that covariance. e = 1/(π·AR·k) (Anderson, *Fundamentals of
 * Aerodynamics*, ch. 5; Kimberlin, ch. 8).
 */
import { MultivariateLinearRegression } from 'ml-regression';

const DEG = Math.PI / 180;

/** Default tolerance on |residual| in CL that bounds the linear range of a lift curve. */
export const LINEAR_RANGE_TOLERANCE = 0.01;
/** A point whose studentised (or robust-scaled) residual exceeds this is reported as an outlier. */
export const OUTLIER_SIGMA = 3;
/** Confidence level of the reported intervals. */
export const CONFIDENCE = 0.95;
/** Standard deviation per median absolute deviation for normal errors (1/Φ⁻¹(0.75)). */
const ROBUST_SIGMA_PER_MAD = 1.4826;

function median(v: ArrayLike<number>): number {
	const s = Float64Array.from(v).sort();
	const m = s.length >> 1;
	return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}

/** Lower median (element ⌊(n−1)/2⌋ in order) of the first `len` values, sorting them in place. */
function lowerMedianInPlace(v: Float64Array, len: number): number {
	const s = v.subarray(0, len).sort();
	return s[(len - 1) >> 1];
}

/** Up to this many points the Theil–Sen slope is the median of all n(n−1)/2 pairwise slopes. */
export const THEIL_SEN_EXACT_MAX_POINTS = 700;
/** Pairwise slopes sampled for a Theil–Sen line of more points than THEIL_SEN_EXACT_MAX_POINTS. */
export const THEIL_SEN_SAMPLED_PAIRS = 250_000;

/**
 * Theil–Sen line (Sen, JASA 63, 1968): slope = median of the pairwise slopes
 * over pairs with distinct x, intercept = median of y − slope·x (lower
 * medians, as ml-regression's TheilSenRegression, which this replaces because
 * it allocates n² slots: 20,000 points took the server out of heap).
 *
 * All pairs cost O(n²) time, so above THEIL_SEN_EXACT_MAX_POINTS the slope is
 * the median of a fixed number m of pairs drawn at random (fixed seed, so a
 * reduction is reproducible). A sample median of m draws lies within about
 * ±1/(2√m) = ±0.1 % in rank of the all-pairs median (binomial standard error
 * of a sample quantile; common practice, no source for the chosen m), which
 * only judges the linear range here; the reported slope is least squares.
 */
export function theilSenLine(x: ArrayLike<number>, y: ArrayLike<number>): { slope: number; intercept: number } {
	const n = x.length;
	let slopes: Float64Array;
	let count = 0;
	if (n <= THEIL_SEN_EXACT_MAX_POINTS) {
		slopes = new Float64Array((n * (n - 1)) / 2);
		for (let i = 0; i < n; i++) {
			for (let j = i + 1; j < n; j++) if (x[i] !== x[j]) slopes[count++] = (y[j] - y[i]) / (x[j] - x[i]);
		}
	} else {
		slopes = new Float64Array(THEIL_SEN_SAMPLED_PAIRS);
		// mulberry32 (a small public-domain 32-bit generator); seeded so the same data give the same line.
		let state = 0x5eed1234;
		const rand = () => {
			state = (state + 0x6d2b79f5) | 0;
			let t = Math.imul(state ^ (state >>> 15), 1 | state);
			t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
			return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
		};
		for (let tries = 0; count < THEIL_SEN_SAMPLED_PAIRS && tries < 4 * THEIL_SEN_SAMPLED_PAIRS; tries++) {
			const i = Math.floor(rand() * n);
			const j = Math.floor(rand() * n);
			if (x[i] !== x[j]) slopes[count++] = (y[j] - y[i]) / (x[j] - x[i]);
		}
	}
	if (count === 0) throw new Error('Theil–Sen line: the regressor does not vary');
	const slope = lowerMedianInPlace(slopes, count);
	const cuts = new Float64Array(n);
	for (let i = 0; i < n; i++) cuts[i] = y[i] - slope * x[i];
	return { slope, intercept: lowerMedianInPlace(cuts, n) };
}

/** Most trimming passes of the linear-range search (each pass is O(n) plus one Theil–Sen line). */
const MAX_TRIM_PASSES = 200;

// ---------------------------------------------------------------- Student t

const LANCZOS = [
	0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
	12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7
];

/** ln Γ(x) for x > 0 (Lanczos approximation, g = 7; about 15 significant digits). */
export function logGamma(x: number): number {
	if (!(x > 0)) throw new Error(`logGamma: x must be > 0 (got ${x})`);
	if (x < 0.5) return Math.log(Math.PI / Math.sin(Math.PI * x)) - logGamma(1 - x);
	const z = x - 1;
	let a = LANCZOS[0];
	const t = z + 7.5;
	for (let i = 1; i < 9; i++) a += LANCZOS[i] / (z + i);
	return 0.5 * Math.log(2 * Math.PI) + (z + 0.5) * Math.log(t) - t + Math.log(a);
}

/** Continued fraction for the incomplete beta (modified Lentz; Press et al., *Numerical Recipes*, 3rd ed., §6.4). */
function betaContinuedFraction(x: number, a: number, b: number): number {
	const TINY = 1e-300;
	const EPS = 1e-15;
	const qab = a + b, qap = a + 1, qam = a - 1;
	let c = 1;
	let d = 1 - (qab * x) / qap;
	if (Math.abs(d) < TINY) d = TINY;
	d = 1 / d;
	let h = d;
	for (let m = 1; m <= 1000; m++) {
		const m2 = 2 * m;
		let aa = (m * (b - m) * x) / ((qam + m2) * (a + m2));
		d = 1 + aa * d;
		if (Math.abs(d) < TINY) d = TINY;
		c = 1 + aa / c;
		if (Math.abs(c) < TINY) c = TINY;
		d = 1 / d;
		h *= d * c;
		aa = (-(a + m) * (qab + m) * x) / ((a + m2) * (qap + m2));
		d = 1 + aa * d;
		if (Math.abs(d) < TINY) d = TINY;
		c = 1 + aa / c;
		if (Math.abs(c) < TINY) c = TINY;
		d = 1 / d;
		const del = d * c;
		h *= del;
		if (Math.abs(del - 1) < EPS) return h;
	}
	throw new Error(`incomplete beta: continued fraction did not converge (x = ${x}, a = ${a}, b = ${b})`);
}

/** Regularised incomplete beta function I_x(a, b) (Numerical Recipes, 3rd ed., §6.4). */
export function regularizedIncompleteBeta(x: number, a: number, b: number): number {
	if (!(a > 0 && b > 0)) throw new Error(`incomplete beta: a and b must be > 0 (got ${a}, ${b})`);
	if (!(x >= 0 && x <= 1)) throw new Error(`incomplete beta: x must be within [0, 1] (got ${x})`);
	if (x === 0 || x === 1) return x;
	const lnFront = logGamma(a + b) - logGamma(a) - logGamma(b) + a * Math.log(x) + b * Math.log(1 - x);
	const front = Math.exp(lnFront);
	if (x < (a + 1) / (a + b + 2)) return (front * betaContinuedFraction(x, a, b)) / a;
	return 1 - (front * betaContinuedFraction(1 - x, b, a)) / b;
}

/** Student t cumulative distribution F(t; ν) = 1 − ½·I_{ν/(ν+t²)}(ν/2, ½) for t ≥ 0. */
export function studentTCdf(t: number, dof: number): number {
	if (!(dof > 0)) throw new Error(`Student t: degrees of freedom must be > 0 (got ${dof})`);
	if (Number.isNaN(t)) throw new Error('Student t: t must be a number (got NaN)');
	if (t === Infinity) return 1;
	if (t === -Infinity) return 0;
	const tail = 0.5 * regularizedIncompleteBeta(dof / (dof + t * t), dof / 2, 0.5);
	return t >= 0 ? 1 - tail : tail;
}

/**
 * Quantile t_p(ν) of Student's t distribution: the inverse of `studentTCdf`,
 * found by bracketing and bisection to full double precision.
 */
export function studentTQuantile(p: number, dof: number): number {
	// The same few (p, ν) pairs recur in every fit and band: remember them
	// (a bisection costs tens of incomplete-beta evaluations).
	const key = `${p}|${dof}`;
	const known = quantiles.get(key);
	if (known !== undefined) return known;
	const t = studentTQuantileUncached(p, dof);
	if (quantiles.size >= 1024) quantiles.clear();
	quantiles.set(key, t);
	return t;
}

const quantiles = new Map<string, number>();

function studentTQuantileUncached(p: number, dof: number): number {
	if (!(p > 0 && p < 1)) throw new Error(`Student t: probability must be within (0, 1) (got ${p})`);
	if (!(dof > 0)) throw new Error(`Student t: degrees of freedom must be > 0 (got ${dof})`);
	if (p === 0.5) return 0;
	if (p < 0.5) return -studentTQuantileUncached(1 - p, dof);
	// Work with the upper tail 1 − p to keep precision for p near 1.
	const target = 1 - p;
	const upper = (t: number) => 0.5 * regularizedIncompleteBeta(dof / (dof + t * t), dof / 2, 0.5);
	let lo = 0;
	let hi = 1;
	while (upper(hi) > target) {
		lo = hi;
		hi *= 2;
		if (hi > 1e300) throw new Error(`Student t: quantile ${p} for ν = ${dof} is out of range`);
	}
	for (let i = 0; i < 200 && hi - lo > 1e-15 * hi; i++) {
		const mid = 0.5 * (lo + hi);
		if (upper(mid) > target) lo = mid;
		else hi = mid;
	}
	return 0.5 * (lo + hi);
}

// ---------------------------------------------------------------- least squares

export interface Estimate {
	value: number;
	standardError: number;
	/** 95 % confidence interval [low, high]. */
	ci95: [number, number];
}

export interface Outlier {
	index: number;
	x: number;
	y: number;
	residual: number;
	/** Externally studentised residual (polars) or residual over the residual standard deviation (lift curve). */
	standardized: number;
}

interface LeastSquares {
	coefficients: number[]; // in the order of the columns, intercept last
	covariance: number[][];
	residuals: number[];
	/** Externally studentised residuals (R-student), for outlier screening. */
	studentized: number[];
	residualStd: number;
	r2: number;
	dof: number;
	n: number;
}

function checkSeries(what: string, x: ArrayLike<number>, y: ArrayLike<number>, xName: string, yName: string, minPoints: number): void {
	if (!x || !y) throw new Error(`${what}: ${xName} and ${yName} are required`);
	if (x.length !== y.length) throw new Error(`${what}: ${xName} has ${x.length} values but ${yName} has ${y.length}`);
	if (x.length < minPoints) throw new Error(`${what}: need at least ${minPoints} points (got ${x.length})`);
	for (let i = 0; i < x.length; i++) {
		if (typeof x[i] !== 'number' || !Number.isFinite(x[i])) throw new Error(`${what}: ${xName}[${i}] must be a finite number (got ${String(x[i])})`);
		if (typeof y[i] !== 'number' || !Number.isFinite(y[i])) throw new Error(`${what}: ${yName}[${i}] must be a finite number (got ${String(y[i])})`);
	}
}

/** y on the columns of X plus an intercept, by ml-regression; throws when the design is singular. */
function leastSquares(what: string, rows: number[][], y: ArrayLike<number>): LeastSquares {
	const n = rows.length;
	const p = rows[0].length + 1;
	if (n <= p) throw new Error(`${what}: need more points than the ${p} fitted parameters (got ${n})`);
	// A constant regressor makes the normal equations singular; ml-regression
	// would return a pseudo-inverse silently, so refuse it here.
	for (let j = 0; j < p - 1; j++) {
		let lo = Infinity, hi = -Infinity;
		for (const r of rows) { lo = Math.min(lo, r[j]); hi = Math.max(hi, r[j]); }
		if (!(hi - lo > 1e-12 * Math.max(1, Math.abs(hi)))) throw new Error(`${what}: the regressor does not vary, so the fit is singular`);
	}
	const Y = Array.from(y, (v) => [v]);
	const m = new MultivariateLinearRegression(rows, Y, { intercept: true, statistics: true });
	const coefficients = m.weights.map((w) => w[0]);
	const covariance = m.stdErrorMatrix.to2DArray();
	let ybar = 0;
	for (let i = 0; i < n; i++) ybar += y[i];
	ybar /= n;
	let sse = 0, sst = 0;
	const residuals: number[] = [];
	for (let i = 0; i < n; i++) {
		let f = coefficients[p - 1];
		for (let j = 0; j < p - 1; j++) f += coefficients[j] * rows[i][j];
		const r = y[i] - f;
		residuals.push(r);
		sse += r * r;
		sst += (y[i] - ybar) ** 2;
	}
	const dof = n - p;
	const s2 = sse / dof;
	// Leverage h_ii = x_iᵀ(XᵀX)⁻¹x_i = x_iᵀ·Cov·x_i/s²; R-student
	// t_i = r_i/(s_(i)√(1−h_ii)) with the leave-one-out variance s_(i)²
	// (Montgomery & Runger, ch. 12).
	const studentized = residuals.map((r, i) => {
		if (!(s2 > 0) || dof < 2) return 0;
		const xi = [...rows[i], 1];
		let h = 0;
		for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) h += xi[a] * covariance[a][b] * xi[b];
		h /= s2;
		const si2 = (dof * s2 - (r * r) / (1 - h)) / (dof - 1);
		return si2 > 0 && h < 1 ? r / Math.sqrt(si2 * (1 - h)) : 0;
	});
	return { coefficients, covariance, residuals, studentized, residualStd: Math.sqrt(s2), r2: sst > 0 ? 1 - sse / sst : 1, dof, n };
}

function estimate(value: number, variance: number, tq: number): Estimate {
	const se = Math.sqrt(Math.max(0, variance));
	return { value, standardError: se, ci95: [value - tq * se, value + tq * se] };
}

function outliersOf(x: ArrayLike<number>, y: ArrayLike<number>, fit: LeastSquares): Outlier[] {
	const out: Outlier[] = [];
	fit.studentized.forEach((t, i) => {
		if (Math.abs(t) > OUTLIER_SIGMA) out.push({ index: i, x: x[i], y: y[i], residual: fit.residuals[i], standardized: t });
	});
	return out;
}

// ---------------------------------------------------------------- lift curve

export interface LiftCurveFitOptions {
	/** |residual| in CL allowed at the ends of the linear range (default LINEAR_RANGE_TOLERANCE). */
	linearTolerance?: number;
	/** Fewest points the linear range may shrink to (default 3). */
	minLinearPoints?: number;
}

export interface LiftCurveFit {
	/** Lift-curve slope, per deg and per rad. */
	liftSlopePerDeg: Estimate;
	liftSlopePerRad: Estimate;
	alphaZeroLiftDeg: Estimate;
	r2: number;
	residualStd: number;
	dof: number;
	/** Linear range found from the residuals, as indices into the input and α bounds. */
	linearRange: { indices: number[]; alphaMinDeg: number; alphaMaxDeg: number };
	CLmax: number;
	alphaAtCLmaxDeg: number;
	/** True when CLmax is the last point in α (stall not reached). */
	CLmaxAtEdge: boolean;
	outliers: Outlier[];
}

/**
 * Fit the lift curve CL = CLα(α − α_L0). The linear range is found by
 * trimming pre-stall points from either end while the end residual from a
 * robust line exceeds max(tolerance, 3 robust σ); interior points beyond that
 * are reported as outliers and kept. CLmax is the largest measured CL.
 */
export function fitLiftCurve(alphaDeg: ArrayLike<number>, CL: ArrayLike<number>, options: LiftCurveFitOptions = {}): LiftCurveFit {
	const what = 'lift-curve fit';
	checkSeries(what, alphaDeg, CL, 'alphaDeg', 'CL', 3);
	const tol = options.linearTolerance ?? LINEAR_RANGE_TOLERANCE;
	const minPts = options.minLinearPoints ?? 3;
	if (!(tol > 0)) throw new Error(`${what}: linearTolerance must be > 0 (got ${tol})`);
	if (!(Number.isInteger(minPts) && minPts >= 3)) throw new Error(`${what}: minLinearPoints must be an integer ≥ 3 (got ${minPts})`);
	{
		let lo = Infinity, hi = -Infinity;
		for (let i = 0; i < alphaDeg.length; i++) { lo = Math.min(lo, alphaDeg[i]); hi = Math.max(hi, alphaDeg[i]); }
		if (!(hi > lo)) throw new Error(`${what}: the regressor does not vary, so the fit is singular`);
	}
	const order = Array.from({ length: alphaDeg.length }, (_, i) => i).sort((a, b) => alphaDeg[a] - alphaDeg[b]);
	let iMax = 0;
	for (let k = 1; k < order.length; k++) if (CL[order[k]] > CL[order[iMax]]) iMax = k;
	const CLmax = CL[order[iMax]];
	const alphaAtCLmaxDeg = alphaDeg[order[iMax]];
	// The linear range is judged on a robust Theil–Sen line (Sen, JASA 63,
	// 1968) so that one bad interior point does not trim good end points;
	// the reported slope and its interval come from least squares on that range.
	let lo = 0;
	let hi = Math.max(iMax, Math.min(order.length - 1, minPts - 1));
	let robustResiduals = new Float64Array(0);
	let limit = tol;
	for (let pass = 0; ; pass++) {
		const len = hi - lo + 1;
		const xs = new Float64Array(len);
		const ys = new Float64Array(len);
		for (let k = 0; k < len; k++) {
			xs[k] = alphaDeg[order[lo + k]];
			ys[k] = CL[order[lo + k]];
		}
		const ts = theilSenLine(xs, ys);
		robustResiduals = new Float64Array(len);
		const absRes = new Float64Array(len);
		for (let k = 0; k < len; k++) {
			robustResiduals[k] = ys[k] - (ts.slope * xs[k] + ts.intercept);
			absRes[k] = Math.abs(robustResiduals[k]);
		}
		const mad = median(absRes);
		limit = Math.max(tol, OUTLIER_SIGMA * ROBUST_SIGMA_PER_MAD * mad);
		const rLo = absRes[0];
		const rHi = absRes[len - 1];
		if (Math.max(rLo, rHi) <= limit || len <= minPts || pass >= MAX_TRIM_PASSES) break;
		// Drop the run of end points beyond the limit at the worse end, then
		// refit. Short ranges lose one point a pass (each refit can pull the
		// line back to a neighbour); long ones up to 5 % of the range a pass,
		// so a long stall region costs a few dozen refits rather than one per
		// point (common practice, no source for the 5 %).
		const cap = Math.max(1, Math.floor(len / 20));
		let drop = 0;
		if (rHi >= rLo) {
			while (drop < cap && len - drop > minPts && absRes[len - 1 - drop] > limit) drop++;
			hi -= Math.max(1, drop);
		} else {
			while (drop < cap && len - drop > minPts && absRes[drop] > limit) drop++;
			lo += Math.max(1, drop);
		}
	}
	const idx = order.slice(lo, hi + 1);
	const fit = leastSquares(what, idx.map((i) => [alphaDeg[i]]), idx.map((i) => CL[i]));
	const outliers: Outlier[] = [];
	robustResiduals.forEach((r, k) => {
		if (Math.abs(r) > limit) {
			const i = idx[k];
			outliers.push({ index: i, x: alphaDeg[i], y: CL[i], residual: fit.residuals[k], standardized: fit.residuals[k] / fit.residualStd });
		}
	});
	const [slope, intercept] = fit.coefficients;
	const cov = fit.covariance;
	const tq = studentTQuantile(0.5 + CONFIDENCE / 2, fit.dof);
	// α_L0 = −b/m; ∂/∂m = b/m², ∂/∂b = −1/m.
	const a0 = -intercept / slope;
	const gm = intercept / (slope * slope);
	const gb = -1 / slope;
	const varA0 = gm * gm * cov[0][0] + 2 * gm * gb * cov[0][1] + gb * gb * cov[1][1];
	const perDeg = estimate(slope, cov[0][0], tq);
	return {
		liftSlopePerDeg: perDeg,
		liftSlopePerRad: { value: slope / DEG, standardError: perDeg.standardError / DEG, ci95: [perDeg.ci95[0] / DEG, perDeg.ci95[1] / DEG] },
		alphaZeroLiftDeg: estimate(a0, varA0, tq),
		r2: fit.r2,
		residualStd: fit.residualStd,
		dof: fit.dof,
		linearRange: { indices: idx, alphaMinDeg: alphaDeg[idx[0]], alphaMaxDeg: alphaDeg[idx[idx.length - 1]] },
		CLmax,
		alphaAtCLmaxDeg,
		CLmaxAtEdge: iMax === order.length - 1,
		outliers
	};
}

// ---------------------------------------------------------------- polars

export interface ParabolicPolarFit {
	CD0: Estimate;
	k: Estimate;
	/** Oswald efficiency 1/(π·AR·k), when the aspect ratio is given. */
	e?: Estimate;
	r2: number;
	residualStd: number;
	dof: number;
	outliers: Outlier[];
}

function checkAR(what: string, aspectRatio: number | undefined): void {
	if (aspectRatio !== undefined && !(typeof aspectRatio === 'number' && aspectRatio > 0)) {
		throw new Error(`${what}: aspectRatio must be > 0 (got ${String(aspectRatio)})`);
	}
}

function oswald(k: Estimate, aspectRatio: number, tq: number): Estimate {
	const e = 1 / (Math.PI * aspectRatio * k.value);
	const g = -e / k.value; // ∂e/∂k
	return estimate(e, g * g * k.standardError * k.standardError, tq);
}

/** Parabolic polar CD = CD0 + k·CL² by regression of CD on CL² (Kimberlin, ch. 8). */
export function fitParabolicPolar(CL: ArrayLike<number>, CD: ArrayLike<number>, aspectRatio?: number): ParabolicPolarFit {
	const what = 'parabolic polar fit';
	checkSeries(what, CL, CD, 'CL', 'CD', 3);
	checkAR(what, aspectRatio);
	const x2 = Array.from(CL, (c) => c * c);
	const fit = leastSquares(what, x2.map((v) => [v]), CD);
	const tq = studentTQuantile(0.5 + CONFIDENCE / 2, fit.dof);
	const k = estimate(fit.coefficients[0], fit.covariance[0][0], tq);
	const out: ParabolicPolarFit = {
		CD0: estimate(fit.coefficients[1], fit.covariance[1][1], tq),
		k,
		r2: fit.r2,
		residualStd: fit.residualStd,
		dof: fit.dof,
		outliers: outliersOf(CL, CD, fit)
	};
	if (aspectRatio !== undefined) out.e = oswald(k, aspectRatio, tq);
	return out;
}

export interface OffsetPolarFit {
	CDmin: Estimate;
	k: Estimate;
	CLminDrag: Estimate;
	e?: Estimate;
	/** Raw quadratic coefficients CD = c0 + c1·CL + c2·CL². */
	quadratic: [number, number, number];
	r2: number;
	residualStd: number;
	dof: number;
	outliers: Outlier[];
}

/**
 * Offset polar CD = CDmin + k(CL − CL,minD)² from a quadratic regression of CD
 * on CL: k = c2, CL,minD = −c1/(2c2), CDmin = c0 − c1²/(4c2).
 */
export function fitOffsetPolar(CL: ArrayLike<number>, CD: ArrayLike<number>, aspectRatio?: number): OffsetPolarFit {
	const what = 'offset polar fit';
	checkSeries(what, CL, CD, 'CL', 'CD', 4);
	checkAR(what, aspectRatio);
	const rows = Array.from(CL, (c) => [c, c * c]);
	const fit = leastSquares(what, rows, CD);
	const [c1, c2, c0] = fit.coefficients; // columns: CL, CL², intercept
	if (!(c2 > 0)) throw new Error(`${what}: the quadratic term is not positive (k = ${c2}); the polar has no drag minimum`);
	const V = fit.covariance; // order c1, c2, c0
	const tq = studentTQuantile(0.5 + CONFIDENCE / 2, fit.dof);
	const quad = (g: number[]) => {
		let s = 0;
		for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) s += g[i] * V[i][j] * g[j];
		return s;
	};
	const clmd = -c1 / (2 * c2);
	const cdmin = c0 - (c1 * c1) / (4 * c2);
	const k = estimate(c2, V[1][1], tq);
	const out: OffsetPolarFit = {
		CDmin: estimate(cdmin, quad([-c1 / (2 * c2), (c1 * c1) / (4 * c2 * c2), 1]), tq),
		k,
		CLminDrag: estimate(clmd, quad([-1 / (2 * c2), c1 / (2 * c2 * c2), 0]), tq),
		quadratic: [c0, c1, c2],
		r2: fit.r2,
		residualStd: fit.residualStd,
		dof: fit.dof,
		outliers: outliersOf(CL, CD, fit)
	};
	if (aspectRatio !== undefined) out.e = oswald(k, aspectRatio, tq);
	return out;
}

/**
 * Confidence band of the mean response of a straight line y = a + b·x fitted
 * to `xs` with residual standard deviation `s` and `dof` degrees of freedom:
 * half-width t(½ + c/2, ν)·s·√(1/n + (x − x̄)²/Sxx) (Montgomery & Runger,
 * ch. 11, confidence interval on the mean response). Returns the half-width
 * as a function of x; t, x̄ and Sxx are computed once.
 */
export function meanResponseBand(xs: readonly number[], s: number, dof: number, confidence = CONFIDENCE): (x: number) => number {
	const n = xs.length;
	let xbar = 0;
	for (const v of xs) xbar += v;
	xbar /= n;
	let sxx = 0;
	for (const v of xs) sxx += (v - xbar) ** 2;
	const ts = studentTQuantile(0.5 + confidence / 2, dof) * s;
	return (x) => ts * Math.sqrt(1 / n + (x - xbar) ** 2 / sxx);
}
