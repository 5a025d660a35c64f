/**
 * Turn a reduction's fits (as the API returns them) into chart lines and
 * 95 % confidence bands. The reduction does the fitting on the server
 * (src/lib/aero/polar-fit.ts); this only samples the fitted curves for
 * drawing. When the API sends a ready band (`band: [{ x, lo, hi }]`) it is
 * used as is (fits.ts sends `curve: [{ alphaDeg, CL, lower, upper }]` and
 * `[{ CL, CD, lower, upper }]`, the band of the mean response); otherwise the band of the mean response is propagated from
 * the parameters' standard errors by the first-order (delta) method,
 * neglecting their covariance — marked "approx." in the legend.
 */
import type { Point } from './types';

interface Estimate {
	value: number;
	standardError?: number;
	ci95?: [number, number];
}
type Num = number | Estimate | null | undefined;

export interface XY {
	x: number;
	y: number;
}
export interface BandXY {
	x: number;
	lo: number;
	hi: number;
}
export interface FittedCurve {
	line: XY[];
	band: BandXY[];
	bandApprox: boolean;
	summary: string;
}

function val(n: Num): number | null {
	if (typeof n === 'number') return Number.isFinite(n) ? n : null;
	if (n && typeof n === 'object' && typeof n.value === 'number') return n.value;
	return null;
}
/** Half-width of the 95 % interval of one estimate. */
function half(n: Num): number {
	if (!n || typeof n !== 'object') return 0;
	if (n.ci95 && Number.isFinite(n.ci95[0]) && Number.isFinite(n.ci95[1])) return (n.ci95[1] - n.ci95[0]) / 2;
	if (typeof n.standardError === 'number') return 1.96 * n.standardError;
	return 0;
}

function pick(obj: Record<string, unknown> | null | undefined, ...keys: string[]): Record<string, unknown> | null {
	if (!obj) return null;
	for (const k of keys) {
		const v = obj[k];
		if (v && typeof v === 'object') return v as Record<string, unknown>;
	}
	return null;
}

function readyBand(fit: Record<string, unknown>): BandXY[] | null {
	const b = fit.band;
	if (!Array.isArray(b)) return null;
	const out = b.filter((p) => p && Number.isFinite(p.x) && Number.isFinite(p.lo) && Number.isFinite(p.hi)) as BandXY[];
	return out.length > 1 ? out : null;
}
function readyLine(fit: Record<string, unknown>): XY[] | null {
	const c = fit.curve ?? fit.line;
	if (!Array.isArray(c)) return null;
	const out = c.filter((p) => p && Number.isFinite(p.x) && Number.isFinite(p.y)) as XY[];
	return out.length > 1 ? out : null;
}

/**
 * The API's sampled curve with its band ({ <x>, <y>, lower, upper }[], from
 * src/lib/server/runs/fits.ts), optionally with x transformed (CL → CL²,
 * then sorted, since ±CL meet at one CL²).
 */
function fromCurve(raw: unknown, xKey: string, yKey: string, tx?: (x: number) => number): { line: XY[]; band: BandXY[] } | null {
	if (!Array.isArray(raw)) return null;
	const rows = raw
		.filter((r) => r && Number.isFinite(r[xKey]) && Number.isFinite(r[yKey]))
		.map((r) => ({ x: tx ? tx(r[xKey]) : r[xKey], y: r[yKey] as number, lo: r.lower as number, hi: r.upper as number }));
	if (rows.length < 2) return null;
	if (tx) rows.sort((a, b) => a.x - b.x);
	const band = rows.every((r) => Number.isFinite(r.lo) && Number.isFinite(r.hi)) ? rows.map((r) => ({ x: r.x, lo: r.lo, hi: r.hi })) : [];
	return { line: rows.map((r) => ({ x: r.x, y: r.y })), band };
}

/**
 * Chart points (x, y) of the points `keep` selects, skipping any whose x or y
 * is missing: a reduction stores null where a point had no value.
 */
export function plotPoints(points: readonly Point[], x: (p: Point) => number | null, y: (p: Point) => number | null, keep: (p: Point) => boolean = () => true): XY[] {
	const out: XY[] = [];
	for (const p of points) {
		if (!keep(p)) continue;
		const px = x(p);
		const py = y(p);
		if (px !== null && py !== null && Number.isFinite(px) && Number.isFinite(py)) out.push({ x: px, y: py });
	}
	return out;
}

/** The non-excluded points' values of one quantity, missing ones left out. */
function usedValues(points: readonly Point[], of: (p: Point) => number | null): number[] {
	return plotPoints(points, of, of, (p) => !p.excluded).map((v) => v.x);
}

