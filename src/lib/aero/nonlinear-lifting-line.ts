/**
 * Nonlinear lifting line: sections described by tables of cl(α) (and
 * optionally cd(α)) through stall; the lifting-line equation in Glauert's
 * Fourier form is solved iteratively for each α,
 *
 *   Fᵢ(A) = Σ Aₙ sin nθᵢ − (cᵢ/4b)·cl(α + εᵢ − αᵢ(θᵢ)) = 0,  αᵢ = Σ nAₙ sin nθᵢ / sin θᵢ,
 *
 * by Newton's method under-relaxed by step halving (the Jacobian is reused
 * while it keeps converging), and a sweep in α locates CLmax and the station
 * where stall begins. With a linear table it is the linear Glauert solution.
 *
 * References: Anderson, *Fundamentals of Aerodynamics*, ch. 5 (numerical
 * nonlinear lifting-line method); Sivells & Neely, NACA TN 1269 (1947);
 * section tables interpolated by monotone piecewise cubics (Fritsch &
 * Carlson, SIAM J. Numer. Anal. 17, 1980).
 *
 * Predictions through stall are preliminary engineering estimates;
 * flight-test and airworthiness decisions follow the organisation's approved
 * procedures, local regulations and licensed practice.
 */
import { luFactor, luSolve, type LUFactors } from './linalg';
import { integratedCoefficients } from './lifting-line';
import { planformGeometry, validateWing, isAsymmetric, sectionAt, type Wing } from './planform';

const DEG = Math.PI / 180;

export const NONLINEAR_DEFAULT_TERMS = 40;
/** Convergence: max |Fᵢ| (in units of Γ/(2bV∞)) below this. */
export const NONLINEAR_TOLERANCE = 1e-10;
/** Newton iterations before the Levenberg–Marquardt fallback takes over. */
export const NONLINEAR_MAX_ITERATIONS = 25;
/** Smallest step fraction tried when under-relaxing a Newton step. */
export const MIN_RELAXATION = 1 / 256;
/** Step of the α continuation used by a single solve, deg. */
export const CONTINUATION_STEP_DEG = 2;
/** Iteration cap of the Levenberg–Marquardt fallback. */
export const LM_MAX_ITERATIONS = 15;
/** Newton gives way to the fallback after this many poor steps in a row with a fresh Jacobian. */
export const STAGNATION_STEPS = 2;
/**
 * Past stall the lifting-line equation need not have a root (solutions are
 * not unique, and collocated ones may not exist); a sweep keeps a point whose
 * max |Fᵢ| (units of Γ/(2bV∞), i.e. ΔCL ≈ π·AR·residual) is below this,
 * marked converged: false, so that the fall of CL past the peak is seen.
 */
export const SWEEP_ACCEPT_RESIDUAL = 1e-4;

export interface SectionTable {
	/** Spanwise position η = 2y/b where this table applies (tables are blended linearly in η). */
	eta: number;
	alphaDeg: ArrayLike<number>;
	cl: ArrayLike<number>;
	cd?: ArrayLike<number>;
}

export interface NonlinearOptions {
	terms?: number;
	tolerance?: number;
	maxIterations?: number;
	/** Section-table interpolation: 'pchip' (default, monotone cubic) or 'linear'. */
	interpolation?: 'pchip' | 'linear';
	symmetry?: 'auto' | 'symmetric' | 'general';
}

export interface NonlinearLoading {
	y: number;
	eta: number;
	chord: number;
	circulationPerV: number;
	cl: number;
	cd?: number;
	alphaEffectiveDeg: number;
	alphaInducedDeg: number;
	/** Past the section's maximum lift (dcl/dα ≤ 0). */
	stalled: boolean;
}

export interface NonlinearResult {
	alphaDeg: number;
	CL: number;
	CDi: number;
	/** Profile drag from the cd tables, when every table has cd. */
	CDp?: number;
	e: number;
	delta: number;
	Cl: number;
	area: number;
	aspectRatio: number;
	coefficients: number[];
	harmonics: number[];
	loading: NonlinearLoading[];
	converged: boolean;
	iterations: number;
	/** Final max |Fᵢ|. */
	residual: number;
	factorizations: number;
	/** Spanwise stations past their section maximum, as η (signed). */
	stalledEta: number[];
}

