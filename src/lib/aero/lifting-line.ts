/**
 * Prandtl's lifting-line equation solved by Glauert's Fourier series with
 * collocation.
 *
 *   Γ(θ) = 2bV∞ Σ Aₙ sin nθ,  y = −(b/2) cos θ  (θ = 0 at the left tip),
 *   μ(θ)(α + ε − α_L0) sin θ = Σ Aₙ sin nθ (nμ + sin θ),  μ = a₀c/(4b),
 *   CL = π·AR·A₁,  CDi = π·AR Σ n Aₙ²,  δ = Σₙ≥₂ n (Aₙ/A₁)²,  e = 1/(1 + δ).
 *
 * References: Glauert, *The Elements of Aerofoil and Airscrew Theory*
 * (Cambridge, 1926/1947), ch. XI; Anderson, *Fundamentals of Aerodynamics*,
 * ch. 5. Compressibility by Prandtl–Glauert scaling of the section lift slope
 * (Anderson, ch. 11).
 *
 * Predictions are preliminary engineering estimates; flight-test and
 * airworthiness decisions follow the organisation's approved procedures.
 */
import { luFactor, luSolve, type LUFactors } from './linalg';
import { planformGeometry, sectionAt, validateWing, isAsymmetric, type PlanformGeometry, type Wing } from './planform';

const DEG = Math.PI / 180;

/** Default number of Fourier terms (unknowns); δ and CL are converged to < 0.1 % here for ordinary planforms. */
export const DEFAULT_TERMS = 50;
/** Default number of output stations in `loading` (Chebyshev nodes across the full span). */
export const DEFAULT_OUTPUT_STATIONS = 41;
/** Prandtl–Glauert scaling is trusted to about this Mach number; a warning is returned above it. */
export const PRANDTL_GLAUERT_WARN_MACH = 0.6;
/** |A₁| below this (relative to max |Aₙ|) means CL ≈ 0, where δ and e are undefined. */
export const ZERO_LIFT_TOLERANCE = 1e-12;
export const MAX_TERMS = 2000;

export interface FlightCondition {
	/** Root angle of attack, deg. */
	alphaDeg: number;
	mach?: number;
	/** Free-stream speed, m/s (for dimensional circulation and lift per span). */
	velocity?: number;
	/** Free-stream density, kg/m³. */
	density?: number;
}

export interface LiftingLineOptions {
	/** Number of Fourier terms (matrix size). Default DEFAULT_TERMS. */
	terms?: number;
	/** Number of loading output stations. Default DEFAULT_OUTPUT_STATIONS. */
	outputStations?: number;
	/** 'auto' (default): odd terms only unless a segment acts on one side. */
	symmetry?: 'auto' | 'symmetric' | 'general';
	/** Mach number for liftCurve (solveLiftingLine takes it from the condition). */
	mach?: number;
}

export interface LoadingStation {
	/** Spanwise coordinate, m (y > 0 right wing). */
	y: number;
	/** Signed η = 2y/b. */
	eta: number;
	chord: number;
	/** Γ/V∞, m. */
	circulationPerV: number;
	/** Γ, m²/s (when velocity is given). */
	circulation?: number;
	/** L′ = ρV∞Γ, N/m (when velocity and density are given). */
	liftPerSpan?: number;
	/** Local section lift coefficient cl = 2Γ/(V∞c). */
	cl: number;
	/** Induced angle αᵢ, deg. */
	alphaInducedDeg: number;
	/** dΓ/dy per unit V∞ (dimensionless); a trailing filament's strength is −dΓ/dy·dy. */
	dGammaDyPerV: number;
}

