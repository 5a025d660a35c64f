/**
 * Pure correlation arithmetic (no database): the prediction of a run from its
 * stored inputs, and the deltas measured − predicted with their uncertainty.
 * All aerodynamics comes from $lib/aero (lifting line, polar fits); this file
 * only arranges inputs and combines results.
 *
 * Uncertainty of a delta is taken from the measurement side only (the model
 * has none of its own here): the fit's 95 % confidence half-width (Student t)
 * and the stated expanded point uncertainties (k = 2, as the reduction stores
 * them) propagated to first order through the same least-squares estimator,
 * combined by root-sum-square (AIAA S-071A-1999; ASME PTC 19.1; Coleman &
 * Steele, 3rd ed., ch. 3). Points are treated as uncorrelated, which makes
 * the propagated part a conservative companion of the fit interval.
 */
import { liftCurve, DEFAULT_TERMS, type LiftingLineOptions } from '$lib/aero/lifting-line';
import { solveNonlinearLiftingLine, sweepToStall, SWEEP_ACCEPT_RESIDUAL, type SectionTable } from '$lib/aero/nonlinear-lifting-line';
import { fitLiftCurve, fitParabolicPolar, studentTQuantile, CONFIDENCE } from '$lib/aero/polar-fit';
import type { Wing } from '$lib/aero/planform';
import { DELTA_QUANTITIES, type DeltaQuantity, type DeltaSettings, type ToleranceSet } from './quantities';

export const SOLVER_LINEAR = 'lifting-line-glauert';
/** Nonlinear lifting line over section cl(α) tables (used when a configuration has tables). */
export const SOLVER_NONLINEAR = 'lifting-line-nonlinear';
export const SOLVERS = [SOLVER_LINEAR, SOLVER_NONLINEAR] as const;
/** α step of the stall sweep that finds the predicted CLmax, deg. */
const STALL_SWEEP_STEP_DEG = 0.5;
/** The stall sweep stops here at the latest, deg. */
const STALL_SWEEP_END_DEG = 40;
/** Half-width of the plotted prediction curve beyond the measured α range, deg, and its step. */
const CURVE_MARGIN_DEG = 2;
const CURVE_STEP_DEG = 0.5;

export interface SolverSettings {
	solver: (typeof SOLVERS)[number];
	terms?: number;
	symmetry?: LiftingLineOptions['symmetry'];
}

/** Everything a prediction depends on; stored verbatim in predictions.inputs. */
export interface PredictionInputs {
	wing: Wing;
	/** α of the measured points used (tunnel-corrected or flight), deg, in point order. */
	alphasDeg: number[];
	/** Point indices these α belong to. */
	pointIdx: number[];
	mach: number;
	/** Stored for the record; the linear solver does not use it. */
	reynolds: number | null;
	/** Area the measured coefficients are based on, m²; the solver's own is the planform area. */
	refArea: number;
	/** Profile-drag estimate CD0 on refArea (null: ΔCD0 not available). */
	profileDragCD0: number | null;
	alphaRefDeg: number;
	clRef: number;
	reductionId: number;
	warnings: string[];
	/** Section tables at the stations' η (nonlinear solver only; see configurations.sectionTablesOf). */
	sections?: SectionTable[] | null;
}

export interface PredictedPoint {
	alphaDeg: number;
	CL: number;
	CDi: number;
	/** CD0 estimate + CDi, when an estimate exists. */
	CD: number | null;
}

export interface PredictionOutputs {
	liftSlopePerDeg: number;
	alphaZeroLiftDeg: number;
	/** Planform area / refArea: the factor applied to the solver's coefficients. */
	areaRatio: number;
	aspectRatio: number;
	points: PredictedPoint[];
	curve: PredictedPoint[];
	atAlphaRef: PredictedPoint;
	atClRef: PredictedPoint;
	/** Predicted CLmax on refArea (nonlinear solver with a bracketed peak); null for the linear solver. */
	CLmax: number | null;
	/** Stall sweep of the nonlinear solver (absent for the linear one). */
	stall?: {
		CLmax: number | null;
		alphaAtCLmaxDeg: number | null;
		peakFound: boolean;
		stallOnset: { alphaDeg: number; eta: number } | null;
		notes: string[];
	};
	warnings: string[];
}

/** JSON-safe numbers: NaN and ±∞ become null, as they would in a JSONB column. */
export function jsonSafe<T>(value: T): T {
	return JSON.parse(JSON.stringify(value, (_k, v) => (typeof v === 'number' && !Number.isFinite(v) ? null : v)));
}

