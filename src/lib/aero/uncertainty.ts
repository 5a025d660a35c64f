/**
 * First-order (Taylor series) propagation of standard uncertainties through
 * the reduction equations, combined by root-sum-square and expanded with a
 * coverage factor k = 2 (about 95 %).
 *
 * References: AIAA S-071A-1999, *Assessment of Experimental Uncertainty with
 * Application to Wind Tunnel Testing*; ASME PTC 19.1, *Test Uncertainty*;
 * Coleman & Steele, *Experimentation, Validation, and Uncertainty Analysis
 * for Engineers*, 3rd ed., ch. 3 and 6. Inputs are treated as uncorrelated.
 */

const DEG = Math.PI / 180;

/** Coverage factor for ~95 % expanded uncertainty (AIAA S-071A, ASME PTC 19.1). */
export const COVERAGE_FACTOR = 2;

/** Standard uncertainty of one input, split into systematic (b) and random (s) parts. */
export interface InputUncertainty {
	systematic?: number;
	random?: number;
}

export interface CombinedUncertainty {
	/** Systematic standard uncertainty of the result, b_r. */
	systematic: number;
	/** Random standard uncertainty of the result, s_r. */
	random: number;
	/** Combined standard uncertainty u_c = √(b_r² + s_r²). */
	standard: number;
	/** Expanded uncertainty U = k·u_c. */
	expanded: number;
	/** Contribution of each input: sensitivity θᵢ, θᵢ·uᵢ, and its share of u_c². */
	contributions: Record<string, { sensitivity: number; standard: number; share: number }>;
}

function num(name: string, v: unknown): number {
	if (typeof v !== 'number' || !Number.isFinite(v)) throw new Error(`uncertainty: ${name} must be a finite number (got ${String(v)})`);
	return v;
}

function parts(name: string, u: InputUncertainty | number | undefined): { b: number; s: number } {
	if (u === undefined) return { b: 0, s: 0 };
	if (typeof u === 'number') {
		num(name, u);
		if (u < 0) throw new Error(`uncertainty: ${name} must be ≥ 0 (got ${u})`);
		return { b: u, s: 0 };
	}
	const b = num(`${name}.systematic`, u.systematic ?? 0);
	const s = num(`${name}.random`, u.random ?? 0);
	if (b < 0 || s < 0) throw new Error(`uncertainty: ${name} parts must be ≥ 0 (got ${b}, ${s})`);
	return { b, s };
}

/**
 * Combine sensitivities θᵢ = ∂r/∂xᵢ with input uncertainties:
 * b_r² = Σ(θᵢbᵢ)², s_r² = Σ(θᵢsᵢ)², u_c = √(b_r² + s_r²), U = k·u_c.
 */
export function combine(sensitivities: Record<string, number>, inputs: Record<string, InputUncertainty | number | undefined>, k = COVERAGE_FACTOR): CombinedUncertainty {
	let b2 = 0;
	let s2 = 0;
	const raw: Record<string, { sensitivity: number; standard: number }> = {};
	for (const name of Object.keys(sensitivities)) {
		const th = num(`sensitivity of ${name}`, sensitivities[name]);
		const { b, s } = parts(name, inputs[name]);
		b2 += (th * b) ** 2;
		s2 += (th * s) ** 2;
		raw[name] = { sensitivity: th, standard: Math.abs(th) * Math.hypot(b, s) };
	}
	const u = Math.sqrt(b2 + s2);
	const contributions: CombinedUncertainty['contributions'] = {};
	for (const [name, c] of Object.entries(raw)) contributions[name] = { ...c, share: u > 0 ? (c.standard * c.standard) / (u * u) : 0 };
	return { systematic: Math.sqrt(b2), random: Math.sqrt(s2), standard: u, expanded: k * u, contributions };
}

