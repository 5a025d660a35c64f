/**
 * A discrete horseshoe-vortex model of the lifting line: the wing as N
 * horseshoe vortices (bound segment on the quarter-chord line, two trailing
 * legs to infinity downstream), velocities by the Biot–Savart law, strengths
 * from the section lift law at one control point per horseshoe. An
 * independent check of the Fourier solver: as N grows, CL and CDi converge to
 * it; with N = 1 the downwash grows without bound toward the tips.
 *
 * References: Anderson, *Fundamentals of Aerodynamics*, ch. 5 (horseshoe
 * vortex, numerical lifting line); Katz & Plotkin, *Low-Speed Aerodynamics*,
 * 2nd ed., §2.10 and §10.4.5 (straight vortex segment).
 *
 * Axes: x downstream, y to the right, z up.
 */
import { solveDense } from './linalg';
import { planformGeometry, sectionAt, validateWing, type Wing } from './planform';

const DEG = Math.PI / 180;
const FOUR_PI = 4 * Math.PI;
/** A point whose sine of the angle subtended from the vortex line is below this lies on the line (e.g. the bound segment's own control points) and gets no velocity from it. */
export const VORTEX_CORE_TOLERANCE = 1e-10;

export type Vec3 = [number, number, number];

/**
 * Velocity induced at p by a straight vortex segment a→b of strength Γ
 * (Katz & Plotkin, §10.4.5): V = Γ/4π · (r1×r2)/|r1×r2|² · r0·(r1/|r1| − r2/|r2|).
 */
export function biotSavartSegment(p: Vec3, a: Vec3, b: Vec3, gamma: number): Vec3 {
	const r1x = p[0] - a[0], r1y = p[1] - a[1], r1z = p[2] - a[2];
	const r2x = p[0] - b[0], r2y = p[1] - b[1], r2z = p[2] - b[2];
	const r0x = b[0] - a[0], r0y = b[1] - a[1], r0z = b[2] - a[2];
	const cx = r1y * r2z - r1z * r2y;
	const cy = r1z * r2x - r1x * r2z;
	const cz = r1x * r2y - r1y * r2x;
	const c2 = cx * cx + cy * cy + cz * cz;
	const n1 = Math.hypot(r1x, r1y, r1z);
	const n2 = Math.hypot(r2x, r2y, r2z);
	if (n1 === 0 || n2 === 0 || c2 <= (VORTEX_CORE_TOLERANCE * n1 * n2) ** 2) return [0, 0, 0];
	const k = (gamma / (FOUR_PI * c2)) * (r0x * (r1x / n1 - r2x / n2) + r0y * (r1y / n1 - r2y / n2) + r0z * (r1z / n1 - r2z / n2));
	return [k * cx, k * cy, k * cz];
}

/**
 * Velocity induced at p by a semi-infinite vortex starting at a and running
 * to infinity along the unit vector d: the limit of the segment formula,
 * V = Γ/4π · (d×r1)/|d×r1|² · (1 + d·r1/|r1|).
 */
export function biotSavartSemiInfinite(p: Vec3, a: Vec3, d: Vec3, gamma: number): Vec3 {
	const r1x = p[0] - a[0], r1y = p[1] - a[1], r1z = p[2] - a[2];
	const cx = d[1] * r1z - d[2] * r1y;
	const cy = d[2] * r1x - d[0] * r1z;
	const cz = d[0] * r1y - d[1] * r1x;
	const c2 = cx * cx + cy * cy + cz * cz;
	const n1 = Math.hypot(r1x, r1y, r1z);
	if (n1 === 0 || c2 <= (VORTEX_CORE_TOLERANCE * n1) ** 2) return [0, 0, 0];
	const k = (gamma / (FOUR_PI * c2)) * (1 + (d[0] * r1x + d[1] * r1y + d[2] * r1z) / n1);
	return [k * cx, k * cy, k * cz];
}

const DOWNSTREAM: Vec3 = [1, 0, 0];

/** Velocity at p from a unit horseshoe with bound segment (0, y1, 0)→(0, y2, 0) and legs to +x infinity. */
export function horseshoeVelocity(p: Vec3, y1: number, y2: number, gamma: number): Vec3 {
	const a: Vec3 = [0, y1, 0];
	const b: Vec3 = [0, y2, 0];
	const bound = biotSavartSegment(p, a, b, gamma);
	const right = biotSavartSemiInfinite(p, b, DOWNSTREAM, gamma);
	// The left leg runs from infinity to a: a semi-infinite line from a with strength −Γ.
	const left = biotSavartSemiInfinite(p, a, DOWNSTREAM, -gamma);
	return [bound[0] + right[0] + left[0], bound[1] + right[1] + left[1], bound[2] + right[2] + left[2]];
}