/** The prediction for stored inputs: deterministic, so re-running stored inputs reproduces stored outputs. */
export function computePrediction(inputs: PredictionInputs, settings: SolverSettings): PredictionOutputs {
	if (!(SOLVERS as readonly string[]).includes(settings.solver)) throw new Error(`prediction: unknown solver '${String(settings.solver)}'`);
	if (!(inputs.refArea > 0)) throw new Error(`prediction: refArea must be > 0 (got ${inputs.refArea})`);
	const lo = Math.min(...inputs.alphasDeg) - CURVE_MARGIN_DEG;
	const hi = Math.max(...inputs.alphasDeg) + CURVE_MARGIN_DEG;
	const grid: number[] = [];
	for (let a = Math.floor(lo / CURVE_STEP_DEG) * CURVE_STEP_DEG; a <= hi + 1e-9; a += CURVE_STEP_DEG) grid.push(Math.round(a * 1000) / 1000);
	if (settings.solver === SOLVER_NONLINEAR) return nonlinearPrediction(inputs, settings, grid);
	const opts: LiftingLineOptions = { terms: settings.terms, symmetry: settings.symmetry, mach: inputs.mach };
	const main = liftCurve(inputs.wing, [...inputs.alphasDeg, ...grid, inputs.alphaRefDeg], opts);
	const ratio = main.area / inputs.refArea;
	const slopePerDeg = main.liftSlope * (Math.PI / 180) * ratio;
	const cd0 = inputs.profileDragCD0;
	const pt = (p: { alphaDeg: number; CL: number; CDi: number }): PredictedPoint => ({
		alphaDeg: p.alphaDeg,
		CL: p.CL * ratio,
		CDi: p.CDi * ratio,
		CD: cd0 === null ? null : cd0 + p.CDi * ratio
	});
	const n = inputs.alphasDeg.length;
	const points = main.points.slice(0, n).map(pt);
	const curve = main.points.slice(n, n + grid.length).map(pt);
	const atAlphaRef = pt(main.points[n + grid.length]);
	// α where the predicted CL equals CL_ref (the lift curve is linear in α).
	const alphaAtClRef = main.alphaZeroLiftDeg + inputs.clRef / slopePerDeg;
	const atClRef = pt(liftCurve(inputs.wing, [alphaAtClRef], opts).points[0]);
	return jsonSafe({
		liftSlopePerDeg: slopePerDeg,
		alphaZeroLiftDeg: main.alphaZeroLiftDeg,
		areaRatio: ratio,
		aspectRatio: main.aspectRatio,
		points,
		curve,
		atAlphaRef,
		atClRef,
		CLmax: null,
		warnings: [...inputs.warnings, ...main.warnings, 'CLmax is not predicted: the linear lifting line has no stall (section cl(α) tables are needed).']
	});
}

/**
 * The nonlinear lifting line at every α (measured points, the plotted grid,
 * α_ref), CL_ref found on the computed curve, and a stall sweep for CLmax.
 * Compressibility: the section cl of every table is scaled by the
 * Prandtl–Glauert factor 1/β, as the linear solver scales a₀ (so that with
 * linear tables both solvers agree); through stall that is an approximation.
 * Points the solver cannot reach (beyond a table, no convergence past stall)
 * are null and reported.
 */