export interface LiftingLineResult {
	CL: number;
	CDi: number;
	/** Span efficiency 1/(1+δ) (NaN at zero lift). */
	e: number;
	/** Induced-drag factor δ (NaN at zero lift). */
	delta: number;
	/** dCL/dα, per rad. */
	liftSlope: number;
	/** Wing zero-lift angle (root α), deg. */
	alphaZeroLiftDeg: number;
	/** τ in a = a₀/[1 + (a₀/πAR)(1+τ)], for a uniform a₀ (else NaN). */
	tau: number;
	/** Rolling-moment coefficient (positive right wing down), 0 when symmetric. */
	Cl: number;
	area: number;
	aspectRatio: number;
	span: number;
	geometry: PlanformGeometry;
	/** Fourier coefficients Aₙ at this α, with their harmonic numbers. */
	coefficients: number[];
	harmonics: number[];
	symmetric: boolean;
	terms: number;
	mach: number;
	loading: LoadingStation[];
	warnings: string[];
}

/** A factored lifting-line system: the α part and the twist/α_L0 part as two right-hand sides. */
export interface LiftingLineSystem {
	wing: Wing;
	geometry: PlanformGeometry;
	symmetric: boolean;
	harmonics: Int32Array;
	theta: Float64Array;
	lu: LUFactors;
	/** Coefficients per radian of α. */
	aAlpha: Float64Array;
	/** Coefficients at α = 0 (twist and zero-lift angles). */
	aZero: Float64Array;
	mach: number;
	warnings: string[];
}

function checkNum(name: string, v: unknown): asserts v is number {
	if (typeof v !== 'number' || !Number.isFinite(v)) throw new Error(`${name} must be a finite number (got ${String(v)})`);
}

function resolveOptions(options: LiftingLineOptions | undefined) {
	const o = options ?? {};
	const terms = o.terms ?? DEFAULT_TERMS;
	if (!Number.isInteger(terms) || terms < 1 || terms > MAX_TERMS) {
		throw new Error(`lifting line: terms must be an integer in [1, ${MAX_TERMS}] (got ${String(terms)})`);
	}
	const outputStations = o.outputStations ?? DEFAULT_OUTPUT_STATIONS;
	if (!Number.isInteger(outputStations) || outputStations < 0) {
		throw new Error(`lifting line: outputStations must be a non-negative integer (got ${String(outputStations)})`);
	}
	const symmetry = o.symmetry ?? 'auto';
	if (symmetry !== 'auto' && symmetry !== 'symmetric' && symmetry !== 'general') {
		throw new Error(`lifting line: symmetry must be auto, symmetric or general (got ${String(symmetry)})`);
	}
	return { terms, outputStations, symmetry };
}

/** Prandtl–Glauert factor 1/β = 1/√(1 − M²) and any warning. */
export function prandtlGlauert(mach: number | undefined): { factor: number; warnings: string[] } {
	const m = mach ?? 0;
	checkNum('lifting line: mach', m);
	if (m < 0) throw new Error(`lifting line: mach must be ≥ 0 (got ${m})`);
	if (m >= 1) throw new Error(`lifting line: Prandtl–Glauert scaling is undefined at M ≥ 1 (got ${m})`);
	const warnings: string[] = [];
	if (m > PRANDTL_GLAUERT_WARN_MACH) {
		warnings.push(`Mach ${m} is above ${PRANDTL_GLAUERT_WARN_MACH}: Prandtl–Glauert scaling of the section lift slope is unreliable there`);
	}
	return { factor: 1 / Math.sqrt(1 - m * m), warnings };
}

/**
 * Build and factor the collocation system once. Symmetric: harmonics
 * 1, 3, …, 2N−1 at θᵢ = iπ/(2N); general: 1 … N at θᵢ = iπ/(N+1).
 */