export interface HorseshoeOptions {
	/** Number of horseshoes across the full span (default 100). */
	count?: number;
	/** Edge spacing: 'cosine' (default, clustered at the tips) or 'uniform'. */
	spacing?: 'cosine' | 'uniform';
}

export interface HorseshoePanel {
	/** Edges and control point, m. */
	y1: number;
	y2: number;
	yControl: number;
	chord: number;
	/** Γ/V∞ of this horseshoe, m. */
	circulationPerV: number;
	/** Induced angle at the control point, deg (positive for downwash). */
	alphaInducedDeg: number;
}

export interface HorseshoeResult {
	CL: number;
	CDi: number;
	/** Span efficiency CL²/(π·AR·CDi). */
	e: number;
	area: number;
	aspectRatio: number;
	count: number;
	panels: HorseshoePanel[];
}

/**
 * Solve the discrete horseshoe model: for each control point i,
 * Γᵢ/V = ½cᵢa₀ᵢ(α + εᵢ − α_L0,ᵢ − αᵢ,ᵢ), αᵢ = −w/V from all horseshoes;
 * CL = (2/S)ΣΓⱼΔyⱼ/V, CDi = (2/S)ΣΓⱼαᵢ,ⱼΔyⱼ/V (Kutta–Joukowski).
 */
export function solveHorseshoe(wing: Wing, alphaDeg: number, options: HorseshoeOptions = {}): HorseshoeResult {
	const stations = validateWing(wing);
	if (typeof alphaDeg !== 'number' || !Number.isFinite(alphaDeg)) throw new Error(`horseshoe: alphaDeg must be a finite number (got ${String(alphaDeg)})`);
	const N = options.count ?? 100;
	if (!Number.isInteger(N) || N < 1 || N > 4000) throw new Error(`horseshoe: count must be an integer in [1, 4000] (got ${String(N)})`);
	const spacing = options.spacing ?? 'cosine';
	if (spacing !== 'cosine' && spacing !== 'uniform') throw new Error(`horseshoe: spacing must be cosine or uniform (got ${String(spacing)})`);
	const b = wing.span;
	const geo = planformGeometry(wing);
	const edges = new Float64Array(N + 1);
	const cps = new Float64Array(N);
	for (let k = 0; k <= N; k++) edges[k] = spacing === 'cosine' ? (-b / 2) * Math.cos((k * Math.PI) / N) : -b / 2 + (k * b) / N;
	for (let k = 0; k < N; k++) cps[k] = spacing === 'cosine' ? (-b / 2) * Math.cos(((k + 0.5) * Math.PI) / N) : 0.5 * (edges[k] + edges[k + 1]);
	const alpha = alphaDeg * DEG;
	// Influence: K[i][j] = w (z velocity) at control point i from a unit horseshoe j.
	const K = new Float64Array(N * N);
	for (let i = 0; i < N; i++) {
		const p: Vec3 = [0, cps[i], 0];
		for (let j = 0; j < N; j++) K[i * N + j] = horseshoeVelocity(p, edges[j], edges[j + 1], 1)[2];
	}
	const M = new Float64Array(N * N);
	const rhs = new Float64Array(N);
	const chords = new Float64Array(N);
	for (let i = 0; i < N; i++) {
		const s = sectionAt(wing, stations, cps[i]);
		chords[i] = s.chord;
		const f = 0.5 * s.chord * s.a0;
		for (let j = 0; j < N; j++) M[i * N + j] = (i === j ? 1 : 0) - f * K[i * N + j];
		rhs[i] = f * (alpha + s.twist - s.alphaZeroLift);
	}
	const G = solveDense(M, rhs, N, 'horseshoe influence matrix');
	let lift = 0;
	let drag = 0;
	const panels: HorseshoePanel[] = [];
	for (let i = 0; i < N; i++) {
		let w = 0;
		for (let j = 0; j < N; j++) w += K[i * N + j] * G[j];
		const ai = -w; // per unit V∞
		const dy = edges[i + 1] - edges[i];
		lift += G[i] * dy;
		drag += G[i] * ai * dy;
		panels.push({ y1: edges[i], y2: edges[i + 1], yControl: cps[i], chord: chords[i], circulationPerV: G[i], alphaInducedDeg: ai / DEG });
	}
	const S = geo.area;
	const CL = (2 / S) * lift;
	const CDi = (2 / S) * drag;
	return { CL, CDi, e: (CL * CL) / (Math.PI * geo.aspectRatio * CDi), area: S, aspectRatio: geo.aspectRatio, count: N, panels };
}

/**
 * Downwash (positive down, per unit V∞ when circulations are per unit V∞) on
 * the lifting line at y from the solved horseshoes.
 */
export function horseshoeDownwash(result: HorseshoeResult, y: number): number {
	let w = 0;
	for (const p of result.panels) w += horseshoeVelocity([0, y, 0], p.y1, p.y2, p.circulationPerV)[2];
	return -w;
}