interface Table {
	eta: number;
	a: Float64Array; // rad
	cl: Float64Array;
	dcl: Float64Array; // node slopes (pchip) per rad
	cd?: Float64Array;
	dcd?: Float64Array;
}

function finiteArray(what: string, v: ArrayLike<number> | undefined, name: string): Float64Array {
	if (!v || typeof v.length !== 'number') throw new Error(`${what}: ${name} is required`);
	const out = new Float64Array(v.length);
	for (let i = 0; i < v.length; i++) {
		if (typeof v[i] !== 'number' || !Number.isFinite(v[i])) throw new Error(`${what}: ${name}[${i}] must be a finite number (got ${String(v[i])})`);
		out[i] = v[i];
	}
	return out;
}

/** Node slopes of the Fritsch–Carlson monotone cubic (harmonic-mean form). */
function pchipSlopes(x: Float64Array, y: Float64Array, linear: boolean): Float64Array {
	const n = x.length;
	const d = new Float64Array(n);
	const h = new Float64Array(n - 1);
	const s = new Float64Array(n - 1);
	for (let i = 0; i < n - 1; i++) {
		h[i] = x[i + 1] - x[i];
		s[i] = (y[i + 1] - y[i]) / h[i];
	}
	if (linear) return d; // unused for linear interpolation
	if (n === 2) return d.fill(s[0]); // a straight line
	for (let i = 1; i < n - 1; i++) {
		if (s[i - 1] * s[i] <= 0) d[i] = 0;
		else {
			const w1 = 2 * h[i] + h[i - 1];
			const w2 = h[i] + 2 * h[i - 1];
			d[i] = (w1 + w2) / (w1 / s[i - 1] + w2 / s[i]);
		}
	}
	const end = (h0: number, h1: number, s0: number, s1: number) => {
		let v = ((2 * h0 + h1) * s0 - h0 * s1) / (h0 + h1);
		if (Math.sign(v) !== Math.sign(s0)) v = 0;
		else if (Math.sign(s0) !== Math.sign(s1) && Math.abs(v) > Math.abs(3 * s0)) v = 3 * s0;
		return v;
	};
	d[0] = end(h[0], h[1], s[0], s[1]);
	d[n - 1] = end(h[n - 2], h[n - 3] ?? h[n - 2], s[n - 2], s[n - 3] ?? s[n - 2]);
	return d;
}

function prepareTables(what: string, sections: SectionTable[], linear: boolean): Table[] {
	if (!Array.isArray(sections) || sections.length === 0) throw new Error(`${what}: at least one section table is needed (got none)`);
	const out = sections.map((s, k) => {
		const w = `${what}: section table ${k}`;
		if (typeof s.eta !== 'number' || !(s.eta >= 0 && s.eta <= 1)) throw new Error(`${w}: eta must be within [0, 1] (got ${String(s.eta)})`);
		const a = finiteArray(w, s.alphaDeg, 'alphaDeg');
		const cl = finiteArray(w, s.cl, 'cl');
		if (a.length < 2) throw new Error(`${w}: needs at least 2 points (got ${a.length})`);
		if (cl.length !== a.length) throw new Error(`${w}: cl has ${cl.length} values but alphaDeg has ${a.length}`);
		for (let i = 1; i < a.length; i++) if (!(a[i] > a[i - 1])) throw new Error(`${w}: alphaDeg must increase (index ${i}: ${a[i]} after ${a[i - 1]})`);
		const ar = a.map((v) => v * DEG);
		const t: Table = { eta: s.eta, a: ar, cl, dcl: pchipSlopes(ar, cl, linear) };
		if (s.cd !== undefined) {
			t.cd = finiteArray(w, s.cd, 'cd');
			if (t.cd.length !== a.length) throw new Error(`${w}: cd has ${t.cd.length} values but alphaDeg has ${a.length}`);
			t.dcd = pchipSlopes(ar, t.cd, linear);
		}
		return t;
	});
	out.sort((p, q) => p.eta - q.eta);
	for (let k = 1; k < out.length; k++) if (out[k].eta === out[k - 1].eta) throw new Error(`${what}: two section tables at eta = ${out[k].eta}`);
	return out;
}

