/**
 * Fits and per-point uncertainty of a reduction, wired from the numerical
 * core (src/lib/aero/polar-fit.ts and uncertainty.ts). No database here.
 *
 * Fits use the non-excluded points only. Outliers are reported with their
 * point number (idx), never dropped. Where a fit is undefined (too few
 * points, no CL variation, no drag minimum) the reason is stored instead,
 * and the import goes on.
 *
 * The chart curves carry the 95 % confidence band of the mean response of a
 * straight-line least-squares fit, ŷ ± t₀.₉₇₅(n−2)·s·√(1/n + (x − x̄)²/Sxx)
 * (Montgomery & Runger, Applied Statistics and Probability for Engineers,
 * ch. 11, "confidence interval on the mean response"), so the browser draws
 * lines and bands without statistics of its own.
 *
 * Results are preliminary engineering estimates; flight-test and
 * airworthiness decisions follow the organisation's approved procedures,
 * local regulations and licensed practice.
 */
import { fitLiftCurve, fitOffsetPolar, fitParabolicPolar, meanResponseBand, CONFIDENCE, type Estimate, type Outlier } from '../../aero/polar-fit';
import { balanceUncertainty, combine, COVERAGE_FACTOR, type InputUncertainty } from '../../aero/uncertainty';

/** Samples of each chart curve. */
export const CURVE_SAMPLES = 41;

export interface FitPoint {
	idx: number;
	alphaDeg: number | null;
	CL: number | null;
	CD: number | null;
	excluded: boolean;
}

export interface NotFitted {
	status: 'not_fitted';
	reason: string;
	n: number;
}

export interface FitOutlier {
	idx: number;
	x: number;
	y: number;
	residual: number;
	standardized: number;
}

export interface LiftCurveOut {
	status: 'fitted';
	n: number;
	liftSlopePerDeg: Estimate;
	liftSlopePerRad: Estimate;
	alphaZeroLiftDeg: Estimate;
	r2: number;
	residualStd: number;
	dof: number;
	linearRange: { alphaMinDeg: number; alphaMaxDeg: number; points: number[] };
	CLmax: number;
	alphaAtCLmaxDeg: number;
	CLmaxAtEdge: boolean;
	outliers: FitOutlier[];
	curve: { alphaDeg: number; CL: number; lower: number; upper: number }[];
}

export interface PolarOut {
	status: 'fitted';
	n: number;
	CD0: Estimate;
	k: Estimate;
	e: Estimate | null;
	aspectRatio: number | null;
	r2: number;
	residualStd: number;
	dof: number;
	outliers: FitOutlier[];
	curve: { CL: number; CD: number; lower: number; upper: number }[];
}

export interface OffsetPolarOut {
	status: 'fitted';
	n: number;
	CDmin: Estimate;
	k: Estimate;
	CLminDrag: Estimate;
	e: Estimate | null;
	aspectRatio: number | null;
	quadratic: [number, number, number];
	r2: number;
	residualStd: number;
	dof: number;
	outliers: FitOutlier[];
}

export interface FitsOut {
	liftCurve: LiftCurveOut | NotFitted;
	polar: PolarOut | NotFitted;
	offsetPolar: OffsetPolarOut | NotFitted;
	/** Which points were used and how. */
	basis: { points: 'non-excluded'; n: number; confidence: number };
	warnings: string[];
	[key: string]: unknown;
}

const finite = (v: number | null | undefined): v is number => typeof v === 'number' && Number.isFinite(v);

function message(e: unknown): string {
	return e instanceof Error ? e.message : String(e);
}

/** Smallest and largest value by a loop: Math.min(...v) overflows the call stack for a few hundred thousand values. */
export function extent(v: ArrayLike<number>): [number, number] {
	let lo = Infinity, hi = -Infinity;
	for (let i = 0; i < v.length; i++) {
		if (v[i] < lo) lo = v[i];
		if (v[i] > hi) hi = v[i];
	}
	return [lo, hi];
}

function linspace(lo: number, hi: number, n = CURVE_SAMPLES): number[] {
	if (!(hi > lo)) return [lo];
	return Array.from({ length: n }, (_, i) => lo + ((hi - lo) * i) / (n - 1));
}