export function buildLiftingLineSystem(wing: Wing, options?: LiftingLineOptions): LiftingLineSystem {
	const stations = validateWing(wing);
	const { terms: N, symmetry } = resolveOptions(options);
	const { factor: pg, warnings } = prandtlGlauert(options?.mach);
	const geometry = planformGeometry(wing);
	const asym = isAsymmetric(wing);
	if (symmetry === 'symmetric' && asym) {
		throw new Error('lifting line: symmetry "symmetric" was requested but a segment acts on one side only');
	}
	const symmetric = symmetry === 'symmetric' || (symmetry === 'auto' && !asym);
	const b = wing.span;
	const harmonics = new Int32Array(N);
	const theta = new Float64Array(N);
	for (let j = 0; j < N; j++) harmonics[j] = symmetric ? 2 * j + 1 : j + 1;
	for (let i = 0; i < N; i++) theta[i] = symmetric ? ((i + 1) * Math.PI) / (2 * N) : ((i + 1) * Math.PI) / (N + 1);

	const M = new Float64Array(N * N);
	const rhsA = new Float64Array(N);
	const rhs0 = new Float64Array(N);
	for (let i = 0; i < N; i++) {
		const th = theta[i];
		const st = Math.sin(th);
		const sec = sectionAt(wing, stations, (-b / 2) * Math.cos(th));
		const mu = (sec.a0 * pg * sec.chord) / (4 * b);
		rhsA[i] = mu * st;
		rhs0[i] = mu * (sec.twist - sec.alphaZeroLift) * st;
		// sin nθ by the recurrence sin(n+k)θ = 2cos kθ·sin nθ − sin(n−k)θ, k = step.
		const step = symmetric ? 2 : 1;
		const c2 = 2 * Math.cos(step * th);
		let sPrev = symmetric ? -st : 0; // sin((1−step)θ)
		let s = st; // sin θ
		const row = i * N;
		for (let j = 0; j < N; j++) {
			const n = harmonics[j];
			M[row + j] = s * (n * mu + st);
			const next = c2 * s - sPrev;
			sPrev = s;
			s = next;
		}
	}
	const lu = luFactor(M, N, 'lifting-line collocation matrix');
	return {
		wing,
		geometry,
		symmetric,
		harmonics,
		theta,
		lu,
		aAlpha: luSolve(lu, rhsA),
		aZero: luSolve(lu, rhs0),
		mach: options?.mach ?? 0,
		warnings
	};
}

interface Integrals {
	CL: number;
	CDi: number;
	delta: number;
	e: number;
	Cl: number;
}

/** Integrated coefficients from Fourier coefficients (Glauert; Anderson ch. 5). */
export function integratedCoefficients(A: ArrayLike<number>, harmonics: ArrayLike<number>, aspectRatio: number): Integrals {
	let A1 = 0;
	let A2 = 0;
	let sum = 0;
	let maxAbs = 0;
	for (let j = 0; j < A.length; j++) {
		const n = harmonics[j];
		if (n === 1) A1 = A[j];
		if (n === 2) A2 = A[j];
		sum += n * A[j] * A[j];
		maxAbs = Math.max(maxAbs, Math.abs(A[j]));
	}
	const CL = Math.PI * aspectRatio * A1;
	const CDi = Math.PI * aspectRatio * sum;
	let delta = NaN;
	let e = NaN;
	if (Math.abs(A1) > ZERO_LIFT_TOLERANCE * maxAbs && A1 !== 0) {
		delta = (sum - A1 * A1) / (A1 * A1);
		e = 1 / (1 + delta);
	}
	// Rolling moment: Cl = −(1/qSb)∫ y L′ dy = (π·AR/4)·A₂ with y = −(b/2)cos θ.
	const Cl = (Math.PI * aspectRatio * A2) / 4;
	return { CL, CDi, delta, e, Cl };
}

function tauOf(wing: Wing, liftSlope: number, aspectRatio: number, pg: number): number {
	const a0s = wing.stations.map((s) => s.a0 ?? 2 * Math.PI);
	if (a0s.some((v) => v !== a0s[0])) return NaN;
	const a0 = a0s[0] * pg;
	return ((a0 / liftSlope - 1) * Math.PI * aspectRatio) / a0 - 1;
}

