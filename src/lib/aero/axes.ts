/**
 * Balance axes and reductions: body-axis components to stability and wind
 * axes, moment transfer from the balance centre to the moment reference
 * point, weight-tare subtraction interpolated in α, and coefficients.
 *
 * Axis conventions (Etkin & Reid, *Dynamics of Flight*, ch. 4; Barlow, Rae &
 * Pope, *Low-Speed Wind Tunnel Testing*, 3rd ed., balance-data chapters, from memory): body x forward,
 * y right, z down. A balance reports normal force N (up, = −Z), axial force
 * A (aft, = −X), side force Y (right), and rolling, pitching, yawing moments
 * (right wing down, nose up, nose right positive).
 */

const DEG = Math.PI / 180;

export interface BodyComponents {
	normal: number;
	axial: number;
	side?: number;
	rolling?: number;
	pitching?: number;
	yawing?: number;
}

export interface WindComponents {
	lift: number;
	drag: number;
	/** Cross-wind (side) force in wind axes. */
	sideForce: number;
	/** Moments in stability axes (rotated by α only). */
	rolling: number;
	pitching: number;
	yawing: number;
}

function num(name: string, v: unknown): number {
	if (typeof v !== 'number' || !Number.isFinite(v)) throw new Error(`${name} must be a finite number (got ${String(v)})`);
	return v;
}

/**
 * Body-axis balance components to wind axes at angle of attack α and
 * sideslip β (deg): L = N cosα − A sinα (at β = 0),
 * D = A cosα cosβ − Y sinβ + N sinα cosβ, C = A cosα sinβ + Y cosβ + N sinα sinβ.
 * Moments are rotated to stability axes (by α).
 */
export function bodyToWind(c: BodyComponents, alphaDeg: number, betaDeg = 0): WindComponents {
	const N = num('bodyToWind: normal', c.normal);
	const A = num('bodyToWind: axial', c.axial);
	const Y = num('bodyToWind: side', c.side ?? 0);
	const l = num('bodyToWind: rolling', c.rolling ?? 0);
	const m = num('bodyToWind: pitching', c.pitching ?? 0);
	const n = num('bodyToWind: yawing', c.yawing ?? 0);
	const a = num('bodyToWind: alphaDeg', alphaDeg) * DEG;
	const b = num('bodyToWind: betaDeg', betaDeg) * DEG;
	const ca = Math.cos(a), sa = Math.sin(a), cb = Math.cos(b), sb = Math.sin(b);
	return {
		lift: N * ca - A * sa,
		drag: A * ca * cb - Y * sb + N * sa * cb,
		sideForce: A * ca * sb + Y * cb + N * sa * sb,
		rolling: l * ca + n * sa,
		pitching: m,
		yawing: n * ca - l * sa
	};
}

/** Inverse of `bodyToWind` at β = 0 (stability axes): N = L cosα + D sinα, A = D cosα − L sinα. */
export function windToBody(w: { lift: number; drag: number }, alphaDeg: number): { normal: number; axial: number } {
	const a = num('windToBody: alphaDeg', alphaDeg) * DEG;
	return { normal: w.lift * Math.cos(a) + w.drag * Math.sin(a), axial: w.drag * Math.cos(a) - w.lift * Math.sin(a) };
}

export interface Offset {
	/** Position of the balance centre relative to the moment reference point, body axes, m (x forward, y right, z down). */
	dx: number;
	dy?: number;
	dz?: number;
}

/**
 * Transfer moments from the balance centre B to the moment reference point
 * P: M_P = M_B + r_PB × F, with F = (−A, Y, −N) in body axes.
 */
export function transferMoments(c: BodyComponents, offset: Offset): BodyComponents {
	const X = -num('transferMoments: axial', c.axial);
	const Y = num('transferMoments: side', c.side ?? 0);
	const Z = -num('transferMoments: normal', c.normal);
	const rx = num('transferMoments: dx', offset.dx);
	const ry = num('transferMoments: dy', offset.dy ?? 0);
	const rz = num('transferMoments: dz', offset.dz ?? 0);
	return {
		...c,
		rolling: (c.rolling ?? 0) + (ry * Z - rz * Y),
		pitching: (c.pitching ?? 0) + (rz * X - rx * Z),
		yawing: (c.yawing ?? 0) + (rx * Y - ry * X)
	};
}