function mapOutliers(list: Outlier[], idxOf: readonly number[]): FitOutlier[] {
	return list.map((o) => ({ idx: idxOf[o.index], x: o.x, y: o.y, residual: o.residual, standardized: o.standardized }));
}

/**
 * Lift curve, parabolic polar and offset polar of the non-excluded points.
 * `aspectRatio` (ref span²/ref area) gives e = 1/(π·AR·k) when known.
 * `liftCurve: false` skips the lift curve (flight runs without α).
 */
export function fitReduction(points: readonly FitPoint[], aspectRatio: number | null, opts: { liftCurve?: boolean } = {}): FitsOut {
	const warnings: string[] = [];
	const used = points.filter((p) => !p.excluded);
	const AR = finite(aspectRatio) && aspectRatio > 0 ? aspectRatio : null;
	if (AR === null) warnings.push('the aspect ratio is not known (configuration reference span and area), so the span efficiency e is not given');

	let liftCurve: LiftCurveOut | NotFitted;
	const la = used.filter((p) => finite(p.alphaDeg) && finite(p.CL));
	if (opts.liftCurve === false) liftCurve = { status: 'not_fitted', reason: 'the run gives no angle of attack', n: la.length };
	else if (la.length < 3) liftCurve = { status: 'not_fitted', reason: `a lift-curve fit needs at least 3 points with α and CL (got ${la.length})`, n: la.length };
	else {
		try {
			const a = la.map((p) => p.alphaDeg as number);
			const c = la.map((p) => p.CL as number);
			const f = fitLiftCurve(a, c);
			const xs = f.linearRange.indices.map((i) => a[i]);
			const liftBand = meanResponseBand(xs, f.residualStd, f.dof);
			const [xMin, xMax] = extent(xs);
			const slope = f.liftSlopePerDeg.value;
			const intercept = -slope * f.alphaZeroLiftDeg.value;
			liftCurve = {
				status: 'fitted',
				n: la.length,
				liftSlopePerDeg: f.liftSlopePerDeg,
				liftSlopePerRad: f.liftSlopePerRad,
				alphaZeroLiftDeg: f.alphaZeroLiftDeg,
				r2: f.r2,
				residualStd: f.residualStd,
				dof: f.dof,
				linearRange: { alphaMinDeg: xMin, alphaMaxDeg: xMax, points: f.linearRange.indices.map((i) => la[i].idx).sort((x, y) => x - y) },
				CLmax: f.CLmax,
				alphaAtCLmaxDeg: f.alphaAtCLmaxDeg,
				CLmaxAtEdge: f.CLmaxAtEdge,
				outliers: mapOutliers(f.outliers, la.map((p) => p.idx)),
				curve: linspace(xMin, xMax).map((x) => {
					const y = intercept + slope * x;
					const h = liftBand(x);
					return { alphaDeg: x, CL: y, lower: y - h, upper: y + h };
				})
			};
			if (f.CLmaxAtEdge) warnings.push('CLmax is the point at the largest α: the stall was not reached, so CLmax is a lower bound');
			if (f.outliers.length) warnings.push(`${f.outliers.length} point(s) lie off the lift curve (reported as outliers, kept in the fit data)`);
		} catch (e) {
			liftCurve = { status: 'not_fitted', reason: message(e), n: la.length };
		}
	}

	const pc = used.filter((p) => finite(p.CL) && finite(p.CD));
	const cls = pc.map((p) => p.CL as number);
	const cds = pc.map((p) => p.CD as number);
	const idxs = pc.map((p) => p.idx);
	let polar: PolarOut | NotFitted;
	if (pc.length < 3) polar = { status: 'not_fitted', reason: `a polar fit needs at least 3 points with CL and CD (got ${pc.length})`, n: pc.length };
	else {
		try {
			const f = fitParabolicPolar(cls, cds, AR ?? undefined);
			const polarBand = meanResponseBand(cls.map((c) => c * c), f.residualStd, f.dof);
			const [clMin, clMax] = extent(cls);
			polar = {
				status: 'fitted',
				n: pc.length,
				CD0: f.CD0,
				k: f.k,
				e: f.e ?? null,
				aspectRatio: AR,
				r2: f.r2,
				residualStd: f.residualStd,
				dof: f.dof,
				outliers: mapOutliers(f.outliers, idxs),
				curve: linspace(clMin, clMax).map((cl) => {
					const y = f.CD0.value + f.k.value * cl * cl;
					const h = polarBand(cl * cl);
					return { CL: cl, CD: y, lower: y - h, upper: y + h };
				})
			};
			if (f.outliers.length) warnings.push(`${f.outliers.length} point(s) lie off the parabolic polar (reported as outliers, kept)`);
		} catch (e) {
			polar = { status: 'not_fitted', reason: message(e), n: pc.length };
		}
	}

	let offsetPolar: OffsetPolarOut | NotFitted;
	if (pc.length < 4) offsetPolar = { status: 'not_fitted', reason: `an offset-polar fit needs at least 4 points with CL and CD (got ${pc.length})`, n: pc.length };
	else {
		try {
			const f = fitOffsetPolar(cls, cds, AR ?? undefined);
			offsetPolar = {
				status: 'fitted',
				n: pc.length,
				CDmin: f.CDmin,
				k: f.k,
				CLminDrag: f.CLminDrag,
				e: f.e ?? null,
				aspectRatio: AR,
				quadratic: f.quadratic,
				r2: f.r2,
				residualStd: f.residualStd,
				dof: f.dof,
				outliers: mapOutliers(f.outliers, idxs)
			};
		} catch (e) {
			offsetPolar = { status: 'not_fitted', reason: message(e), n: pc.length };
		}
	}
	for (const [name, f] of [['lift curve', liftCurve], ['polar', polar], ['offset polar', offsetPolar]] as const) {
		if (f.status === 'not_fitted' && !(name === 'lift curve' && opts.liftCurve === false)) warnings.push(`${name} not fitted: ${f.reason}`);
	}
	return { liftCurve, polar, offsetPolar, basis: { points: 'non-excluded', n: used.length, confidence: CONFIDENCE }, warnings };
}

