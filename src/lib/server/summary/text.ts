/**
 * The short text of a campaign summary, generated from its numbers only:
 * progress, where the model holds, where it does not (worst first), and the
 * scatter of repeat runs. Plain statements; no judgement beyond the
 * tolerance bands the campaign set.
 */
import type { SummaryFacts } from './index';

function fmt(v: number | null | undefined, unit = ''): string {
	if (v === null || v === undefined || !Number.isFinite(v)) return '—';
	const a = Math.abs(v);
	const s = a !== 0 && (a < 1e-3 || a >= 1e5) ? v.toExponential(2) : Number(v.toPrecision(3)).toString();
	return unit ? `${s} ${unit}` : s;
}

function list(items: string[]): string {
	if (items.length <= 1) return items.join('');
	return `${items.slice(0, -1).join(', ')} and ${items[items.length - 1]}`;
}

function plural(n: number, one: string, many = `${one}s`): string {
	return `${n} ${n === 1 ? one : many}`;
}

export function describeSummary(f: SummaryFacts): string[] {
	const out: string[] = [];
	const r = f.runs;
	const states = [
		[r.accepted, 'accepted'],
		[r.reviewed, 'reviewed'],
		[r.reduced, 'reduced'],
		[r.imported, 'imported only'],
		[r.returned, 'returned']
	]
		.filter(([n]) => (n as number) > 0)
		.map(([n, s]) => `${n} ${s}`);
	const planned = r.planned !== null ? ` of ${r.planned} planned` : '';
	out.push(`${plural(r.total, 'run')}${planned} ${r.total === 1 ? 'is' : 'are'} in the database${states.length ? ` (${list(states)})` : ''}${r.tare ? `, plus ${plural(r.tare, 'tare run')}` : ''}.`);

	if (r.withDeltas === 0) {
		out.push('No run has been compared with the model yet, so nothing can be said about the agreement.');
		return out;
	}
	const compared = f.configurations.filter((c) => Object.keys(c.deltas).length > 0);
	out.push(`${plural(r.withDeltas, 'run')} over ${plural(compared.length, 'configuration')} ${r.withDeltas === 1 ? 'has' : 'have'} current deltas against the lifting-line model.`);

	const label = new Map(f.quantities.map((q) => [q.key, q]));
	const holding = compared.filter((c) => c.outOfTolerance === 0).map((c) => c.name);
	const failing = compared.filter((c) => c.outOfTolerance > 0);
	if (holding.length) out.push(`Within the tolerance bands or not significant in every compared run: ${list(holding)}.`);
	for (const c of failing.slice(0, 3)) {
		const cells = Object.values(c.deltas)
			.filter((d) => d.counts.out_of_tolerance > 0)
			.sort((a, b) => (b.worstRatio ?? 0) - (a.worstRatio ?? 0));
		const parts = cells.slice(0, 3).map((d) => {
			const q = label.get(d.quantity);
			return `${q?.label ?? d.quantity} in ${d.counts.out_of_tolerance} of ${d.runs} runs (worst ${fmt(d.worst, q?.unit)} against a band of ±${fmt(q?.tolerance, q?.unit)})`;
		});
		out.push(`${c.name}: out of tolerance for ${list(parts)}.`);
	}
	if (failing.length > 3) out.push(`${plural(failing.length - 3, 'further configuration')} also ${failing.length - 3 === 1 ? 'has' : 'have'} deltas out of tolerance; see the table.`);

	const w = f.worstOffenders[0];
	if (w) {
		const q = label.get(w.quantity);
		out.push(`The largest excess is ${w.label} = ${fmt(w.value, q?.unit)} in run ${w.runNumber} (${w.configurationName}), ${fmt(w.ratio)} times its band.`);
	}
	const rep = f.repeatability.filter((p) => p.pooledStddev !== null);
	if (rep.length) {
		const parts = rep
			.filter((p) => label.has(p.quantity))
			.slice(0, 3)
			.map((p) => `${label.get(p.quantity)!.label} ${fmt(p.pooledStddev, label.get(p.quantity)!.unit)}`);
		const groups = Math.max(...rep.map((p) => p.groups));
		out.push(`Repeat runs (${plural(groups, 'group')}) scatter by a pooled standard deviation of ${list(parts)}.`);
	} else {
		out.push('There are no repeat runs with deltas yet, so repeatability is not known.');
	}
	return out;
}