export interface TarePoint extends BodyComponents {
	alphaDeg: number;
}

const COMPONENTS = ['normal', 'axial', 'side', 'rolling', 'pitching', 'yawing'] as const;

/**
 * Weight tare at α from a wind-off run, interpolated linearly in α
 * (Barlow, Rae & Pope, 3rd ed., weight tares; chapter from memory). α outside the tare
 * run's range is refused: extrapolating a tare is a silent error.
 */
export function tareAt(tare: ArrayLike<TarePoint>, alphaDeg: number): Required<BodyComponents> {
	if (!tare || tare.length === 0) throw new Error('tare: the wind-off run has no points');
	num('tare: alphaDeg', alphaDeg);
	const pts = Array.from(tare).map((p, i) => {
		num(`tare point ${i}: alphaDeg`, p.alphaDeg);
		return p;
	});
	pts.sort((p, q) => p.alphaDeg - q.alphaDeg);
	for (let i = 1; i < pts.length; i++) {
		if (pts[i].alphaDeg === pts[i - 1].alphaDeg) throw new Error(`tare: two wind-off points at α = ${pts[i].alphaDeg}°`);
	}
	const lo = pts[0].alphaDeg;
	const hi = pts[pts.length - 1].alphaDeg;
	const get = (p: BodyComponents, k: (typeof COMPONENTS)[number]) => (p[k] ?? 0) as number;
	const out = {} as Required<BodyComponents>;
	if (pts.length === 1) {
		if (alphaDeg !== lo) throw new Error(`tare: α = ${alphaDeg}° but the wind-off run has one point at ${lo}°`);
		for (const k of COMPONENTS) out[k] = get(pts[0], k);
		return out;
	}
	if (alphaDeg < lo || alphaDeg > hi) {
		throw new Error(`tare: α = ${alphaDeg}° is outside the wind-off run (${lo}° to ${hi}°)`);
	}
	let k = 0;
	while (k < pts.length - 2 && alphaDeg > pts[k + 1].alphaDeg) k++;
	const t = (alphaDeg - pts[k].alphaDeg) / (pts[k + 1].alphaDeg - pts[k].alphaDeg);
	for (const key of COMPONENTS) out[key] = get(pts[k], key) + t * (get(pts[k + 1], key) - get(pts[k], key));
	return out;
}

/** Subtract the weight tare interpolated at the point's α from its components. */
export function subtractTare(point: TarePoint, tare: ArrayLike<TarePoint>): Required<TarePoint> {
	const t = tareAt(tare, point.alphaDeg);
	const out = { alphaDeg: point.alphaDeg } as Required<TarePoint>;
	for (const k of COMPONENTS) out[k] = ((point[k] ?? 0) as number) - t[k];
	return out;
}

export interface ReferenceValues {
	/** Dynamic pressure, Pa. */
	q: number;
	/** Reference area, m². */
	area: number;
	/** Reference chord for pitching moment, m. */
	chord: number;
	/** Reference span for rolling and yawing moments, m. */
	span: number;
}

/** Wind-axis forces and stability-axis moments to coefficients CL, CD, CY, Cl, Cm, Cn. */
export function windCoefficients(w: WindComponents, ref: ReferenceValues) {
	const q = num('coefficients: q', ref.q);
	const S = num('coefficients: area', ref.area);
	const c = num('coefficients: chord', ref.chord);
	const b = num('coefficients: span', ref.span);
	if (q <= 0 || S <= 0 || c <= 0 || b <= 0) {
		throw new Error(`coefficients: q, area, chord and span must be > 0 (got ${q}, ${S}, ${c}, ${b})`);
	}
	const qS = q * S;
	return {
		CL: w.lift / qS,
		CD: w.drag / qS,
		CY: w.sideForce / qS,
		Cl: w.rolling / (qS * b),
		Cm: w.pitching / (qS * c),
		Cn: w.yawing / (qS * b)
	};
}