/** Spanwise loading at `count` Chebyshev nodes θₖ = (k + ½)π/count (tips excluded, where c may be 0). */
function loadingOf(sys: LiftingLineSystem, A: ArrayLike<number>, count: number, velocity?: number, density?: number): LoadingStation[] {
	const b = sys.wing.span;
	const stations = validateWing(sys.wing);
	const out: LoadingStation[] = [];
	const N = A.length;
	for (let k = 0; k < count; k++) {
		const th = ((k + 0.5) * Math.PI) / count;
		const st = Math.sin(th);
		let g = 0;
		let w = 0;
		let dg = 0;
		for (let j = 0; j < N; j++) {
			const n = sys.harmonics[j];
			g += A[j] * Math.sin(n * th);
			w += n * A[j] * Math.sin(n * th);
			dg += n * A[j] * Math.cos(n * th);
		}
		const y = (-b / 2) * Math.cos(th);
		const chord = sectionAt(sys.wing, stations, y).chord;
		const gv = 2 * b * g;
		const row: LoadingStation = {
			y,
			eta: (2 * y) / b,
			chord,
			circulationPerV: gv,
			cl: (2 * gv) / chord,
			alphaInducedDeg: w / st / DEG,
			// dΓ/dy = (dΓ/dθ)/(dy/dθ) = 2b Σ n Aₙ cos nθ / ((b/2) sin θ)
			dGammaDyPerV: (4 * dg) / st
		};
		if (velocity !== undefined) {
			row.circulation = gv * velocity;
			if (density !== undefined) row.liftPerSpan = density * velocity * row.circulation;
		}
		out.push(row);
	}
	return out;
}

/**
 * Solve the lifting-line equation for one condition (Glauert's Fourier
 * series; Anderson, *Fundamentals of Aerodynamics*, ch. 5).
 */
export function solveLiftingLine(wing: Wing, condition: FlightCondition, options?: LiftingLineOptions): LiftingLineResult {
	if (!condition || typeof condition !== 'object') throw new Error('lifting line: condition must be an object with alphaDeg');
	checkNum('lifting line: alphaDeg', condition.alphaDeg);
	if (condition.velocity !== undefined) {
		checkNum('lifting line: velocity', condition.velocity);
		if (condition.velocity <= 0) throw new Error(`lifting line: velocity must be > 0 (got ${condition.velocity})`);
	}
	if (condition.density !== undefined) {
		checkNum('lifting line: density', condition.density);
		if (condition.density <= 0) throw new Error(`lifting line: density must be > 0 (got ${condition.density})`);
	}
	const opts = resolveOptions(options);
	const sys = buildLiftingLineSystem(wing, { ...options, mach: condition.mach ?? options?.mach });
	return resultAt(sys, condition.alphaDeg * DEG, opts.outputStations, condition.velocity, condition.density);
}

function resultAt(sys: LiftingLineSystem, alpha: number, outputStations: number, velocity?: number, density?: number): LiftingLineResult {
	const N = sys.aAlpha.length;
	const A = new Array<number>(N);
	for (let j = 0; j < N; j++) A[j] = alpha * sys.aAlpha[j] + sys.aZero[j];
	const AR = sys.geometry.aspectRatio;
	const ints = integratedCoefficients(A, sys.harmonics, AR);
	const slope = integratedCoefficients(sys.aAlpha, sys.harmonics, AR).CL;
	const cl0 = integratedCoefficients(sys.aZero, sys.harmonics, AR).CL;
	const pg = 1 / Math.sqrt(1 - sys.mach * sys.mach);
	return {
		...ints,
		liftSlope: slope,
		alphaZeroLiftDeg: -cl0 / slope / DEG,
		tau: tauOf(sys.wing, slope, AR, pg),
		area: sys.geometry.area,
		aspectRatio: AR,
		span: sys.wing.span,
		geometry: sys.geometry,
		coefficients: A,
		harmonics: Array.from(sys.harmonics),
		symmetric: sys.symmetric,
		terms: N,
		mach: sys.mach,
		loading: loadingOf(sys, A, outputStations, velocity, density),
		warnings: [...sys.warnings]
	};
}

export interface LiftCurvePoint {
	alphaDeg: number;
	CL: number;
	CDi: number;
	e: number;
	delta: number;
	Cl: number;
}