/** Value and slope of a table curve at α (rad); throws outside the table. */
function evalCurve(t: Table, y: Float64Array, d: Float64Array, alpha: number, linear: boolean, where: () => string): [number, number] {
	const a = t.a;
	const n = a.length;
	if (alpha < a[0] - 1e-12 || alpha > a[n - 1] + 1e-12) {
		throw new Error(`${where()}: effective α ${(alpha / DEG).toFixed(3)}° is outside its section table (${(a[0] / DEG).toFixed(3)}° to ${(a[n - 1] / DEG).toFixed(3)}°)`);
	}
	let lo = 0;
	let hi = n - 1;
	while (hi - lo > 1) {
		const mid = (lo + hi) >> 1;
		if (a[mid] > alpha) hi = mid;
		else lo = mid;
	}
	const h = a[hi] - a[lo];
	const s = (y[hi] - y[lo]) / h;
	if (linear) return [y[lo] + s * (alpha - a[lo]), s];
	const u = (alpha - a[lo]) / h;
	const h00 = (1 + 2 * u) * (1 - u) * (1 - u);
	const h10 = u * (1 - u) * (1 - u);
	const h01 = u * u * (3 - 2 * u);
	const h11 = u * u * (u - 1);
	const v = h00 * y[lo] + h10 * h * d[lo] + h01 * y[hi] + h11 * h * d[hi];
	const dv = (6 * u * u - 6 * u) / h * y[lo] + (3 * u * u - 4 * u + 1) * d[lo] + (6 * u - 6 * u * u) / h * y[hi] + (3 * u * u - 2 * u) * d[hi];
	return [v, dv];
}

interface Blend {
	lo: Table;
	hi: Table;
	w: number; // weight of hi
}

function blendAt(tables: Table[], eta: number): Blend {
	if (tables.length === 1 || eta <= tables[0].eta) return { lo: tables[0], hi: tables[0], w: 0 };
	const last = tables[tables.length - 1];
	if (eta >= last.eta) return { lo: last, hi: last, w: 0 };
	let k = 0;
	while (eta > tables[k + 1].eta) k++;
	const lo = tables[k];
	const hi = tables[k + 1];
	return { lo, hi, w: (eta - lo.eta) / (hi.eta - lo.eta) };
}

/** A prepared nonlinear problem: geometry at collocation points and the tables. */
export interface NonlinearSystem {
	wing: Wing;
	N: number;
	symmetric: boolean;
	harmonics: Int32Array;
	theta: Float64Array;
	sinTheta: Float64Array;
	/** sin nθᵢ and n·sin nθᵢ/sin θᵢ, row-major N×N. */
	S: Float64Array;
	W: Float64Array;
	chordOver4b: Float64Array;
	/** Twist minus segment Δα_L0 at each collocation point, rad (the table supplies α_L0). */
	offset: Float64Array;
	blends: Blend[];
	y: Float64Array;
	chord: Float64Array;
	linear: boolean;
	hasCd: boolean;
	area: number;
	aspectRatio: number;
	tolerance: number;
	maxIterations: number;
}