// ---------------------------------------------------------------- uncertainty

/**
 * Default standard uncertainties (1σ) of the inputs. Common practice, no
 * source: a strain-gauge balance is good to about 0.1 % of full scale at
 * 2σ, so 0.05 % at 1σ, with the run's largest load of each component standing
 * in for full scale; q from a Pitot–static pair to 0.5 % of reading;
 * reference area to 0.1 %; α to 0.05°. Coefficient files: 0.002 in CL and
 * 2 drag counts in CD. Flight: weight 0.5 %, load factor 0.005, q 1 %
 * (airspeed 0.5 %), thrust 5 %.
 */
export const DEFAULT_UNCERTAINTY = {
	source: 'common practice, no source',
	balanceFractionOfMax: 0.0005,
	qFraction: 0.005,
	areaFraction: 0.001,
	alphaDeg: 0.05,
	CL: 0.002,
	CD: 0.0002,
	weightFraction: 0.005,
	loadFactor: 0.005,
	flightQFraction: 0.01,
	thrustFraction: 0.05
};

export type UncertaintyDefaults = typeof DEFAULT_UNCERTAINTY;

export interface UncertaintyInput {
	/** Absolute standard uncertainties of balance components (N, N·m), instead of the fraction of the run's largest load. */
	normal?: number;
	axial?: number;
	pitching?: number;
	balanceFractionOfMax?: number;
	qFraction?: number;
	areaFraction?: number;
	alphaDeg?: number;
	CL?: number;
	CD?: number;
	weightFraction?: number;
	loadFactor?: number;
	flightQFraction?: number;
	thrustFraction?: number;
}

/**
 * The standard uncertainties used: reduction settings over the facility's
 * calibration sheet (`facility.corrections.uncertainty`) over the defaults.
 */
