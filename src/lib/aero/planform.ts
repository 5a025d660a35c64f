/**
 * Planform of a straight (unswept quarter-chord) wing, described along the
 * semi-span by stations at η = 2y/b, linear between stations and mirrored.
 * Geometric definitions (area, aspect ratio, mean aerodynamic chord) as in
 * Anderson, *Fundamentals of Aerodynamics*, ch. 5, and Raymer, *Aircraft
 * Design: A Conceptual Approach*, wing-geometry section (chapter from memory).
 */

const DEG = Math.PI / 180;

export interface WingStation {
	/** Spanwise position η = 2y/b, 0 at the root, 1 at the tip. */
	eta: number;
	/** Chord, m. May be 0 only at the tip (η = 1). */
	chord: number;
	/** Geometric twist, deg, positive nose-up relative to the root. Default 0. */
	twistDeg?: number;
	/** Section lift slope, per rad. Default 2π (thin-airfoil theory). */
	a0?: number;
	/** Section zero-lift angle, deg. Default 0. */
	alphaZeroLiftDeg?: number;
}

export interface ControlSegment {
	/** Inboard and outboard edges, η in [0, 1]. */
	etaStart: number;
	etaEnd: number;
	/** Change of section zero-lift angle, deg (a trailing-edge-down flap makes it negative). */
	deltaAlphaZeroLiftDeg: number;
	/** Which side it acts on: both (default), or only the left (y < 0) or right (y > 0) wing. */
	side?: 'both' | 'left' | 'right';
	/** Optional label for reports. */
	name?: string;
}

export interface Wing {
	/** Span b, m. */
	span: number;
	stations: WingStation[];
	segments?: ControlSegment[];
}

export interface SectionAt {
	chord: number;
	twist: number; // rad
	a0: number; // per rad
	alphaZeroLift: number; // rad, including control segments
}

export interface PlanformGeometry {
	span: number;
	area: number;
	aspectRatio: number;
	rootChord: number;
	tipChord: number;
	taperRatio: number;
	/** Mean aerodynamic chord (2/S)∫c² dy, m. */
	meanAerodynamicChord: number;
	/** Spanwise position of the MAC, (2/S)∫c·y dy over one semi-span, m. */
	meanAerodynamicChordY: number;
	/** True when some control segment acts on one side only. */
	asymmetric: boolean;
}

export const DEFAULT_A0 = 2 * Math.PI;

function isNum(v: unknown): v is number {
	return typeof v === 'number' && Number.isFinite(v);
}

/**
 * Validate a wing; throws an error naming the station or segment and the
 * problem. Returns normalised stations (defaults filled).
 */