/** Validate inputs once and precompute everything that does not depend on α. */
export function prepareNonlinear(wing: Wing, sections: SectionTable[], options: NonlinearOptions = {}): NonlinearSystem {
	const what = 'nonlinear lifting line';
	const stations = validateWing(wing);
	const N = options.terms ?? NONLINEAR_DEFAULT_TERMS;
	if (!Number.isInteger(N) || N < 1 || N > 1000) throw new Error(`${what}: terms must be an integer in [1, 1000] (got ${String(N)})`);
	const tolerance = options.tolerance ?? NONLINEAR_TOLERANCE;
	if (!(tolerance > 0)) throw new Error(`${what}: tolerance must be > 0 (got ${String(tolerance)})`);
	const maxIterations = options.maxIterations ?? NONLINEAR_MAX_ITERATIONS;
	if (!Number.isInteger(maxIterations) || maxIterations < 1) throw new Error(`${what}: maxIterations must be a positive integer (got ${String(maxIterations)})`);
	const interp = options.interpolation ?? 'pchip';
	if (interp !== 'pchip' && interp !== 'linear') throw new Error(`${what}: interpolation must be pchip or linear (got ${String(interp)})`);
	const linear = interp === 'linear';
	const tables = prepareTables(what, sections, linear);
	const sym = options.symmetry ?? 'auto';
	const symmetric = sym === 'symmetric' || (sym === 'auto' && !isAsymmetric(wing));
	const geo = planformGeometry(wing);
	const b = wing.span;
	const harmonics = new Int32Array(N);
	const theta = new Float64Array(N);
	const sinTheta = new Float64Array(N);
	for (let j = 0; j < N; j++) harmonics[j] = symmetric ? 2 * j + 1 : j + 1;
	const S = new Float64Array(N * N);
	const W = new Float64Array(N * N);
	const chordOver4b = new Float64Array(N);
	const offset = new Float64Array(N);
	const y = new Float64Array(N);
	const chord = new Float64Array(N);
	const blends: Blend[] = [];
	for (let i = 0; i < N; i++) {
		const th = symmetric ? ((i + 1) * Math.PI) / (2 * N) : ((i + 1) * Math.PI) / (N + 1);
		theta[i] = th;
		const st = Math.sin(th);
		sinTheta[i] = st;
		y[i] = (-b / 2) * Math.cos(th);
		const sec = sectionAt(wing, stations, y[i]);
		// The table replaces a₀ and the station α_L0; keep twist and control segments.
		const stationAlpha0 = sectionAt({ ...wing, segments: [] }, stations, y[i]).alphaZeroLift;
		chord[i] = sec.chord;
		chordOver4b[i] = sec.chord / (4 * b);
		offset[i] = sec.twist - (sec.alphaZeroLift - stationAlpha0);
		blends.push(blendAt(tables, Math.abs((2 * y[i]) / b)));
		for (let j = 0; j < N; j++) {
			const n = harmonics[j];
			const s = Math.sin(n * th);
			S[i * N + j] = s;
			W[i * N + j] = (n * s) / st;
		}
	}
	return {
		wing, N, symmetric, harmonics, theta, sinTheta, S, W, chordOver4b, offset, blends, y, chord, linear,
		hasCd: tables.every((t) => t.cd !== undefined),
		area: geo.area, aspectRatio: geo.aspectRatio, tolerance, maxIterations
	};
}

function sectionCl(sys: NonlinearSystem, i: number, alphaEff: number): [number, number] {
	const b = sys.blends[i];
	const where = () => `station ${i} (η = ${((2 * sys.y[i]) / sys.wing.span).toFixed(4)})`;
	const [c0, d0] = evalCurve(b.lo, b.lo.cl, b.lo.dcl, alphaEff, sys.linear, where);
	if (b.w === 0) return [c0, d0];
	const [c1, d1] = evalCurve(b.hi, b.hi.cl, b.hi.dcl, alphaEff, sys.linear, where);
	return [c0 + b.w * (c1 - c0), d0 + b.w * (d1 - d0)];
}

function sectionCd(sys: NonlinearSystem, i: number, alphaEff: number): number {
	const b = sys.blends[i];
	const where = () => `station ${i}`;
	const c0 = evalCurve(b.lo, b.lo.cd!, b.lo.dcd!, alphaEff, sys.linear, where)[0];
	if (b.w === 0) return c0;
	const c1 = evalCurve(b.hi, b.hi.cd!, b.hi.dcd!, alphaEff, sys.linear, where)[0];
	return c0 + b.w * (c1 - c0);
}

