/** The campaign summary as GET /api/v1/campaigns/{id}/summary answers (docs/api.md); the types live in $lib/summary-types. */
import type { DeltaState } from '$lib/summary-types';
export type { DeltaState, SummaryCell, SummaryConfiguration, WorstOffender, QuantityInfo, CampaignSummary } from '$lib/summary-types';

export const STATE_LABELS: Record<DeltaState, string> = {
	within_tolerance: 'within tolerance',
	out_of_tolerance: 'out of tolerance',
	not_significant: 'not significant',
	not_available: 'not available'
};

/** Number with three significant figures (tabular display), or an em dash. */
export function num(v: number | null | undefined, digits = 3): string {
	if (v === null || v === undefined || !Number.isFinite(v)) return '—';
	const a = Math.abs(v);
	if (a !== 0 && (a < 1e-3 || a >= 1e5)) return v.toExponential(digits - 1);
	return Number(v.toPrecision(digits)).toString();
}