export function validateWing(wing: Wing): Required<WingStation>[] {
	if (!wing || typeof wing !== 'object') throw new Error('wing: expected an object with span and stations');
	if (!isNum(wing.span)) throw new Error(`wing: span must be a finite number (got ${String(wing.span)})`);
	if (wing.span <= 0) throw new Error(`wing: span must be > 0 (got ${wing.span})`);
	const st = wing.stations;
	if (!Array.isArray(st) || st.length < 2) {
		throw new Error(`wing: at least two stations are needed (got ${Array.isArray(st) ? st.length : 'none'})`);
	}
	const out: Required<WingStation>[] = [];
	for (let i = 0; i < st.length; i++) {
		const s = st[i];
		const where = `station ${i}`;
		if (!s || typeof s !== 'object') throw new Error(`${where}: expected an object`);
		if (!isNum(s.eta)) throw new Error(`${where}: eta must be a finite number (got ${String(s.eta)})`);
		if (s.eta < 0 || s.eta > 1) throw new Error(`${where}: eta must be within [0, 1] (got ${s.eta})`);
		if (i === 0 && s.eta !== 0) throw new Error(`${where}: the first station must be at the root, eta = 0 (got ${s.eta})`);
		if (i === st.length - 1 && s.eta !== 1) throw new Error(`${where}: the last station must be at the tip, eta = 1 (got ${s.eta})`);
		if (i > 0 && !(s.eta > st[i - 1].eta)) {
			throw new Error(`${where}: eta must increase from station to station (got ${s.eta} after ${st[i - 1].eta})`);
		}
		if (!isNum(s.chord)) throw new Error(`${where}: chord must be a finite number (got ${String(s.chord)})`);
		const isTip = i === st.length - 1;
		if (isTip ? s.chord < 0 : s.chord <= 0) {
			throw new Error(`${where}: chord must be > 0${isTip ? ' (or 0 at the tip)' : ''} (got ${s.chord})`);
		}
		const twistDeg = s.twistDeg ?? 0;
		const a0 = s.a0 ?? DEFAULT_A0;
		const alphaZeroLiftDeg = s.alphaZeroLiftDeg ?? 0;
		if (!isNum(twistDeg)) throw new Error(`${where}: twistDeg must be a finite number (got ${String(twistDeg)})`);
		if (!isNum(a0) || a0 <= 0) throw new Error(`${where}: a0 must be > 0 per rad (got ${String(a0)})`);
		if (!isNum(alphaZeroLiftDeg)) throw new Error(`${where}: alphaZeroLiftDeg must be a finite number (got ${String(alphaZeroLiftDeg)})`);
		out.push({ eta: s.eta, chord: s.chord, twistDeg, a0, alphaZeroLiftDeg });
	}
	const segs = wing.segments ?? [];
	if (!Array.isArray(segs)) throw new Error('wing: segments must be an array');
	segs.forEach((g, i) => {
		const where = `segment ${i}${g?.name ? ` (${g.name})` : ''}`;
		if (!isNum(g?.etaStart) || !isNum(g?.etaEnd)) throw new Error(`${where}: etaStart and etaEnd must be finite numbers`);
		if (g.etaStart < 0 || g.etaEnd > 1 || !(g.etaEnd > g.etaStart)) {
			throw new Error(`${where}: need 0 ≤ etaStart < etaEnd ≤ 1 (got ${g.etaStart} to ${g.etaEnd})`);
		}
		if (!isNum(g.deltaAlphaZeroLiftDeg)) throw new Error(`${where}: deltaAlphaZeroLiftDeg must be a finite number (got ${String(g.deltaAlphaZeroLiftDeg)})`);
		const side = g.side ?? 'both';
		if (side !== 'both' && side !== 'left' && side !== 'right') throw new Error(`${where}: side must be both, left or right (got ${String(side)})`);
	});
	return out;
}

/** True when some control segment acts on one side only. */
export function isAsymmetric(wing: Wing): boolean {
	return (wing.segments ?? []).some((g) => (g.side ?? 'both') !== 'both' && g.deltaAlphaZeroLiftDeg !== 0);
}

/**
 * Section properties at spanwise coordinate y (m, −b/2 … b/2; y > 0 is the
 * right wing), interpolated linearly in η between stations.
 */
export function sectionAt(wing: Wing, stations: Required<WingStation>[], y: number): SectionAt {
	const eta = Math.min(1, Math.abs((2 * y) / wing.span));
	let k = 0;
	while (k < stations.length - 2 && eta > stations[k + 1].eta) k++;
	const s0 = stations[k];
	const s1 = stations[k + 1];
	const t = (eta - s0.eta) / (s1.eta - s0.eta);
	const lerp = (a: number, b: number) => a + (b - a) * t;
	let alphaZeroLiftDeg = lerp(s0.alphaZeroLiftDeg, s1.alphaZeroLiftDeg);
	for (const g of wing.segments ?? []) {
		const side = g.side ?? 'both';
		if (side === 'left' && y > 0) continue;
		if (side === 'right' && y < 0) continue;
		if (eta >= g.etaStart && eta <= g.etaEnd) alphaZeroLiftDeg += g.deltaAlphaZeroLiftDeg;
	}
	return {
		chord: lerp(s0.chord, s1.chord),
		twist: lerp(s0.twistDeg, s1.twistDeg) * DEG,
		a0: lerp(s0.a0, s1.a0),
		alphaZeroLift: alphaZeroLiftDeg * DEG
	};
}