interface State {
	F: Float64Array;
	slope: Float64Array;
	alphaEff: Float64Array;
	alphaInd: Float64Array;
	cl: Float64Array;
	/** max |Fᵢ| (convergence) and Σ Fᵢ² (descent test of the relaxed step). */
	norm: number;
	sumSq: number;
}

function residual(sys: NonlinearSystem, A: Float64Array, alpha: number): State {
	const N = sys.N;
	const F = new Float64Array(N);
	const slope = new Float64Array(N);
	const alphaEff = new Float64Array(N);
	const alphaInd = new Float64Array(N);
	const cl = new Float64Array(N);
	let norm = 0;
	let sumSq = 0;
	for (let i = 0; i < N; i++) {
		let g = 0;
		let w = 0;
		const row = i * N;
		for (let j = 0; j < N; j++) {
			g += A[j] * sys.S[row + j];
			w += A[j] * sys.W[row + j];
		}
		const ae = alpha + sys.offset[i] - w;
		const [c, dc] = sectionCl(sys, i, ae);
		F[i] = g - sys.chordOver4b[i] * c;
		slope[i] = dc;
		alphaEff[i] = ae;
		alphaInd[i] = w;
		cl[i] = c;
		norm = Math.max(norm, Math.abs(F[i]));
		sumSq += F[i] * F[i];
	}
	return { F, slope, alphaEff, alphaInd, cl, norm, sumSq };
}

function jacobian(sys: NonlinearSystem, slope: Float64Array): LUFactors {
	const N = sys.N;
	const J = new Float64Array(N * N);
	for (let i = 0; i < N; i++) {
		const k = sys.chordOver4b[i] * slope[i];
		const row = i * N;
		for (let j = 0; j < N; j++) J[row + j] = sys.S[row + j] + k * sys.W[row + j];
	}
	return luFactor(J, N, 'nonlinear lifting-line Jacobian');
}

/** Warm-start state carried along a sweep: coefficients and the last Jacobian factorisation. */
export interface NonlinearWarmStart {
	A?: Float64Array;
	lu?: LUFactors;
}

/**
 * Solve the nonlinear lifting line at one root angle of attack (deg).
 * `warm` (optional) carries the previous solution and Jacobian along a sweep.
 */
export function solveNonlinearAt(sys: NonlinearSystem, alphaDeg: number, warm: NonlinearWarmStart = {}): NonlinearResult {
	if (typeof alphaDeg !== 'number' || !Number.isFinite(alphaDeg)) throw new Error(`nonlinear lifting line: alphaDeg must be a finite number (got ${String(alphaDeg)})`);
	const N = sys.N;
	const alpha = alphaDeg * DEG;
	let A: Float64Array = warm.A && warm.A.length === N ? Float64Array.from(warm.A) : new Float64Array(N);
	let st = residual(sys, A, alpha);
	let lu = warm.lu && warm.lu.n === N ? warm.lu : undefined;
	let fresh = false;
	let factorizations = 0;
	let iterations = 0;
	let slow = 0; // consecutive fresh-Jacobian steps that cut Σ F² by less than half
	while (st.norm > sys.tolerance && iterations < sys.maxIterations && slow < STAGNATION_STEPS) {
		iterations++;
		if (!lu) {
			lu = jacobian(sys, st.slope);
			factorizations++;
			fresh = true;
		}
		const dA = luSolve(lu, st.F);
		// Under-relax: halve the step until the residual falls.
		let omega = 1;
		let next: State | undefined;
		let An = A;
		for (; omega >= MIN_RELAXATION; omega /= 2) {
			An = new Float64Array(N);
			for (let j = 0; j < N; j++) An[j] = A[j] - omega * dA[j];
			try {
				next = residual(sys, An, alpha);
			} catch {
				next = undefined; // a trial step left a section table; try a shorter one
				continue;
			}
			if (next.sumSq < st.sumSq) break;
		}
		if (!next || next.sumSq >= st.sumSq) {
			if (fresh) break; // no descent even with a fresh Jacobian: report non-convergence
			lu = undefined; // stale Jacobian: refactor and retry
			continue;
		}
		// Keep the factorisation while it contracts well (modified Newton).
		if (next.sumSq > 0.0625 * st.sumSq) lu = undefined;
		slow = fresh && next.sumSq > 0.5 * st.sumSq ? slow + 1 : 0;
		fresh = false;
		A = An;
		st = next;
	}
	if (st.norm > sys.tolerance) {
		// Past stall, negative section slopes can make the Newton step useless.
		// Fall back to Levenberg–Marquardt (damped Gauss–Newton), which keeps
		// descending where the Jacobian is nearly singular (Nocedal & Wright,
		// *Numerical Optimization*, 2nd ed., §10.3).
		const lm = levenbergMarquardt(sys, A, alpha, st, Math.min(LM_MAX_ITERATIONS, sys.maxIterations));
		A = lm.A;
		st = lm.st;
		iterations += lm.iterations;
		factorizations += lm.iterations;
		lu = undefined;
	}
	warm.A = A;
	warm.lu = lu;
	return buildResult(sys, alphaDeg, A, st, iterations, factorizations);
}

