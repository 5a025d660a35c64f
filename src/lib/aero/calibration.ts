/**
 * Calibration of the lifting-line model against measurement: the free section
 * parameters, a multiplier s on every station's lift slope a₀ and a shift d
 * (deg) added to every station's zero-lift angle α_L0, are fitted to measured
 * lift curves by nonlinear least squares (Gauss–Newton with step halving;
 * Björck, *Numerical Methods for Least Squares Problems*, SIAM 1996, §9.2),
 * with the Prandtl lifting-line solver (Glauert series, ./lifting-line) inside
 * the model function. Optionally a span-efficiency factor κ, CD = CD0 +
 * CDi,LL/κ, is then fitted by linear least squares to the measured drag.
 *
 * Parameter standard errors come from the linearised covariance
 * s²(JᵀJ)⁻¹ at the optimum and 95 % intervals from Student's t with n − p
 * degrees of freedom (Montgomery & Runger, *Applied Statistics and Probability
 * for Engineers*, ch. 11–12; Bates & Watts, *Nonlinear Regression Analysis*,
 * 1988, §2.3).
 *
 * Pure: no I/O. A calibrated model is still a preliminary engineering
 * estimate; flight-test and airworthiness decisions follow the organisation's
 * approved procedures.
 */
import { liftCurve, type LiftingLineOptions } from './lifting-line';
import { validateWing, type Wing } from './planform';
import { studentTQuantile, CONFIDENCE, type Estimate } from './polar-fit';

const DEG = Math.PI / 180;

/** Gauss–Newton stops when the relative step in every parameter is below this. */
export const CALIBRATION_STEP_TOLERANCE = 1e-12;
export const CALIBRATION_MAX_ITERATIONS = 50;
/** Relative step of the central difference for ∂CL/∂s. */
const FD_STEP = 1e-6;

export interface CalibrationObservation {
	/** Angle of attack (tunnel-corrected or flight), deg. */
	alphaDeg: number;
	CL: number;
	/** Measured drag coefficient; needed only for the span-efficiency fit. */
	CD?: number;
	/** Mach number of the point (Prandtl–Glauert); default 0. */
	mach?: number;
}

export interface CalibrationOptions {
	/** Also fit CD = CD0 + CDi/κ to the drag of the observations. Default false. */
	fitSpanEfficiency?: boolean;
	/** Starting values; default s = 1, d = 0. */
	initial?: { a0Scale?: number; alphaZeroLiftShiftDeg?: number };
	/** Lifting-line options (terms, symmetry); mach comes from each observation. */
	solver?: Omit<LiftingLineOptions, 'mach'>;
}

export interface CalibrationResult {
	/** Multiplier on the section lift slopes. */
	a0Scale: Estimate;
	/** Shift added to every section's zero-lift angle, deg. */
	alphaZeroLiftShiftDeg: Estimate;
	/** Mean station a₀ after calibration, per rad (the uniform effective a₀ when the wing's a₀ is uniform). */
	effectiveA0: Estimate;
	/** κ and CD0 of CD = CD0 + CDi/κ, when asked for. */
	spanEfficiencyFactor?: Estimate;
	profileDragCD0?: Estimate;
	/** Calibrated wing (stations with the fitted a₀ and α_L0). */
	wing: Wing;
	/** Calibrated wing lift slope (per rad) and zero-lift angle (deg) at Mach 0. */
	liftSlope: number;
	alphaZeroLiftDeg: number;
	/** Residuals CL_measured − CL_model at the optimum, in input order. */
	residuals: number[];
	rmsResidual: number;
	dof: number;
	iterations: number;
	observations: number;
}

/** The wing with every a₀ multiplied by s and every α_L0 shifted by d (deg). */
export function calibratedWing(wing: Wing, a0Scale: number, alphaZeroLiftShiftDeg: number): Wing {
	const st = validateWing(wing);
	if (!(Number.isFinite(a0Scale) && a0Scale > 0)) throw new Error(`calibration: a0Scale must be > 0 (got ${a0Scale})`);
	if (!Number.isFinite(alphaZeroLiftShiftDeg)) throw new Error(`calibration: alphaZeroLiftShiftDeg must be finite (got ${alphaZeroLiftShiftDeg})`);
	return {
		span: wing.span,
		stations: st.map((s) => ({ ...s, a0: s.a0 * a0Scale, alphaZeroLiftDeg: s.alphaZeroLiftDeg + alphaZeroLiftShiftDeg })),
		segments: wing.segments ? wing.segments.map((g) => ({ ...g })) : undefined
	};
}

interface Group {
	mach: number;
	indices: number[];
	alphas: number[];
}

