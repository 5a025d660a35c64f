import { describe, expect, it } from 'vitest';
import { reduceFlightPoint, detectSteadySegments, type SteadyThresholds } from '$lib/aero/flight-reduction';

const DEG = Math.PI / 180;

describe('energy-method reduction of an invented steady climb (Kimberlin, Flight Testing of Fixed-Wing Aircraft, ch. 8)', () => {
	// Invented point: sea-level standard pressure altitude and temperature,
	// TAS 50 m/s, climbing 2.5 m/s while accelerating 0.1 m/s², thrust 1500 N
	// along a line 2° up from the body axis, α = 4°, W = 10 000 N, S = 16 m².
	// Exact answer computed by hand from the energy equation:
	//   ρ = 101325/(287.053·288.15), q = ½ρ·50², Ps = 2.5 + (50/9.80665)·0.1,
	//   D = 1500·cos 6° − 10000·Ps/50, CD = D/(qS), CL = 1·10000/(qS).
	const rho = 101325 / (287.053 * 288.15);
	const q = 0.5 * rho * 2500;
	const Ps = 2.5 + (50 / 9.80665) * 0.1;
	const D = 1500 * Math.cos(6 * DEG) - (10000 * Ps) / 50;
	it('CL, CD, q and Ps match the hand calculation to 1e-9 relative', () => {
		const r = reduceFlightPoint({
			weight: 10000,
			loadFactor: 1,
			airspeed: 50,
			airspeedKind: 'TAS',
			pressureAltitude: 0,
			outsideAirTemperature: 288.15,
			alphaDeg: 4,
			climbRate: 2.5,
			acceleration: 0.1,
			thrust: 1500,
			thrustIncidenceDeg: 2,
			wingArea: 16,
			referenceChord: 1.5
		});
		expect(Math.abs(r.q - q) / q).toBeLessThan(1e-9);
		expect(Math.abs(r.specificExcessPower - Ps)).toBeLessThan(1e-12);
		expect(Math.abs(r.CL - 10000 / (q * 16)) / r.CL).toBeLessThan(1e-9);
		expect(Math.abs(r.CD - D / (q * 16)) / r.CD).toBeLessThan(1e-9);
		// Re = ρVc/μ with Sutherland μ(288.15 K) = 1.7894e-5 Pa·s (USSA 1976), 1e-4 relative.
		expect(Math.abs(r.reynolds - (rho * 50 * 1.5) / 1.7894e-5) / r.reynolds).toBeLessThan(1e-4);
		expect(r.mach).toBeCloseTo(50 / 340.294, 5);
	});
	it('power-off glide: CD = W·sin γ/(q·S) with sin γ = −ḣ/V (Kimberlin ch. 8), 1e-12 relative', () => {
		const r = reduceFlightPoint({
			weight: 8000, airspeed: 40, airspeedKind: 'EAS', pressureAltitude: 1500, outsideAirTemperature: 280,
			climbRate: -2.2, wingArea: 14, referenceChord: 1.3
		});
		expect(r.powerOff).toBe(true);
		const sinG = 2.2 / r.tas;
		expect(Math.abs(r.CD - (8000 * sinG) / (r.q * 14)) / r.CD).toBeLessThan(1e-12);
		// EAS defines q = ½ρ0·EAS² with ρ0 = 1.225 kg/m³ (Kimberlin ch. 8), 1e-5 relative.
		expect(Math.abs(r.q - 0.5 * 1.225 * 1600) / r.q).toBeLessThan(1e-5);
	});
	it('a 2 g turn doubles CL at the same q (CL = n·W/(qS))', () => {
		const base = { weight: 9000, airspeed: 60, airspeedKind: 'CAS' as const, pressureAltitude: 2000, outsideAirTemperature: 275, wingArea: 15, referenceChord: 1.4 };
		expect(reduceFlightPoint({ ...base, loadFactor: 2 }).CL).toBeCloseTo(2 * reduceFlightPoint(base).CL, 12);
	});
	it.each([
		[{ weight: -1 }, 'flight point: weight must be > 0 N (got -1)'],
		[{ wingArea: 0 }, 'flight point: wingArea must be > 0 (got 0)'],
		[{ airspeed: NaN }, 'flight point: airspeed must be a finite number (got NaN)'],
		[{ climbRate: 80 }, 'flight point: climb rate 80 m/s exceeds the true airspeed'],
		[{ airspeed: 0 }, 'flight point: airspeed must be > 0 (got 0)']
	])('bad input %#', (patch, msg) => {
		const base = { weight: 9000, airspeed: 60, airspeedKind: 'TAS' as const, pressureAltitude: 0, outsideAirTemperature: 288.15, wingArea: 15, referenceChord: 1.4 };
		expect(() => reduceFlightPoint({ ...base, ...patch })).toThrow(msg);
	});
});

