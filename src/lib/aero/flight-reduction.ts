/**
 * Flight-test reductions: one steady point to CL, CD, q, Reynolds and Mach
 * numbers by the energy method (specific excess power), and detection of
 * steady segments in a time history.
 *
 * Reference: Kimberlin, *Flight Testing of Fixed-Wing Aircraft* (AIAA, 2003),
 * ch. 8 (drag polar from steady and quasi-steady flight, energy method):
 *   CL = n_z·W/(q·S),
 *   Ps = dh/dt + (V/g)·dV/dt = V(T·cos(α + i_T) − D)/W,
 *   CD = [T·cos(α + i_T) − W(ḣ/V + V̇/g)]/(q·S); power off: CD = W·sin γ/(q·S).
 *
 * Results are preliminary engineering estimates; flight-test and
 * airworthiness decisions follow the organisation's approved procedures,
 * local regulations and licensed practice.
 */
import { G0, atmosphereFromPressureAltitude } from './atmosphere';
import { airspeeds, reynoldsNumber, type AirspeedKind } from './airspeed';

const DEG = Math.PI / 180;

export interface FlightPointInput {
	/** Aircraft weight, N. */
	weight: number;
	/** Normal load factor n_z (1 in steady level flight). Default 1. */
	loadFactor?: number;
	/** Measured airspeed, m/s (or Mach when kind = 'MACH'). */
	airspeed: number;
	airspeedKind: AirspeedKind;
	/** Pressure altitude, m (geopotential). */
	pressureAltitude: number;
	/** Outside (static) air temperature, K. */
	outsideAirTemperature: number;
	/** Angle of attack, deg (for the thrust component). Default 0. */
	alphaDeg?: number;
	/** Rate of climb dh/dt, m/s (geometric-height rate; negative in a descent). Default 0. */
	climbRate?: number;
	/** Along-path acceleration dV/dt of the true airspeed, m/s². Default 0. */
	acceleration?: number;
	/** Net thrust along the thrust line, N. Omit, or 0, for a power-off glide. */
	thrust?: number;
	/** Thrust-line incidence to the body reference line, deg. Default 0. */
	thrustIncidenceDeg?: number;
	/** Wing reference area, m². */
	wingArea: number;
	/** Reference length for the Reynolds number (MAC), m. */
	referenceChord: number;
}

export interface FlightPointResult {
	CL: number;
	CD: number;
	/** Dynamic pressure ½ρV², Pa. */
	q: number;
	reynolds: number;
	mach: number;
	tas: number;
	eas: number;
	cas: number;
	density: number;
	/** Specific excess power dh/dt + (V/g)dV/dt, m/s. */
	specificExcessPower: number;
	/** Flight-path angle from the energy balance sin γ = ḣ/V, deg. */
	flightPathAngleDeg: number;
	powerOff: boolean;
}

function num(name: string, v: unknown): number {
	if (typeof v !== 'number' || !Number.isFinite(v)) throw new Error(`flight point: ${name} must be a finite number (got ${String(v)})`);
	return v;
}

/**
 * Reduce one steady (or quasi-steady) flight point to CL and CD by the energy
 * method (Kimberlin, ch. 8).
 */
