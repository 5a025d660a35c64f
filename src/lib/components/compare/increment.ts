/**
 * The increment between two runs (e.g. two flap settings of one wing),
 * measured versus predicted, as chart series: measured ΔCL(α) at run a's
 * points, with run b's lift curve interpolated linearly in α (only inside
 * run b's measured range: no extrapolation), and predicted ΔCL(α) on the
 * α grid the two predicted curves share.
 */
import type { Series } from '$lib/components/ChartPanel.svelte';

export interface IncrementRun {
	label: string;
	points: { alphaDeg: number; CL: number }[];
	curve: { alphaDeg: number; CL: number }[] | null;
}

/** Linear interpolation of y(x) at x0 on sorted data; null outside [x first, x last]. */
export function interpolate(xs: number[], ys: number[], x0: number): number | null {
	const n = xs.length;
	if (n === 0 || x0 < xs[0] || x0 > xs[n - 1]) return null;
	let k = 0;
	while (k < n - 2 && xs[k + 1] < x0) k++;
	if (n === 1) return ys[0];
	const t = xs[k + 1] === xs[k] ? 0 : (x0 - xs[k]) / (xs[k + 1] - xs[k]);
	return ys[k] + t * (ys[k + 1] - ys[k]);
}

/** Measured ΔCL = CL_b − CL_a at run a's α, and predicted ΔCL on the shared α grid. */
export function incrementData(a: IncrementRun, b: IncrementRun): { measured: { x: number; y: number }[]; predicted: { x: number; y: number }[] } {
	const sb = [...b.points].sort((p, q) => p.alphaDeg - q.alphaDeg);
	const xs = sb.map((p) => p.alphaDeg);
	const ys = sb.map((p) => p.CL);
	const measured: { x: number; y: number }[] = [];
	for (const p of [...a.points].sort((p, q) => p.alphaDeg - q.alphaDeg)) {
		const clb = interpolate(xs, ys, p.alphaDeg);
		if (clb !== null) measured.push({ x: p.alphaDeg, y: clb - p.CL });
	}
	const predicted: { x: number; y: number }[] = [];
	if (a.curve && b.curve) {
		const byAlpha = new Map(b.curve.map((p) => [p.alphaDeg, p.CL]));
		for (const p of a.curve) {
			const clb = byAlpha.get(p.alphaDeg);
			if (clb !== undefined) predicted.push({ x: p.alphaDeg, y: clb - p.CL });
		}
	}
	return { measured, predicted };
}

/** Chart series of the increment; `tolerance` (ΔCL) shades a band about the predicted increment. */
export function incrementSeries(a: IncrementRun, b: IncrementRun, color: string, tolerance: number | null): Series[] {
	const { measured, predicted } = incrementData(a, b);
	const out: Series[] = [];
	if (predicted.length && tolerance !== null) {
		out.push({ kind: 'band', label: `tolerance ±${tolerance} CL about the predicted increment`, color, data: predicted.map((p) => ({ x: p.x, lo: p.y - tolerance, hi: p.y + tolerance })) });
	}
	if (predicted.length) out.push({ kind: 'line', label: `predicted ΔCL (run ${b.label} − run ${a.label})`, color, data: predicted });
	out.push({ kind: 'points', label: `measured ΔCL (run ${b.label} − run ${a.label})`, color: '#1b2430', data: measured });
	return out;
}