function nonlinearPrediction(inputs: PredictionInputs, settings: SolverSettings, grid: number[]): PredictionOutputs {
	if (!inputs.sections || inputs.sections.length === 0) throw new Error('prediction: the nonlinear solver needs section tables (the configuration has none)');
	const m = inputs.mach ?? 0;
	if (!(m >= 0 && m < 1)) throw new Error(`prediction: mach must be in [0, 1) (got ${m})`);
	const pg = 1 / Math.sqrt(1 - m * m);
	const sections: SectionTable[] = inputs.sections.map((t) => ({ ...t, cl: Array.from(t.cl, (v) => v * pg) }));
	// Same number of terms as the linear solver by default, so that both agree for linear tables.
	const opts = { terms: settings.terms ?? DEFAULT_TERMS, symmetry: settings.symmetry };
	const warnings: string[] = [...inputs.warnings];
	if (m > 0.3) warnings.push(`Mach ${m.toFixed(2)}: Prandtl–Glauert scaling of the section tables is a rough correction.`);
	const cache = new Map<number, { CL: number; CDi: number; alphaDeg: number } | null>();
	const failures: string[] = [];
	let area = 0;
	let aspectRatio = 0;
	const solve = (a: number) => {
		if (cache.has(a)) return cache.get(a)!;
		let r: { CL: number; CDi: number; alphaDeg: number } | null = null;
		try {
			const s = solveNonlinearLiftingLine(inputs.wing, sections, { alphaDeg: a }, opts);
			area = s.area;
			aspectRatio = s.aspectRatio;
			if (s.converged || s.residual <= SWEEP_ACCEPT_RESIDUAL) r = { alphaDeg: a, CL: s.CL, CDi: s.CDi };
			else failures.push(`α = ${a}°: no convergence (residual ${s.residual.toExponential(2)})`);
		} catch (err) {
			failures.push(`α = ${a}°: ${err instanceof Error ? err.message : String(err)}`);
		}
		cache.set(a, r);
		return r;
	};
	const raw = inputs.alphasDeg.map(solve);
	const rawCurve = grid.map(solve);
	const rawRef = solve(inputs.alphaRefDeg);
	if (!area) throw new Error(`prediction: the nonlinear solver reached no α (${failures.slice(0, 3).join('; ')})`);
	const ratio = area / inputs.refArea;
	const cd0 = inputs.profileDragCD0;
	const pt = (p: { alphaDeg: number; CL: number; CDi: number } | null, alphaDeg: number): PredictedPoint =>
		p === null
			? { alphaDeg, CL: Number.NaN, CDi: Number.NaN, CD: null }
			: { alphaDeg: p.alphaDeg, CL: p.CL * ratio, CDi: p.CDi * ratio, CD: cd0 === null ? null : cd0 + p.CDi * ratio };
	const points = raw.map((p, i) => pt(p, inputs.alphasDeg[i]));
	const curve = rawCurve.map((p, i) => pt(p, grid[i]));
	// Lift slope and α_L0: least squares through the solved grid below the stall onset (exact for linear tables).
	const sweep = (() => {
		try {
			return sweepToStall(inputs.wing, sections, { ...opts, alphaStartDeg: 0, alphaStepDeg: STALL_SWEEP_STEP_DEG, alphaEndDeg: STALL_SWEEP_END_DEG });
		} catch (err) {
			warnings.push(`stall sweep failed: ${err instanceof Error ? err.message : String(err)}`);
			return null;
		}
	})();
	const onset = sweep?.stallOnset?.alphaDeg ?? Infinity;
	const lin = curve.filter((p) => Number.isFinite(p.CL) && p.alphaDeg < onset);
	const fitPts = lin.length >= 2 ? lin : curve.filter((p) => Number.isFinite(p.CL));
	if (fitPts.length < 2) throw new Error(`prediction: the nonlinear solver reached fewer than 2 α of the plotted range (${failures.slice(0, 3).join('; ')})`);
	const xbar = fitPts.reduce((t, p) => t + p.alphaDeg, 0) / fitPts.length;
	const ybar = fitPts.reduce((t, p) => t + p.CL, 0) / fitPts.length;
	const sxx = fitPts.reduce((t, p) => t + (p.alphaDeg - xbar) ** 2, 0);
	const slopePerDeg = fitPts.reduce((t, p) => t + (p.alphaDeg - xbar) * (p.CL - ybar), 0) / sxx;
	const alphaZeroLiftDeg = xbar - ybar / slopePerDeg;
	// α at CL_ref: the linear estimate, refined by one secant step on the solver.
	let atClRef: PredictedPoint = { alphaDeg: Number.NaN, CL: Number.NaN, CDi: Number.NaN, CD: null };
	const a0 = alphaZeroLiftDeg + inputs.clRef / slopePerDeg;
	const p0 = solve(Math.round(a0 * 1e9) / 1e9);
	if (p0) {
		const cl0 = p0.CL * ratio;
		const a1 = a0 + (inputs.clRef - cl0) / slopePerDeg;
		const p1 = Math.abs(a1 - a0) > 1e-9 ? solve(Math.round(a1 * 1e9) / 1e9) : p0;
		atClRef = pt(p1 ?? p0, p1 ? p1.alphaDeg : p0.alphaDeg);
	}
	if (failures.length) warnings.push(`nonlinear solver: ${failures.length} angle(s) not solved (${failures.slice(0, 3).join('; ')}${failures.length > 3 ? '; …' : ''})`);
	const CLmax = sweep && sweep.peakFound ? sweep.CLmax * ratio : null;
	if (sweep && !sweep.peakFound) warnings.push('CLmax is not predicted: the stall sweep ended before the lift fell (section tables end too early or have no stall).');
	return jsonSafe({
		liftSlopePerDeg: slopePerDeg,
		alphaZeroLiftDeg,
		areaRatio: ratio,
		aspectRatio,
		points,
		curve,
		atAlphaRef: pt(rawRef, inputs.alphaRefDeg),
		atClRef,
		CLmax,
		stall: {
			CLmax,
			alphaAtCLmaxDeg: sweep && sweep.peakFound ? sweep.alphaAtCLmaxDeg : null,
			peakFound: sweep?.peakFound ?? false,
			stallOnset: sweep?.stallOnset ? { alphaDeg: sweep.stallOnset.alphaDeg, eta: sweep.stallOnset.eta } : null,
			notes: sweep?.notes ?? []
		},
		warnings
	});
}