// Naive O(n²) reference for the same rule: for each r the leftmost l that
// fits; [l, r] is a candidate when it cannot grow to r + 1; keep the longest
// non-overlapping candidates.
function naive(ch: Record<string, ArrayLike<number>>, th: SteadyThresholds): Array<[number, number]> {
	const t = ch.time;
	const n = t.length;
	const names = Object.keys(th.bands);
	const fits = (l: number, r: number) =>
		names.every((k) => {
			let lo = Infinity, hi = -Infinity;
			for (let i = l; i <= r; i++) {
				const x = ch[k][i];
				if (Number.isNaN(x)) return false;
				lo = Math.min(lo, x);
				hi = Math.max(hi, x);
			}
			return hi - lo <= th.bands[k];
		});
	const cands: Array<[number, number]> = [];
	for (let r = 0; r < n; r++) {
		if (!fits(r, r)) continue;
		let l = r;
		while (l > 0 && fits(l - 1, r)) l--;
		const grows = r + 1 < n && fits(l, r + 1);
		if (!grows && t[r] - t[l] >= th.minDuration) cands.push([l, r]);
	}
	cands.sort((a, b) => t[b[1]] - t[b[0]] - (t[a[1]] - t[a[0]]) || a[0] - b[0]);
	const out: Array<[number, number]> = [];
	for (const c of cands) if (out.every((o) => c[1] < o[0] || c[0] > o[1])) out.push(c);
	return out.sort((a, b) => a[0] - b[0]);
}

describe('steady-segment detection on column arrays', () => {
	// Invented 10 Hz record: accelerate, hold 50 m/s from 20 to 50 s, climb away, hold again 70–90 s.
	const N = 1001;
	const time = new Float64Array(N);
	const airspeed = new Float64Array(N);
	const altitudeRate = new Float64Array(N);
	const pitch = new Float64Array(N);
	for (let i = 0; i < N; i++) {
		const t = i / 10;
		time[i] = t;
		const wobble = 0.2 * Math.sin(1.7 * t) * Math.cos(0.3 * t);
		airspeed[i] = (t < 20 ? 40 + t / 2 : t < 50 ? 50 : t < 70 ? 50 + (t - 50) : 70) + wobble;
		altitudeRate[i] = (t >= 50 && t < 70 ? 3 : 0) + 0.1 * Math.sin(2.3 * t);
		pitch[i] = 3 + 0.1 * Math.cos(1.1 * t);
	}
	const channels = { time, airspeed, altitudeRate, pitch };
	const th: SteadyThresholds = { minDuration: 10, bands: { airspeed: 1, altitudeRate: 0.5, pitch: 0.5 } };
	it('finds the two holds with their means and scatter', () => {
		const segs = detectSteadySegments(channels, th);
		expect(segs.length).toBe(2);
		expect(segs[0].startTime).toBeGreaterThan(18);
		expect(segs[0].startTime).toBeLessThan(21);
		expect(segs[0].endTime).toBeGreaterThan(49.5);
		expect(segs[0].endTime).toBeLessThan(51.5);
		expect(segs[0].stats.airspeed.mean).toBeCloseTo(50, 0);
		expect(segs[0].stats.airspeed.std).toBeGreaterThan(0);
		expect(segs[0].stats.airspeed.std).toBeLessThan(0.5);
		expect(segs[1].startTime).toBeGreaterThan(68);
		expect(segs[1].endTime).toBe(100);
		expect(segs[1].count).toBe(segs[1].end - segs[1].start + 1);
	});
	it('agrees with a naive O(n²) search on random data with NaNs', () => {
		let seed = 7;
		const rnd = () => ((seed = (seed * 16807) % 2147483647) / 2147483647);
		const n = 600;
		const t = new Float64Array(n), a = new Float64Array(n), b = new Float64Array(n);
		let x = 0, y = 0;
		for (let i = 0; i < n; i++) {
			t[i] = i * 0.1;
			x += (rnd() - 0.5) * 0.6;
			y += (rnd() - 0.5) * 0.3;
			a[i] = rnd() < 0.01 ? NaN : x;
			b[i] = y;
		}
		const ch = { time: t, a, b };
		const tt: SteadyThresholds = { minDuration: 1, bands: { a: 1, b: 0.6 } };
		const got = detectSteadySegments(ch, tt).map((s) => [s.start, s.end]);
		expect(got.length).toBeGreaterThan(2);
		expect(got).toEqual(naive(ch, tt));
	});
	it.each([
		[{ time: new Float64Array([0, 1, 1]), v: new Float64Array(3) }, { minDuration: 1, bands: { v: 1 } }, 'steady segments: time must increase (sample 2: 1 after 1)'],
		[{ t: new Float64Array(3), v: new Float64Array(3) }, { minDuration: 1, bands: { v: 1 } }, "steady segments: no time channel 'time'"],
		[{ time: new Float64Array(3), v: new Float64Array(2) }, { minDuration: 1, bands: { v: 1 } }, "steady segments: channel 'v' has 2 samples, time has 3"],
		[{ time: new Float64Array([0, 1]), v: new Float64Array(2) }, { minDuration: 1, bands: { w: 1 } }, "band given for 'w' but there is no such channel"],
		[{ time: new Float64Array([0, 1]), v: new Float64Array(2) }, { minDuration: 1, bands: {} }, 'steady segments: give at least one channel band']
	] as Array<[Record<string, Float64Array>, SteadyThresholds, string]>)('bad input %#', (ch, th2, msg) => {
		expect(() => detectSteadySegments(ch, th2)).toThrow(msg);
	});
});
