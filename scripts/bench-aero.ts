/**
 * Benchmark of the aerodynamic core (`npm run bench:aero`).
 *
 * For 50, 100 and 200 Fourier terms (matrix size): one lifting-line solve, a
 * 41-angle lift curve, and a nonlinear sweep to stall, as median
 * microseconds over repeated runs, with one dense LU solve of the same size
 * measured in the same run as the baseline. Also: steady-segment detection
 * on a 1,000,000-sample time history.
 *
 * Targets (issue 3): 41-angle lift curve at 100 terms within 3× one LU solve;
 * nonlinear sweep to stall under 100 ms.
 */
import {
	solveLiftingLine,
	liftCurve,
	sweepToStall,
	luFactor,
	luSolve,
	detectSteadySegments,
	type SectionTable,
	type Wing
} from '../src/lib/aero/index';
import os from 'node:os';

/** Run `fn` repeatedly (at least `minRuns`, until `budgetMs` is spent) and return the median time in µs. */
function medianMicros(fn: () => unknown, minRuns = 7, budgetMs = 400): { median: number; runs: number } {
	for (let i = 0; i < 2; i++) fn(); // warm-up (JIT)
	const times: number[] = [];
	const t0 = performance.now();
	while (times.length < minRuns || (performance.now() - t0 < budgetMs && times.length < 2000)) {
		const a = performance.now();
		fn();
		times.push((performance.now() - a) * 1000);
	}
	times.sort((x, y) => x - y);
	return { median: times[times.length >> 1], runs: times.length };
}

// Our own demo wing: AR 8, taper 0.5, 2° washout.
const wing: Wing = {
	span: 8,
	stations: [
		{ eta: 0, chord: 4 / 3 },
		{ eta: 1, chord: 2 / 3, twistDeg: -2 }
	]
};
const alphas = Array.from({ length: 41 }, (_, i) => -10 + i * 0.5);
// Invented section table through stall (demo data, not a published aerofoil).
const A = [-10, -5, 0, 5, 10, 12, 13, 14, 15, 16, 18, 20, 25, 30, 40];
const CLt = [-1.05, -0.525, 0, 0.525, 1.05, 1.22, 1.3, 1.34, 1.33, 1.28, 1.15, 1.05, 0.95, 0.9, 0.85];
const table: SectionTable = { eta: 0, alphaDeg: A, cl: CLt };

function denseMatrix(n: number): { a: Float64Array; b: Float64Array } {
	let seed = 42;
	const rnd = () => ((seed = (seed * 16807) % 2147483647) / 2147483647);
	const a = new Float64Array(n * n);
	for (let i = 0; i < n * n; i++) a[i] = rnd() - 0.5;
	for (let i = 0; i < n; i++) a[i * n + i] += n; // well conditioned
	return { a, b: Float64Array.from({ length: n }, rnd) };
}

const fmt = (v: number) => (v >= 1000 ? v.toFixed(0) : v.toFixed(1)).padStart(10);
const rows: string[] = [];
rows.push('terms |  one solve µs | lift curve (41) µs | nonlinear sweep µs | dense LU µs | curve/LU | sweep/LU | sweep CLmax');
rows.push('------|---------------|--------------------|--------------------|-------------|----------|----------|------------');
for (const n of [50, 100, 200]) {
	const one = medianMicros(() => solveLiftingLine(wing, { alphaDeg: 5 }, { terms: n }));
	const curve = medianMicros(() => liftCurve(wing, alphas, { terms: n }));
	let clmax = NaN;
	const sweep = medianMicros(() => {
		clmax = sweepToStall(wing, [table], { terms: n, alphaStartDeg: 0, alphaStepDeg: 0.5 }).CLmax;
	}, 5, 1500);
	const { a, b } = denseMatrix(n);
	const lu = medianMicros(() => luSolve(luFactor(a, n), b));
	rows.push(
		`${String(n).padStart(5)} | ${fmt(one.median)}    | ${fmt(curve.median)}         | ${fmt(sweep.median)}         | ${fmt(lu.median)}  | ${(curve.median / lu.median).toFixed(2).padStart(8)} | ${(sweep.median / lu.median).toFixed(0).padStart(8)} | ${clmax.toFixed(4)}`
	);
}

// Steady-segment detection on 1,000,000 samples (100 Hz, ~2.8 h of invented flight).
const N = 1_000_000;
const time = new Float64Array(N);
const airspeed = new Float64Array(N);
const altitudeRate = new Float64Array(N);
const pitch = new Float64Array(N);
for (let i = 0; i < N; i++) {
	const t = i / 100;
	time[i] = t;
	airspeed[i] = 50 + 10 * Math.sin(t / 60) + 0.2 * Math.sin(7 * t);
	altitudeRate[i] = 0.2 * Math.sin(3.1 * t) + Math.sin(t / 45);
	pitch[i] = 3 + 0.1 * Math.cos(1.3 * t);
}
let segments = 0;
const steady = medianMicros(() => {
	segments = detectSteadySegments({ time, airspeed, altitudeRate, pitch }, { minDuration: 10, bands: { airspeed: 1, altitudeRate: 0.6, pitch: 0.5 } }).length;
}, 5, 2000);

console.log('Spanline aero core benchmark (median over repeated runs, same process)');
console.log(`node ${process.version}, ${new Date().toISOString()}; load average ${os.loadavg().map((v) => v.toFixed(2)).join(' ')} on ${os.cpus().length} CPUs`);
console.log('');
for (const r of rows) console.log(r);
console.log('');
console.log(`steady-segment detection, 1,000,000 samples × 4 channels: ${(steady.median / 1000).toFixed(1)} ms median (${steady.runs} runs, ${segments} segments)`);
console.log('');
console.log('targets: lift curve at 100 terms ≤ 3× one dense LU solve; nonlinear sweep to stall < 100 ms');