/** One measured point as the correlation needs it; uncertainties expanded (k = 2). */
export interface MeasuredPoint {
	idx: number;
	alphaDeg: number;
	CL: number;
	CD: number | null;
	uCL: number;
	uCD: number;
	uAlphaDeg: number;
}

export interface DeltaResult {
	quantity: DeltaQuantity;
	unit: string;
	value: number | null;
	/** Combined expanded uncertainty (RSS of fit and propagated parts). */
	uncertainty: number | null;
	tolerance: number;
	significant: boolean | null;
	outOfTolerance: boolean | null;
	details: {
		measured: number | null;
		predicted: number | null;
		uncertaintyFit: number | null;
		uncertaintyPropagated: number | null;
		note?: string;
	};
}

const rss = (...v: number[]) => Math.sqrt(v.reduce((t, x) => t + x * x, 0));

/** First-order propagation of independent point uncertainties through a linear estimator Σ wᵢ yᵢ. */
const propagate = (weights: number[], u: number[]) => Math.sqrt(weights.reduce((t, w, i) => t + w * w * u[i] * u[i], 0));

/** Simple-regression weights: slope = Σ lᵢyᵢ, intercept = Σ cᵢyᵢ (Montgomery & Runger, ch. 11). */
function lineWeights(x: number[]) {
	const n = x.length;
	const xbar = x.reduce((t, v) => t + v, 0) / n;
	const sxx = x.reduce((t, v) => t + (v - xbar) ** 2, 0);
	const l = x.map((v) => (v - xbar) / sxx);
	const c = l.map((li) => 1 / n - xbar * li);
	return { n, xbar, sxx, l, c };
}

/**
 * Deltas of one run. `measured` are the included points in the order of the
 * prediction's inputs (points[i] ↔ prediction.points[i]).
 */