export interface LiftCurveResult {
	points: LiftCurvePoint[];
	liftSlope: number;
	alphaZeroLiftDeg: number;
	area: number;
	aspectRatio: number;
	symmetric: boolean;
	terms: number;
	/** Coefficients per rad of α and at α = 0: Aₙ(α) = α·aAlpha + aZero. */
	coefficientsPerRad: number[];
	coefficientsAtZeroAlpha: number[];
	harmonics: number[];
	warnings: string[];
}

/**
 * Lift curve and induced-drag polar over many angles from a single
 * factorisation: the equation is linear in α, so Aₙ(α) = α·Aₙ^α + Aₙ^0.
 */
export function liftCurve(wing: Wing, alphasDeg: ArrayLike<number>, options?: LiftingLineOptions): LiftCurveResult {
	if (!alphasDeg || alphasDeg.length === 0) throw new Error('liftCurve: alphasDeg must contain at least one angle');
	for (let i = 0; i < alphasDeg.length; i++) checkNum(`liftCurve: alphasDeg[${i}]`, alphasDeg[i]);
	const sys = buildLiftingLineSystem(wing, options);
	const AR = sys.geometry.aspectRatio;
	const N = sys.aAlpha.length;
	// Quadratic forms of CDi in α: Σ n(αa + z)² = α²Σna² + 2αΣnaz + Σnz².
	let A1a = 0, A1z = 0, A2a = 0, A2z = 0, saa = 0, saz = 0, szz = 0, maxA = 0, maxZ = 0;
	for (let j = 0; j < N; j++) {
		const n = sys.harmonics[j];
		const a = sys.aAlpha[j];
		const z = sys.aZero[j];
		if (n === 1) { A1a = a; A1z = z; }
		if (n === 2) { A2a = a; A2z = z; }
		saa += n * a * a;
		saz += n * a * z;
		szz += n * z * z;
		maxA = Math.max(maxA, Math.abs(a));
		maxZ = Math.max(maxZ, Math.abs(z));
	}
	const points: LiftCurvePoint[] = [];
	for (let i = 0; i < alphasDeg.length; i++) {
		const al = alphasDeg[i] * DEG;
		const A1 = al * A1a + A1z;
		const sum = al * al * saa + 2 * al * saz + szz;
		const CL = Math.PI * AR * A1;
		const CDi = Math.PI * AR * sum;
		const scale = Math.abs(al) * maxA + maxZ;
		let delta = NaN;
		let e = NaN;
		if (A1 !== 0 && Math.abs(A1) > ZERO_LIFT_TOLERANCE * scale) {
			delta = (sum - A1 * A1) / (A1 * A1);
			e = 1 / (1 + delta);
		}
		points.push({ alphaDeg: alphasDeg[i], CL, CDi, e, delta, Cl: (Math.PI * AR * (al * A2a + A2z)) / 4 });
	}
	const slope = Math.PI * AR * A1a;
	return {
		points,
		liftSlope: slope,
		alphaZeroLiftDeg: -(Math.PI * AR * A1z) / slope / DEG,
		area: sys.geometry.area,
		aspectRatio: AR,
		symmetric: sys.symmetric,
		terms: N,
		coefficientsPerRad: Array.from(sys.aAlpha),
		coefficientsAtZeroAlpha: Array.from(sys.aZero),
		harmonics: Array.from(sys.harmonics),
		warnings: [...sys.warnings]
	};
}

export interface EllipticInput {
	aspectRatio: number;
	alphaDeg: number;
	/** Section lift slope, per rad (default 2π). */
	a0?: number;
	alphaZeroLiftDeg?: number;
	/** Span and area, to return Γ₀/V∞. */
	span?: number;
	area?: number;
}

export interface EllipticResult {
	CL: number;
	CDi: number;
	liftSlope: number;
	e: number;
	delta: number;
	/** Induced angle, constant along the span, deg. */
	alphaInducedDeg: number;
	/** Root circulation per unit V∞, Γ₀/V∞ = 2·S·CL/(π·b), m (when span and area are given). */
	rootCirculationPerV?: number;
}