function groupByMach(obs: CalibrationObservation[]): Group[] {
	const map = new Map<number, Group>();
	obs.forEach((o, i) => {
		const m = o.mach ?? 0;
		let g = map.get(m);
		if (!g) map.set(m, (g = { mach: m, indices: [], alphas: [] }));
		g.indices.push(i);
		g.alphas.push(o.alphaDeg);
	});
	return [...map.values()];
}

/**
 * Model CL and CDi at every observation for parameters (s, d). Adding d to
 * every section α_L0 shifts the wing's zero-lift angle by exactly d, so the
 * solve is at α − d with the scaled wing: one factorisation per Mach group.
 */
function modelAt(wing: Wing, groups: Group[], n: number, s: number, d: number, solver: CalibrationOptions['solver']) {
	const w = calibratedWing(wing, s, 0);
	const CL = new Float64Array(n);
	const CDi = new Float64Array(n);
	const slope = new Float64Array(n);
	for (const g of groups) {
		const lc = liftCurve(w, g.alphas.map((a) => a - d), { ...solver, mach: g.mach });
		g.indices.forEach((i, k) => {
			CL[i] = lc.points[k].CL;
			CDi[i] = lc.points[k].CDi;
			slope[i] = lc.liftSlope;
		});
	}
	return { CL, CDi, slope };
}

function estimate(value: number, variance: number, tq: number): Estimate {
	const se = Math.sqrt(Math.max(0, variance));
	return { value, standardError: se, ci95: [value - tq * se, value + tq * se] };
}

/**
 * Fit s and d (and optionally κ) so that the lifting-line lift curve of
 * `wing` matches the observations in the least-squares sense.
 */