export function computeDeltas(measured: MeasuredPoint[], prediction: PredictionOutputs, settings: DeltaSettings, tolerances: ToleranceSet): DeltaResult[] {
	if (measured.length !== prediction.points.length) {
		throw new Error(`deltas: ${measured.length} measured points but ${prediction.points.length} predicted ones`);
	}
	const alpha = measured.map((p) => p.alphaDeg);
	const CL = measured.map((p) => p.CL);
	const lift = fitLiftCurve(alpha, CL);
	const lin = lift.linearRange.indices;
	const tq = studentTQuantile(0.5 + CONFIDENCE / 2, lift.dof);
	const xs = lin.map((i) => alpha[i]);
	const uCL = lin.map((i) => measured[i].uCL);
	const uAlpha = lin.length ? lin.reduce((t, i) => t + measured[i].uAlphaDeg, 0) / lin.length : 0;
	const w = lineWeights(xs);
	const m = lift.liftSlopePerDeg.value;
	const b = -m * lift.alphaZeroLiftDeg.value;
	const out: DeltaResult[] = [];
	const unitOf = (k: DeltaQuantity) => DELTA_QUANTITIES.find((q) => q.key === k)!.unit;
	const push = (quantity: DeltaQuantity, measuredV: number | null, predictedV: number | null, uFit: number | null, uProp: number | null, scale = 1, note?: string, valueOverride?: number | null) => {
		const value = valueOverride !== undefined ? valueOverride : measuredV === null || predictedV === null ? null : (measuredV - predictedV) * scale;
		const U = value === null || uFit === null || uProp === null ? null : rss(uFit, uProp) * Math.abs(scale);
		const tol = tolerances[quantity];
		out.push({
			quantity,
			unit: unitOf(quantity),
			value,
			uncertainty: U,
			tolerance: tol,
			significant: value === null || U === null ? null : Math.abs(value) > U,
			outOfTolerance: value === null ? null : Math.abs(value) > tol,
			details: {
				measured: measuredV,
				predicted: predictedV,
				uncertaintyFit: uFit === null ? null : uFit * Math.abs(scale),
				uncertaintyPropagated: uProp === null ? null : uProp * Math.abs(scale),
				...(note ? { note } : {})
			}
		});
	};

	// ΔCLα, % of the prediction.
	const mp = prediction.liftSlopePerDeg;
	push('clAlphaPct', m, mp, tq * lift.liftSlopePerDeg.standardError, propagate(w.l, uCL), 100 / mp);

	// Δα_L0: α_L0 = −b/m; ∂/∂yᵢ = −cᵢ/m + (b/m²)·lᵢ; a common α bias shifts it one for one.
	const g = w.c.map((ci, k) => -ci / m + (b / (m * m)) * w.l[k]);
	push('alphaZeroLiftDeg', lift.alphaZeroLiftDeg.value, prediction.alphaZeroLiftDeg, tq * lift.alphaZeroLiftDeg.standardError, rss(propagate(g, uCL), uAlpha));

	// ΔCL at α_ref from the linear fit: SE = s·√(1/n + (α − ᾱ)²/Sxx); an α bias moves it by m·uα.
	const ar = settings.alphaRefDeg;
	const clAtRef = m * ar + b;
	const seAtRef = lift.residualStd * Math.sqrt(1 / w.n + (ar - w.xbar) ** 2 / w.sxx);
	const wRef = w.c.map((ci, k) => ci + ar * w.l[k]);
	push('clAtAlpha', clAtRef, prediction.atAlphaRef.CL, tq * seAtRef, rss(propagate(wRef, uCL), m * uAlpha));

	// ΔCLmax: only when stall was reached and the prediction models it.
	const clmaxNote = lift.CLmaxAtEdge
		? 'stall not reached in the measured range'
		: prediction.CLmax === null
			? prediction.stall
				? 'the predicted stall was not bracketed (section tables end before the lift falls)'
				: 'the linear prediction has no CLmax (give the stations section cl(α) tables)'
			: undefined;
	const atMax = measured.find((p) => p.alphaDeg === lift.alphaAtCLmaxDeg && p.CL === lift.CLmax);
	push('clMax', lift.CLmaxAtEdge ? null : lift.CLmax, prediction.CLmax, 0, atMax?.uCL ?? 0, 1, clmaxNote);

	// Polar quantities over the linear range, where both measured and predicted CD exist.
	const linCd = lin.filter((i) => measured[i].CD !== null && Number.isFinite(prediction.points[i].CL) && Number.isFinite(prediction.points[i].CDi));
	if (linCd.length >= 3) {
		const cl = linCd.map((i) => measured[i].CL);
		const cd = linCd.map((i) => measured[i].CD as number);
		const uCD = linCd.map((i) => measured[i].uCD);
		const AR = prediction.aspectRatio;
		const polar = fitParabolicPolar(cl, cd, AR);
		const tqp = studentTQuantile(0.5 + CONFIDENCE / 2, polar.dof);
		const z = lineWeights(cl.map((c) => c * c));
		const pcl = linCd.map((i) => prediction.points[i].CL);
		const pcdi = linCd.map((i) => prediction.points[i].CDi);
		const ppolar = fitParabolicPolar(pcl, pcdi, AR);
		const uK = propagate(z.l, uCD);
		const e = polar.e!.value;
		push('e', e, ppolar.e!.value, tqp * polar.e!.standardError, (e / polar.k.value) * uK);
		const cd0Pred = prediction.points[0].CD === null ? null : ppolar.CD0.value + (prediction.points[0].CD - prediction.points[0].CDi);
		push('cd0Counts', polar.CD0.value, cd0Pred, tqp * polar.CD0.standardError, propagate(z.c, uCD), 1e4, cd0Pred === null ? 'no profile-drag estimate in the configuration' : undefined);
		const c2 = settings.clRef * settings.clRef;
		push('cdiCounts', polar.k.value * c2, prediction.atClRef.CDi, tqp * polar.k.standardError * c2, uK * c2, 1e4);
	} else {
		for (const q of ['e', 'cd0Counts', 'cdiCounts'] as const) push(q, null, null, null, null, 1, 'fewer than 3 points with CD in the linear range');
	}

	// RMS ΔCL over the linear range; noise of the stated size alone would give about RMS(U).
	const dcl = lin.filter((i) => Number.isFinite(prediction.points[i].CL)).map((i) => CL[i] - prediction.points[i].CL);
	const rms = Math.sqrt(dcl.reduce((t, v) => t + v * v, 0) / dcl.length);
	const uRms = Math.sqrt(uCL.reduce((t, v) => t + v * v, 0) / uCL.length);
	push('rmsCl', rms, 0, 0, uRms, 1, undefined, rms);
	return jsonSafe(out);
}