/**
 * Area, aspect ratio, taper and mean aerodynamic chord of the planform.
 * Integrals are exact for chord linear between stations.
 */
export function planformGeometry(wing: Wing): PlanformGeometry {
	const st = validateWing(wing);
	const b = wing.span;
	let intC = 0; // ∫ c dη over [0, 1]
	let intC2 = 0; // ∫ c² dη
	let intCEta = 0; // ∫ c η dη
	for (let i = 0; i < st.length - 1; i++) {
		const h = st[i + 1].eta - st[i].eta;
		const c1 = st[i].chord;
		const c2 = st[i + 1].chord;
		const e1 = st[i].eta;
		const e2 = st[i + 1].eta;
		intC += (h * (c1 + c2)) / 2;
		intC2 += (h * (c1 * c1 + c1 * c2 + c2 * c2)) / 3;
		// Simpson's rule is exact for the quadratic c·η.
		const em = (e1 + e2) / 2;
		const cm = (c1 + c2) / 2;
		intCEta += (h / 6) * (c1 * e1 + 4 * cm * em + c2 * e2);
	}
	const area = b * intC; // S = 2 ∫0^{b/2} c dy = b ∫0^1 c dη
	const mac = (b / area) * intC2;
	const yMac = (b / area) * (b / 2) * intCEta;
	const rootChord = st[0].chord;
	const tipChord = st[st.length - 1].chord;
	return {
		span: b,
		area,
		aspectRatio: (b * b) / area,
		rootChord,
		tipChord,
		taperRatio: tipChord / rootChord,
		meanAerodynamicChord: mac,
		meanAerodynamicChordY: yMac,
		asymmetric: isAsymmetric(wing)
	};
}

/** Stations of a linearly tapered wing of span b, area S and taper λ = c_tip/c_root. */
export function taperedWing(span: number, area: number, taperRatio: number, extra: Partial<WingStation> = {}): Wing {
	if (!(span > 0)) throw new Error(`taperedWing: span must be > 0 (got ${span})`);
	if (!(area > 0)) throw new Error(`taperedWing: area must be > 0 (got ${area})`);
	if (!(taperRatio >= 0)) throw new Error(`taperedWing: taper ratio must be ≥ 0 (got ${taperRatio})`);
	const cr = (2 * area) / (span * (1 + taperRatio));
	return {
		span,
		stations: [
			{ ...extra, eta: 0, chord: cr },
			{ ...extra, eta: 1, chord: cr * taperRatio }
		]
	};
}

/**
 * Stations approximating an elliptic planform c = c0·√(1 − η²), clustered
 * toward the tip (η = sin φ) where the shape is steep.
 */
export function ellipticWing(span: number, area: number, count = 101, extra: Partial<WingStation> = {}): Wing {
	if (!(span > 0)) throw new Error(`ellipticWing: span must be > 0 (got ${span})`);
	if (!(area > 0)) throw new Error(`ellipticWing: area must be > 0 (got ${area})`);
	if (!(Number.isInteger(count) && count >= 2)) throw new Error(`ellipticWing: count must be an integer ≥ 2 (got ${count})`);
	const c0 = (4 * area) / (Math.PI * span);
	const stations: WingStation[] = [];
	for (let i = 0; i < count; i++) {
		const phi = ((Math.PI / 2) * i) / (count - 1);
		const eta = i === count - 1 ? 1 : Math.sin(phi);
		stations.push({ ...extra, eta, chord: i === count - 1 ? 0 : c0 * Math.cos(phi) });
	}
	return { span, stations };
}