export function calibrateLiftingLine(wing: Wing, observations: ArrayLike<CalibrationObservation>, options: CalibrationOptions = {}): CalibrationResult {
	const what = 'calibration';
	const stations = validateWing(wing);
	const obs = Array.from(observations ?? []);
	if (obs.length < 3) throw new Error(`${what}: need at least 3 observations to fit 2 parameters (got ${obs.length})`);
	obs.forEach((o, i) => {
		if (!o || !Number.isFinite(o.alphaDeg)) throw new Error(`${what}: observation ${i}: alphaDeg must be a finite number (got ${String(o?.alphaDeg)})`);
		if (!Number.isFinite(o.CL)) throw new Error(`${what}: observation ${i}: CL must be a finite number (got ${String(o.CL)})`);
		if (o.mach !== undefined && !(Number.isFinite(o.mach) && o.mach >= 0 && o.mach < 1)) throw new Error(`${what}: observation ${i}: mach must be in [0, 1) (got ${o.mach})`);
		if (options.fitSpanEfficiency && !Number.isFinite(o.CD)) throw new Error(`${what}: observation ${i}: CD is needed for the span-efficiency fit (got ${String(o.CD)})`);
	});
	{
		let lo = Infinity, hi = -Infinity;
		for (const o of obs) { lo = Math.min(lo, o.alphaDeg); hi = Math.max(hi, o.alphaDeg); }
		if (!(hi > lo)) throw new Error(`${what}: alphaDeg does not vary, so a0 and alpha_L0 cannot be separated`);
	}
	const n = obs.length;
	const groups = groupByMach(obs);
	const y = obs.map((o) => o.CL);
	let s = options.initial?.a0Scale ?? 1;
	let d = options.initial?.alphaZeroLiftShiftDeg ?? 0;
	if (!(s > 0)) throw new Error(`${what}: initial a0Scale must be > 0 (got ${s})`);

	const sse = (m: Float64Array) => { let t = 0; for (let i = 0; i < n; i++) t += (y[i] - m[i]) ** 2; return t; };
	let cur = modelAt(wing, groups, n, s, d, options.solver);
	let curSse = sse(cur.CL);
	let iterations = 0;
	let J: [Float64Array, Float64Array] = [new Float64Array(n), new Float64Array(n)];
	const jacobian = () => {
		const h = FD_STEP * s;
		const up = modelAt(wing, groups, n, s + h, d, options.solver).CL;
		const dn = modelAt(wing, groups, n, s - h, d, options.solver).CL;
		const js = new Float64Array(n);
		const jd = new Float64Array(n);
		for (let i = 0; i < n; i++) {
			js[i] = (up[i] - dn[i]) / (2 * h);
			jd[i] = -cur.slope[i] * DEG; // ∂CL/∂d, d in deg
		}
		return [js, jd] as [Float64Array, Float64Array];
	};
	for (; iterations < CALIBRATION_MAX_ITERATIONS; ) {
		iterations++;
		J = jacobian();
		let a11 = 0, a12 = 0, a22 = 0, b1 = 0, b2 = 0;
		for (let i = 0; i < n; i++) {
			const r = y[i] - cur.CL[i];
			a11 += J[0][i] * J[0][i];
			a12 += J[0][i] * J[1][i];
			a22 += J[1][i] * J[1][i];
			b1 += J[0][i] * r;
			b2 += J[1][i] * r;
		}
		const det = a11 * a22 - a12 * a12;
		if (!(Math.abs(det) > 1e-300)) throw new Error(`${what}: the normal equations are singular (a0 and alpha_L0 are not separable from these points)`);
		let ds = (a22 * b1 - a12 * b2) / det;
		let dd = (a11 * b2 - a12 * b1) / det;
		// Step halving keeps s positive and the sum of squares from growing.
		let accepted = false;
		for (let half = 0; half < 40; half++) {
			const sNew = s + ds;
			if (sNew > 0) {
				const trial = modelAt(wing, groups, n, sNew, d + dd, options.solver);
				const tSse = sse(trial.CL);
				if (tSse <= curSse) {
					s = sNew;
					d += dd;
					cur = trial;
					curSse = tSse;
					accepted = true;
					break;
				}
			}
			ds /= 2;
			dd /= 2;
		}
		const small = Math.abs(ds) <= CALIBRATION_STEP_TOLERANCE * Math.max(1, Math.abs(s)) && Math.abs(dd) <= CALIBRATION_STEP_TOLERANCE * Math.max(1, Math.abs(d));
		if (!accepted || small) break;
	}
	J = jacobian();
	let a11 = 0, a12 = 0, a22 = 0;
	for (let i = 0; i < n; i++) { a11 += J[0][i] ** 2; a12 += J[0][i] * J[1][i]; a22 += J[1][i] ** 2; }
	const det = a11 * a22 - a12 * a12;
	const dof = n - 2;
	const s2 = dof > 0 ? curSse / dof : NaN;
	const varS = dof > 0 ? (s2 * a22) / det : NaN;
	const varD = dof > 0 ? (s2 * a11) / det : NaN;
	const tq = dof > 0 ? studentTQuantile(0.5 + CONFIDENCE / 2, dof) : NaN;
	const meanA0 = stations.reduce((t, st) => t + st.a0, 0) / stations.length;
	const calWing = calibratedWing(wing, s, d);
	const lc0 = liftCurve(calWing, [0], options.solver);
	const residuals = y.map((v, i) => v - cur.CL[i]);
	const result: CalibrationResult = {
		a0Scale: estimate(s, varS, tq),
		alphaZeroLiftShiftDeg: estimate(d, varD, tq),
		effectiveA0: estimate(s * meanA0, varS * meanA0 * meanA0, tq),
		wing: calWing,
		liftSlope: lc0.liftSlope,
		alphaZeroLiftDeg: lc0.alphaZeroLiftDeg,
		residuals,
		rmsResidual: Math.sqrt(curSse / n),
		dof,
		iterations,
		observations: n
	};
	if (options.fitSpanEfficiency) {
		// CD = CD0 + (1/κ)·CDi: ordinary least squares in (CD0, 1/κ).
		let sx = 0, sy = 0, sxx = 0, sxy = 0;
		for (let i = 0; i < n; i++) { const x = cur.CDi[i]; const c = obs[i].CD as number; sx += x; sy += c; sxx += x * x; sxy += x * c; }
		const sxxC = sxx - (sx * sx) / n;
		if (!(sxxC > 0)) throw new Error(`${what}: predicted CDi does not vary over the observations, so the span-efficiency factor is undefined`);
		const slope = (sxy - (sx * sy) / n) / sxxC;
		if (!(slope > 0)) throw new Error(`${what}: measured drag does not grow with predicted induced drag (slope ${slope}); no span-efficiency factor`);
		const icpt = (sy - slope * sx) / n;
		let sseD = 0;
		for (let i = 0; i < n; i++) sseD += ((obs[i].CD as number) - icpt - slope * cur.CDi[i]) ** 2;
		const s2d = dof > 0 ? sseD / dof : NaN;
		const varSlope = s2d / sxxC;
		const varIcpt = s2d * (1 / n + (sx / n) ** 2 / sxxC);
		const kappa = 1 / slope;
		// κ = 1/slope: ∂κ/∂slope = −1/slope² (first-order propagation).
		result.spanEfficiencyFactor = estimate(kappa, varSlope / slope ** 4, tq);
		result.profileDragCD0 = estimate(icpt, varIcpt, tq);
	}
	return result;
}