export function resolveUncertainty(settings: UncertaintyInput | undefined, facility: Record<string, unknown> | null | undefined): UncertaintyDefaults & UncertaintyInput {
	const sheet = facility && typeof facility.uncertainty === 'object' && facility.uncertainty !== null ? (facility.uncertainty as UncertaintyInput) : null;
	const pickNums = (o: UncertaintyInput | null | undefined) => Object.fromEntries(Object.entries(o ?? {}).filter(([, v]) => typeof v === 'number' && Number.isFinite(v) && v >= 0));
	const source = settings && Object.keys(pickNums(settings)).length ? 'reduction settings' : sheet ? 'facility calibration sheet' : DEFAULT_UNCERTAINTY.source;
	return { ...DEFAULT_UNCERTAINTY, ...pickNums(sheet), ...pickNums(settings), source };
}

export interface PointUncertainty {
	CL: number;
	CD: number;
	alphaDeg: number;
	Cm?: number;
	coverage: number;
}

const round = (x: number) => Number(x.toPrecision(6));

/**
 * Expanded (k = 2) uncertainty of CL, CD, Cm and α of one tunnel point from
 * body-axis balance loads (AIAA S-071A-1999; first-order propagation in
 * aero/uncertainty balanceUncertainty). The corrections are treated as exact.
 */
export function tunnelPointUncertainty(
	p: { normal: number; axial: number; pitching?: number; q: number; area: number; chord?: number; alphaDeg: number },
	u: UncertaintyDefaults & UncertaintyInput,
	maxLoads: { normal: number; axial: number; pitching: number }
): PointUncertainty {
	const comp = (abs: number | undefined, max: number) => abs ?? u.balanceFractionOfMax * max;
	const r = balanceUncertainty(p, {
		normal: comp(u.normal, maxLoads.normal),
		axial: comp(u.axial, maxLoads.axial),
		pitching: comp(u.pitching, maxLoads.pitching),
		q: u.qFraction * p.q,
		area: u.areaFraction * p.area,
		alphaDeg: u.alphaDeg
	}, COVERAGE_FACTOR);
	return { CL: round(r.uCL.expanded), CD: round(r.uCD.expanded), alphaDeg: round(r.uAlphaDeg.expanded), ...(r.uCm ? { Cm: round(r.uCm.expanded) } : {}), coverage: COVERAGE_FACTOR };
}

/** Coefficient files: the stated coefficient uncertainties, expanded. */
export function coefficientPointUncertainty(u: UncertaintyDefaults & UncertaintyInput): PointUncertainty {
	return {
		CL: round(combine({ CL: 1 }, { CL: u.CL }).expanded),
		CD: round(combine({ CD: 1 }, { CD: u.CD }).expanded),
		alphaDeg: round(combine({ alphaDeg: 1 }, { alphaDeg: u.alphaDeg }).expanded),
		coverage: COVERAGE_FACTOR
	};
}

/**
 * Flight point by the energy method: CL = n·W/(q·S) (sensitivities in
 * relative form), CD = [T·cos α − W(ḣ/V + V̇/g)]/(q·S) with the thrust term
 * uncertain (Kimberlin, Flight Testing of Fixed-Wing Aircraft, ch. 8).
 */
export function flightPointUncertainty(
	p: { CL: number; CD: number; loadFactor: number; thrustCoefficient: number },
	u: UncertaintyDefaults & UncertaintyInput
): PointUncertainty {
	// Sensitivities to ln W, ln q, ln S and ln T, so relative input uncertainties; n is absolute.
	const inputs: Record<string, InputUncertainty | number> = { W: u.weightFraction, n: u.loadFactor, q: u.flightQFraction, S: u.areaFraction, T: u.thrustFraction };
	const uCL = combine({ W: p.CL, n: p.loadFactor !== 0 ? p.CL / p.loadFactor : 0, q: -p.CL, S: -p.CL }, inputs);
	const uCD = combine({ T: p.thrustCoefficient, W: p.CD - p.thrustCoefficient, q: -p.CD, S: -p.CD }, inputs);
	return { CL: round(uCL.expanded), CD: round(uCD.expanded), alphaDeg: round(combine({ alphaDeg: 1 }, { alphaDeg: u.alphaDeg }).expanded), coverage: COVERAGE_FACTOR };
}