/**
 * Elliptic planform, closed form (Anderson, *Fundamentals of Aerodynamics*,
 * ch. 5): a = a₀/(1 + a₀/(π·AR)), CDi = CL²/(π·AR), αᵢ = CL/(π·AR), e = 1.
 */
export function ellipticLiftingLine(input: EllipticInput): EllipticResult {
	checkNum('elliptic: aspectRatio', input.aspectRatio);
	if (input.aspectRatio <= 0) throw new Error(`elliptic: aspectRatio must be > 0 (got ${input.aspectRatio})`);
	checkNum('elliptic: alphaDeg', input.alphaDeg);
	const a0 = input.a0 ?? 2 * Math.PI;
	checkNum('elliptic: a0', a0);
	const piAR = Math.PI * input.aspectRatio;
	const a = a0 / (1 + a0 / piAR);
	const CL = a * (input.alphaDeg - (input.alphaZeroLiftDeg ?? 0)) * DEG;
	const res: EllipticResult = { CL, CDi: (CL * CL) / piAR, liftSlope: a, e: 1, delta: 0, alphaInducedDeg: CL / piAR / DEG };
	if (input.span !== undefined && input.area !== undefined) {
		res.rootCirculationPerV = (2 * input.area * CL) / (Math.PI * input.span);
	}
	return res;
}

/**
 * Helmbold's low-aspect-ratio lift slope (Anderson, *Aircraft Performance and
 * Design*, 1999, Eq. 2.18a): a = a₀/[√(1 + (a₀/πAR)²) + a₀/πAR].
 */
export function helmboldLiftSlope(a0: number, aspectRatio: number): number {
	checkNum('helmbold: a0', a0);
	checkNum('helmbold: aspectRatio', aspectRatio);
	if (a0 <= 0 || aspectRatio <= 0) throw new Error(`helmbold: a0 and aspectRatio must be > 0 (got ${a0}, ${aspectRatio})`);
	const r = a0 / (Math.PI * aspectRatio);
	return a0 / (Math.sqrt(1 + r * r) + r);
}

/**
 * Swept, compressible lift slope (USAF DATCOM §4.1.3.2; Raymer, *Aircraft
 * Design*, ch. 12; equation from memory): CLα = 2πA/[2 + √(A²β²/κ²·(1 + tan²Λ½c/β²) + 4)],
 * β = √(1 − M²), κ = clα/(2π/β). Per rad.
 */
export function datcomLiftSlope(aspectRatio: number, sectionSlope: number, mach = 0, halfChordSweepDeg = 0): number {
	checkNum('datcom: aspectRatio', aspectRatio);
	checkNum('datcom: sectionSlope', sectionSlope);
	if (!(mach >= 0 && mach < 1)) throw new Error(`datcom: mach must be in [0, 1) (got ${mach})`);
	const beta = Math.sqrt(1 - mach * mach);
	const kappa = sectionSlope / ((2 * Math.PI) / beta);
	const t = Math.tan(halfChordSweepDeg * DEG);
	const A = aspectRatio;
	return (2 * Math.PI * A) / (2 + Math.sqrt(((A * A * beta * beta) / (kappa * kappa)) * (1 + (t * t) / (beta * beta)) + 4));
}

/**
 * Oswald efficiency estimate for a straight wing (Raymer, *Aircraft Design*,
 * ch. 12, straight-wing estimate): e = 1.78(1 − 0.045·A^0.68) − 0.64. A rule of thumb, not a prediction.
 */
export function raymerOswaldEfficiency(aspectRatio: number): number {
	checkNum('raymer: aspectRatio', aspectRatio);
	if (aspectRatio <= 0) throw new Error(`raymer: aspectRatio must be > 0 (got ${aspectRatio})`);
	return 1.78 * (1 - 0.045 * Math.pow(aspectRatio, 0.68)) - 0.64;
}