function samples(lo: number, hi: number, n = 41): number[] {
	if (!(hi > lo)) return [lo];
	return Array.from({ length: n }, (_, i) => lo + ((hi - lo) * i) / (n - 1));
}

const fmt = (v: number, d: number) => v.toFixed(d).replace(/^-/, '−');

/** Lift curve CL = a·(α − α0) over the fitted linear range. */
export function liftCurve(fits: Record<string, unknown> | null | undefined, points: readonly Point[]): FittedCurve | null {
	const fit = pick(fits, 'liftCurve', 'lift', 'liftSlope');
	if (!fit || fit.status === 'not_fitted') return null;
	const aE = (fit.liftSlopePerDeg ?? fit.slopePerDeg ?? fit.a) as Num;
	const a0E = (fit.alphaZeroLiftDeg ?? fit.alpha0Deg ?? fit.alpha0) as Num;
	const a = val(aE);
	const a0 = val(a0E);
	if (a === null || a0 === null) return null;
	const range = fit.linearRange as { alphaMinDeg?: number; alphaMaxDeg?: number } | undefined;
	const used = usedValues(points, (p) => p.alphaDeg);
	const lo = range?.alphaMinDeg ?? Math.min(...used);
	const hi = range?.alphaMaxDeg ?? Math.max(...used);
	if (!Number.isFinite(lo) || !Number.isFinite(hi)) return null;
	const xs = samples(lo, hi);
	const curve = fromCurve(fit.curve, 'alphaDeg', 'CL');
	const line = curve?.line ?? readyLine(fit) ?? xs.map((x) => ({ x, y: a * (x - a0) }));
	const ready = curve?.band ?? readyBand(fit);
	// δCL² ≈ ((α − α0)·δa)² + (a·δα0)², covariance neglected.
	const ha = half(aE);
	const h0 = half(a0E);
	const band = ready ?? (ha > 0 || h0 > 0 ? xs.map((x) => {
		const y = a * (x - a0);
		const h = Math.hypot((x - a0) * ha, a * h0);
		return { x, lo: y - h, hi: y + h };
	}) : []);
	return {
		line,
		band,
		bandApprox: !ready,
		summary: `dCL/dα = ${fmt(a, 4)} /° ± ${fmt(ha, 4)}, α0 = ${fmt(a0, 2)}° ± ${fmt(h0, 2)}`
	};
}

/** Parabolic polar CD = CD0 + k·CL², drawn against CL (polar) or against CL² (linear). */
export function dragPolar(
	fits: Record<string, unknown> | null | undefined,
	points: readonly Point[],
	against: 'CL' | 'CL2'
): FittedCurve | null {
	const fit = pick(fits, 'parabolicPolar', 'polar', 'dragPolar');
	if (!fit || fit.status === 'not_fitted') return null;
	const cd0E = (fit.CD0 ?? fit.cd0) as Num;
	const kE = (fit.k ?? fit.K) as Num;
	const cd0 = val(cd0E);
	const k = val(kE);
	if (cd0 === null || k === null) return null;
	const cls = usedValues(points, (p) => p.CL);
	if (cls.length === 0) return null;
	const lo = Math.min(...cls);
	const hi = Math.max(...cls);
	const xs = samples(against === 'CL' ? lo : Math.min(...cls.map((c) => c * c)), against === 'CL' ? hi : Math.max(...cls.map((c) => c * c)));
	const h0 = half(cd0E);
	const hk = half(kE);
	const at = (x: number) => {
		const cl2 = against === 'CL' ? x * x : x;
		const y = cd0 + k * cl2;
		// δCD² ≈ δCD0² + (CL²·δk)², covariance neglected.
		const h = Math.hypot(h0, cl2 * hk);
		return { y, h };
	};
	const curve = fromCurve(fit.curve, 'CL', 'CD', against === 'CL2' ? (cl) => cl * cl : undefined);
	const ready = curve?.band ?? (against === 'CL' ? readyBand(fit) : null);
	const e = val(fit.e as Num);
	return {
		line: curve?.line ?? xs.map((x) => ({ x, y: at(x).y })),
		band: ready ?? (h0 > 0 || hk > 0 ? xs.map((x) => { const { y, h } = at(x); return { x, lo: y - h, hi: y + h }; }) : []),
		bandApprox: !ready,
		summary: `CD0 = ${fmt(cd0, 4)} ± ${fmt(h0, 4)}, k = ${fmt(k, 4)} ± ${fmt(hk, 4)}${e !== null ? `, e = ${fmt(e, 3)}` : ''}`
	};
}