function levenbergMarquardt(sys: NonlinearSystem, A0: Float64Array, alpha: number, st0: State, maxIt: number): { A: Float64Array; st: State; iterations: number } {
	const N = sys.N;
	let A: Float64Array = A0;
	let st = st0;
	let lambda = 1e-3;
	let it = 0;
	const J = new Float64Array(N * N);
	const JtJ = new Float64Array(N * N);
	const g = new Float64Array(N);
	while (st.norm > sys.tolerance && it < maxIt) {
		it++;
		for (let i = 0; i < N; i++) {
			const k = sys.chordOver4b[i] * st.slope[i];
			const row = i * N;
			for (let j = 0; j < N; j++) J[row + j] = sys.S[row + j] + k * sys.W[row + j];
		}
		// JᵀJ and Jᵀ F accumulated row by row (contiguous access).
		JtJ.fill(0);
		g.fill(0);
		for (let i = 0; i < N; i++) {
			const row = i * N;
			const fi = st.F[i];
			for (let a = 0; a < N; a++) {
				const ja = J[row + a];
				if (ja === 0) continue;
				g[a] += ja * fi;
				const ra = a * N;
				for (let b = a; b < N; b++) JtJ[ra + b] += ja * J[row + b];
			}
		}
		let maxDiag = 0;
		for (let a = 0; a < N; a++) {
			for (let b = a + 1; b < N; b++) JtJ[b * N + a] = JtJ[a * N + b];
			maxDiag = Math.max(maxDiag, JtJ[a * N + a]);
		}
		let improved = false;
		for (let tries = 0; tries < 6 && !improved; tries++) {
			const M = Float64Array.from(JtJ);
			for (let a = 0; a < N; a++) M[a * N + a] += lambda * maxDiag;
			let dA: Float64Array;
			try {
				dA = luSolve(luFactor(M, N, 'Levenberg–Marquardt system'), g);
			} catch {
				lambda *= 10;
				continue;
			}
			const An = new Float64Array(N);
			for (let j = 0; j < N; j++) An[j] = A[j] - dA[j];
			let next: State | undefined;
			try {
				next = residual(sys, An, alpha);
			} catch {
				next = undefined;
			}
			if (next && next.sumSq < st.sumSq) {
				A = An;
				st = next;
				lambda = Math.max(lambda / 10, 1e-12);
				improved = true;
			} else lambda *= 10;
		}
		if (!improved) break;
	}
	return { A, st, iterations: it };
}