/**
 * Sensitivities by central differences, for reduction equations without a
 * hand-derived Jacobian: θᵢ ≈ [r(xᵢ + hᵢ) − r(xᵢ − hᵢ)]/(2hᵢ), hᵢ = 1e-6·max(|xᵢ|, 1).
 */
export function numericSensitivities(f: (x: Record<string, number>) => number, x: Record<string, number>): Record<string, number> {
	const out: Record<string, number> = {};
	for (const name of Object.keys(x)) {
		const h = 1e-6 * Math.max(Math.abs(x[name]), 1);
		const up = { ...x, [name]: x[name] + h };
		const dn = { ...x, [name]: x[name] - h };
		out[name] = (f(up) - f(dn)) / (2 * h);
	}
	return out;
}

export interface BalancePointInput {
	/** Normal and axial force (body axes), N. */
	normal: number;
	axial: number;
	/** Pitching moment about the reference point, N·m (optional). */
	pitching?: number;
	/** Dynamic pressure, Pa. */
	q: number;
	/** Reference area, m². */
	area: number;
	/** Reference chord, m (for Cm). */
	chord?: number;
	alphaDeg: number;
}

export interface BalanceUncertaintyInput {
	normal?: InputUncertainty | number;
	axial?: InputUncertainty | number;
	pitching?: InputUncertainty | number;
	q?: InputUncertainty | number;
	area?: InputUncertainty | number;
	/** Uncertainty of α, deg. */
	alphaDeg?: InputUncertainty | number;
}

export interface BalanceUncertaintyResult {
	CL: number;
	CD: number;
	Cm?: number;
	uCL: CombinedUncertainty;
	uCD: CombinedUncertainty;
	uCm?: CombinedUncertainty;
	/** Uncertainty of α, deg (measured directly, sensitivity 1). */
	uAlphaDeg: CombinedUncertainty;
}

/**
 * Uncertainty of CL, CD (and Cm) reduced from body-axis balance components:
 * CL = (N cos α − A sin α)/(qS), CD = (N sin α + A cos α)/(qS), Cm = M/(qSc),
 * with analytic sensitivities (∂CL/∂α = −CD, ∂CD/∂α = CL, per rad).
 */
export function balanceUncertainty(p: BalancePointInput, u: BalanceUncertaintyInput, k = COVERAGE_FACTOR): BalanceUncertaintyResult {
	const N = num('normal', p.normal);
	const A = num('axial', p.axial);
	const q = num('q', p.q);
	const S = num('area', p.area);
	if (q <= 0 || S <= 0) throw new Error(`uncertainty: q and area must be > 0 (got ${q}, ${S})`);
	const a = num('alphaDeg', p.alphaDeg) * DEG;
	const ca = Math.cos(a), sa = Math.sin(a);
	const qS = q * S;
	const CL = (N * ca - A * sa) / qS;
	const CD = (N * sa + A * ca) / qS;
	// α uncertainty is given in degrees; sensitivities per degree.
	const ui = u as Record<string, InputUncertainty | number | undefined>;
	const uCL = combine({ normal: ca / qS, axial: -sa / qS, q: -CL / q, area: -CL / S, alphaDeg: -CD * DEG }, ui, k);
	const uCD = combine({ normal: sa / qS, axial: ca / qS, q: -CD / q, area: -CD / S, alphaDeg: CL * DEG }, ui, k);
	const out: BalanceUncertaintyResult = { CL, CD, uCL, uCD, uAlphaDeg: combine({ alphaDeg: 1 }, ui, k) };
	if (p.pitching !== undefined) {
		const M = num('pitching', p.pitching);
		const c = num('chord', p.chord);
		if (c <= 0) throw new Error(`uncertainty: chord must be > 0 (got ${c})`);
		const Cm = M / (qS * c);
		out.Cm = Cm;
		out.uCm = combine({ pitching: 1 / (qS * c), q: -Cm / q, area: -Cm / S }, ui, k);
	}
	return out;
}