export function reduceFlightPoint(p: FlightPointInput): FlightPointResult {
	const W = num('weight', p.weight);
	if (W <= 0) throw new Error(`flight point: weight must be > 0 N (got ${W})`);
	const n = num('loadFactor', p.loadFactor ?? 1);
	const S = num('wingArea', p.wingArea);
	if (S <= 0) throw new Error(`flight point: wingArea must be > 0 (got ${S})`);
	const c = num('referenceChord', p.referenceChord);
	if (c <= 0) throw new Error(`flight point: referenceChord must be > 0 (got ${c})`);
	const hdot = num('climbRate', p.climbRate ?? 0);
	const vdot = num('acceleration', p.acceleration ?? 0);
	const T = num('thrust', p.thrust ?? 0);
	const alpha = num('alphaDeg', p.alphaDeg ?? 0) * DEG;
	const iT = num('thrustIncidenceDeg', p.thrustIncidenceDeg ?? 0) * DEG;
	const atm = atmosphereFromPressureAltitude(num('pressureAltitude', p.pressureAltitude), num('outsideAirTemperature', p.outsideAirTemperature));
	const v = airspeeds(num('airspeed', p.airspeed), p.airspeedKind, atm.pressure, atm.temperature);
	if (v.tas <= 0) throw new Error(`flight point: airspeed must be > 0 (got ${p.airspeed})`);
	const V = v.tas;
	const q = v.q;
	const qS = q * S;
	if (Math.abs(hdot) > V) throw new Error(`flight point: climb rate ${hdot} m/s exceeds the true airspeed ${V.toFixed(2)} m/s`);
	// Ps = ḣ + (V/g)V̇ ; D = T cos(α+i_T) − W·Ps/V
	const Ps = hdot + (V / G0) * vdot;
	const D = T * Math.cos(alpha + iT) - (W * Ps) / V;
	return {
		CL: (n * W) / qS,
		CD: D / qS,
		q,
		reynolds: reynoldsNumber(atm.density, V, c, atm.viscosity),
		mach: v.mach,
		tas: V,
		eas: v.eas,
		cas: v.cas,
		density: atm.density,
		specificExcessPower: Ps,
		flightPathAngleDeg: Math.asin(hdot / V) / DEG,
		powerOff: T === 0
	};
}

export interface SteadyThresholds {
	/** Minimum duration of a segment, in the units of the time channel (s). */
	minDuration: number;
	/** Maximum spread (max − min) allowed within a segment, per channel name, e.g. { airspeed: 1, altitudeRate: 0.5, pitch: 0.5 }. */
	bands: Record<string, number>;
	/** Name of the time channel (default 'time'). */
	timeChannel?: string;
}

export interface ChannelStats {
	mean: number;
	/** Sample standard deviation (n − 1). */
	std: number;
	min: number;
	max: number;
}

export interface SteadySegment {
	/** First and last sample index, inclusive. */
	start: number;
	end: number;
	startTime: number;
	endTime: number;
	duration: number;
	count: number;
	/** Mean and scatter of every channel over the segment. */
	stats: Record<string, ChannelStats>;
}

/**
 * Find steady segments in a time history given as column arrays: maximal
 * windows in which every banded channel stays within its band (max − min)
 * for at least `minDuration`; where maximal windows overlap the longest is
 * kept. Window extrema come from monotone min/max queues, so the search is
 * O(n) (plus a sort of the candidates).
 * A NaN in a banded channel breaks a segment. Each segment is averaged into
 * one point with its scatter (Kimberlin, ch. 8: stabilised points).
 */