function buildResult(sys: NonlinearSystem, alphaDeg: number, A: Float64Array, st: State, iterations: number, factorizations: number): NonlinearResult {
	const N = sys.N;
	const b = sys.wing.span;
	const ints = integratedCoefficients(A, sys.harmonics, sys.aspectRatio);
	const loading: NonlinearLoading[] = [];
	const stalledEta: number[] = [];
	let cdInt = 0;
	for (let i = 0; i < N; i++) {
		const gv = 2 * b * (sys.chordOver4b[i] * st.cl[i] + st.F[i]);
		const row: NonlinearLoading = {
			y: sys.y[i],
			eta: (2 * sys.y[i]) / b,
			chord: sys.chord[i],
			circulationPerV: gv,
			cl: st.cl[i],
			alphaEffectiveDeg: st.alphaEff[i] / DEG,
			alphaInducedDeg: st.alphaInd[i] / DEG,
			stalled: st.slope[i] <= 0
		};
		if (row.stalled) stalledEta.push(row.eta);
		if (sys.hasCd) {
			row.cd = sectionCd(sys, i, st.alphaEff[i]);
			// ∫ c·cd dy with dy = (b/2) sin θ dθ: trapezoid in θ (the integrand vanishes at the tips).
			let wgt = sys.symmetric ? Math.PI / (2 * N) : Math.PI / (N + 1);
			if (sys.symmetric && i === N - 1) wgt /= 2;
			cdInt += sys.chord[i] * row.cd * (b / 2) * sys.sinTheta[i] * wgt;
		}
		loading.push(row);
	}
	const res: NonlinearResult = {
		alphaDeg,
		...ints,
		area: sys.area,
		aspectRatio: sys.aspectRatio,
		coefficients: Array.from(A),
		harmonics: Array.from(sys.harmonics),
		loading,
		converged: st.norm <= sys.tolerance,
		iterations,
		residual: st.norm,
		factorizations,
		stalledEta
	};
	if (sys.hasCd) res.CDp = ((sys.symmetric ? 2 : 1) * cdInt) / sys.area;
	return res;
}

/** Solve the nonlinear lifting line for one condition. */
export function solveNonlinearLiftingLine(wing: Wing, sections: SectionTable[], condition: { alphaDeg: number }, options?: NonlinearOptions): NonlinearResult {
	const sys = prepareNonlinear(wing, sections, options);
	const alphaDeg = condition?.alphaDeg;
	if (typeof alphaDeg !== 'number' || !Number.isFinite(alphaDeg)) throw new Error(`nonlinear lifting line: alphaDeg must be a finite number (got ${String(alphaDeg)})`);
	// Continuation from α = 0 in steps of CONTINUATION_STEP_DEG: a cold start
	// near stall would otherwise begin on the wrong side of the section peak.
	const warm: NonlinearWarmStart = {};
	const steps = Math.floor(Math.abs(alphaDeg) / CONTINUATION_STEP_DEG);
	for (let k = 0; k < steps; k++) {
		try {
			solveNonlinearAt(sys, Math.sign(alphaDeg) * k * CONTINUATION_STEP_DEG, warm);
		} catch {
			break; // an intermediate α outside a table: start from what we have
		}
	}
	return solveNonlinearAt(sys, alphaDeg, warm);
}

export interface SweepOptions extends NonlinearOptions {
	alphaStartDeg?: number;
	alphaStepDeg?: number;
	/** Stop at this α even before stall (default: the end of the tables). */
	alphaEndDeg?: number;
	/** Points past the peak before stopping (default 1; an approximate post-stall point counts only if its fall exceeds 10× its error). */
	pointsPastPeak?: number;
}

export interface StallSweepResult {
	points: NonlinearResult[];
	/** CLmax from a parabola through the peak and its neighbours. */
	CLmax: number;
	alphaAtCLmaxDeg: number;
	/** First α at which a station passes its section maximum, and where. */
	stallOnset: { alphaDeg: number; eta: number; y: number } | null;
	/** False when the sweep ended (table end, non-convergence) before the peak was bracketed. */
	peakFound: boolean;
	notes: string[];
}

/**
 * Sweep α upward from `alphaStartDeg` in steps, continuing each solution from
 * the last, until CL has fallen for `pointsPastPeak` converged points; return CLmax, its
 * α, and where stall begins.
 */
