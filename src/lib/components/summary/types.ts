/** The campaign summary as GET /api/v1/campaigns/{id}/summary answers (docs/api.md). */
export type DeltaState = 'within_tolerance' | 'out_of_tolerance' | 'not_significant' | 'not_available';

export interface SummaryCell {
	quantity: string;
	runs: number;
	mean: number | null;
	stddev: number | null;
	worst: number | null;
	worstRatio: number | null;
	counts: Record<DeltaState, number>;
	state: DeltaState;
	latest: { value: number | null; state: DeltaState; runNumber: string } | null;
}

export interface SummaryConfiguration {
	name: string;
	ids: number[];
	versions: number[];
	runs: number;
	runsWithDeltas: number;
	outOfTolerance: number;
	worstRatio: number | null;
	deltas: Record<string, SummaryCell>;
}

export interface WorstOffender {
	deltaId: number;
	runId: number;
	runNumber: string;
	seq: number;
	testDate: string | null;
	configurationName: string;
	configurationVersion: number;
	quantity: string;
	label: string;
	value: number;
	uncertainty: number | null;
	tolerance: number | null;
	unit: string | null;
	ratio: number | null;
}

export interface QuantityInfo {
	key: string;
	label: string;
	unit: string;
	tolerance: number;
	toleranceSource: 'campaign' | 'default';
}

export interface CampaignSummary {
	campaign: { id: number; code: string; name: string; kind: string; status: string; plannedRuns: number | null; startDate: string | null; endDate: string | null; facilityName: string | null };
	generatedAt: string;
	runs: { planned: number | null; total: number; imported: number; reduced: number; reviewed: number; accepted: number; returned: number; tare: number; withDeltas: number; points: number; firstDate: string | null; lastDate: string | null };
	quantities: QuantityInfo[];
	configurations: SummaryConfiguration[];
	worstOffenders: WorstOffender[];
	repeatability: { quantity: string; groups: number; runs: number; pooledStddev: number | null }[];
	text: string[];
	caution: string;
	trends: {
		runs: { id: number[]; runNumber: string[]; seq: number[]; testDate: (string | null)[]; state: string[]; repeatOf: (number | null)[] };
		stateCodes: DeltaState[];
		series: { configurationName: string; quantity: string; runId: number[]; value: (number | null)[]; uncertainty: (number | null)[]; state: number[] }[];
		repeatGroups: { configurationName: string; quantity: string; groupRunId: number; n: number; mean: number; stddev: number | null; range: number; runId: number[]; value: number[] }[];
	};
}

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