export function detectSteadySegments(channels: Record<string, ArrayLike<number>>, thresholds: SteadyThresholds): SteadySegment[] {
	if (!channels || typeof channels !== 'object') throw new Error('steady segments: channels must be an object of arrays');
	const timeName = thresholds?.timeChannel ?? 'time';
	const time = channels[timeName];
	if (!time) throw new Error(`steady segments: no time channel '${timeName}'`);
	const n = time.length;
	const minDur = thresholds.minDuration;
	if (typeof minDur !== 'number' || !(minDur >= 0)) throw new Error(`steady segments: minDuration must be ≥ 0 (got ${String(minDur)})`);
	const bandNames = Object.keys(thresholds.bands ?? {});
	if (bandNames.length === 0) throw new Error('steady segments: give at least one channel band');
	const names = Object.keys(channels);
	for (const k of names) {
		if (channels[k].length !== n) throw new Error(`steady segments: channel '${k}' has ${channels[k].length} samples, time has ${n}`);
	}
	const cols: ArrayLike<number>[] = [];
	const bands: number[] = [];
	for (const k of bandNames) {
		const col = channels[k];
		if (!col) throw new Error(`steady segments: band given for '${k}' but there is no such channel`);
		const b = thresholds.bands[k];
		if (typeof b !== 'number' || !(b >= 0)) throw new Error(`steady segments: band for '${k}' must be ≥ 0 (got ${String(b)})`);
		cols.push(col);
		bands.push(b);
	}
	for (let i = 1; i < n; i++) {
		if (!(time[i] > time[i - 1])) throw new Error(`steady segments: time must increase (sample ${i}: ${time[i]} after ${time[i - 1]})`);
	}
	const m = cols.length;
	// Monotone deques of indices per banded channel, stored in Int32Arrays.
	const qMin = Array.from({ length: m }, () => new Int32Array(n));
	const qMax = Array.from({ length: m }, () => new Int32Array(n));
	const hMin = new Int32Array(m), tMin = new Int32Array(m), hMax = new Int32Array(m), tMax = new Int32Array(m);
	// Pass 1: for every r the leftmost l with [l, r] inside all bands (two
	// pointers). [l, r] is maximal when it cannot grow to r + 1.
	const candStart: number[] = [];
	const candEnd: number[] = [];
	let l = 0;
	let prevL = -1;
	let prevR = -1;
	const closeCandidate = () => {
		if (prevR >= prevL && prevL >= 0 && time[prevR] - time[prevL] >= minDur) {
			candStart.push(prevL);
			candEnd.push(prevR);
		}
		prevL = -1;
		prevR = -1;
	};
	for (let r = 0; r < n; r++) {
		let bad = false;
		for (let c = 0; c < m; c++) if (Number.isNaN(cols[c][r])) bad = true;
		if (bad) {
			closeCandidate();
			l = r + 1;
			hMin.fill(0); tMin.fill(0); hMax.fill(0); tMax.fill(0);
			continue;
		}
		for (let c = 0; c < m; c++) {
			const x = cols[c][r];
			const dmin = qMin[c], dmax = qMax[c], col = cols[c];
			while (tMin[c] > hMin[c] && col[dmin[tMin[c] - 1]] >= x) tMin[c]--;
			dmin[tMin[c]++] = r;
			while (tMax[c] > hMax[c] && col[dmax[tMax[c] - 1]] <= x) tMax[c]--;
			dmax[tMax[c]++] = r;
		}
		for (;;) {
			let ok = true;
			for (let c = 0; c < m; c++) {
				while (qMin[c][hMin[c]] < l) hMin[c]++;
				while (qMax[c][hMax[c]] < l) hMax[c]++;
				if (cols[c][qMax[c][hMax[c]]] - cols[c][qMin[c][hMin[c]]] > bands[c]) ok = false;
			}
			if (ok) break;
			l++;
		}
		// The window ending at r − 1 could not grow if l moved: it was maximal.
		if (prevL >= 0 && l !== prevL) closeCandidate();
		prevL = l;
		prevR = r;
	}
	closeCandidate();
	// Pass 2: keep the longest maximal windows that do not overlap.
	const order = candStart.map((_, i) => i);
	order.sort((a, b) => time[candEnd[b]] - time[candStart[b]] - (time[candEnd[a]] - time[candStart[a]]) || candStart[a] - candStart[b]);
	const taken = new Uint8Array(n);
	const found: Array<[number, number]> = [];
	for (const i of order) {
		const s0 = candStart[i], e0 = candEnd[i];
		// Maximal windows are ordered by start and end alike, so checking both ends suffices.
		if (taken[s0] || taken[e0]) continue;
		let free = true;
		for (let j = s0; j <= e0; j++) if (taken[j]) { free = false; break; }
		if (!free) continue;
		taken.fill(1, s0, e0 + 1);
		found.push([s0, e0]);
	}
	found.sort((a, b) => a[0] - b[0]);
	return found.map(([s, e]) => {
		const stats: Record<string, ChannelStats> = {};
		for (const k of names) stats[k] = statsOf(channels[k], s, e);
		return { start: s, end: e, startTime: time[s], endTime: time[e], duration: time[e] - time[s], count: e - s + 1, stats };
	});
}

function statsOf(a: ArrayLike<number>, s: number, e: number): ChannelStats {
	// Two-pass mean and variance for accuracy on long, offset signals.
	let sum = 0, min = Infinity, max = -Infinity;
	for (let i = s; i <= e; i++) {
		const x = a[i];
		sum += x;
		if (x < min) min = x;
		if (x > max) max = x;
	}
	const cnt = e - s + 1;
	const mean = sum / cnt;
	let ss = 0;
	for (let i = s; i <= e; i++) ss += (a[i] - mean) ** 2;
	return { mean, std: cnt > 1 ? Math.sqrt(ss / (cnt - 1)) : 0, min, max };
}