export function sweepToStall(wing: Wing, sections: SectionTable[], options: SweepOptions = {}): StallSweepResult {
	const sys = prepareNonlinear(wing, sections, options);
	const start = options.alphaStartDeg ?? 0;
	const step = options.alphaStepDeg ?? 0.5;
	const past = options.pointsPastPeak ?? 1;
	if (!(Number.isInteger(past) && past >= 1)) throw new Error(`stall sweep: pointsPastPeak must be an integer ≥ 1 (got ${String(past)})`);
	if (!Number.isFinite(start)) throw new Error(`stall sweep: alphaStartDeg must be a finite number (got ${String(start)})`);
	if (!(step > 0)) throw new Error(`stall sweep: alphaStepDeg must be > 0 (got ${String(step)})`);
	const end = options.alphaEndDeg ?? Infinity;
	const warm: NonlinearWarmStart = {};
	const points: NonlinearResult[] = [];
	const notes: string[] = [];
	let stallOnset: StallSweepResult['stallOnset'] = null;
	let iPeak = -1;
	let falling = 0;
	for (let k = 0; ; k++) {
		const a = start + k * step;
		if (a > end + 1e-12) break;
		// Secant predictor from the last two converged points (equal α steps):
		// in the linear range it is exact, so Newton starts at the answer.
		if (points.length >= 2 && points[points.length - 1].converged && points[points.length - 2].converged && warm.A) {
			const p1 = points[points.length - 1].coefficients;
			const p0 = points[points.length - 2].coefficients;
			warm.A = Float64Array.from(p1, (v, j) => 2 * v - p0[j]);
		}
		let r: NonlinearResult;
		try {
			r = solveNonlinearAt(sys, a, warm);
		} catch (e) {
			notes.push(`stopped at α = ${a}°: ${(e as Error).message}`);
			break;
		}
		if (!r.converged) {
			if (r.residual > SWEEP_ACCEPT_RESIDUAL) {
				notes.push(`stopped at α = ${a}°: no convergence (residual ${r.residual.toExponential(2)} after ${r.iterations} iterations)`);
				break;
			}
			notes.push(`α = ${a}°: kept with residual ${r.residual.toExponential(2)} (post-stall, no exact root found)`);
		}
		points.push(r);
		if (!stallOnset && r.stalledEta.length > 0) {
			// Of the stations past their maximum, report the one at the highest
			// effective angle (furthest into stall).
			let best = -1;
			let bestAlpha = -Infinity;
			r.loading.forEach((s, i) => {
				if (s.stalled && s.alphaEffectiveDeg > bestAlpha) { bestAlpha = s.alphaEffectiveDeg; best = i; }
			});
			const s = r.loading[best];
			stallOnset = { alphaDeg: a, eta: Math.abs(s.eta), y: s.y };
		}
		if (iPeak < 0 || r.CL > points[iPeak].CL) {
			iPeak = points.length - 1;
			falling = 0;
		} else {
			// An approximate post-stall point ends the sweep only when its fall
			// from the peak is well above its own error, ΔCL ≈ π·AR·residual.
			const drop = points[iPeak].CL - r.CL;
			const significant = r.converged || drop > 10 * Math.PI * sys.aspectRatio * r.residual;
			if (significant && ++falling >= past) break;
		}
	}
	if (points.length === 0) throw new Error(`stall sweep: no converged point (${notes.join('; ')})`);
	const peakFound = iPeak > 0 && iPeak < points.length - 1;
	let CLmax = points[iPeak].CL;
	let alphaAt = points[iPeak].alphaDeg;
	if (peakFound) {
		// Parabola through the peak and its neighbours (equal steps).
		const y0 = points[iPeak - 1].CL, y1 = points[iPeak].CL, y2 = points[iPeak + 1].CL;
		const den = y0 - 2 * y1 + y2;
		if (den < 0) {
			const t = (0.5 * (y0 - y2)) / den;
			CLmax = y1 - 0.25 * (y0 - y2) * t;
			alphaAt = points[iPeak].alphaDeg + t * step;
		}
	} else notes.push('the sweep ended before CL fell: CLmax is the largest computed value, not a bracketed peak');
	return { points, CLmax, alphaAtCLmaxDeg: alphaAt, stallOnset, peakFound, notes };
}
