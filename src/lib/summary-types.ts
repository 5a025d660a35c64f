/**
 * The campaign summary's shape, shared by the server that builds it
 * (`$lib/server/summary`) and the pages that draw it: GET
 * /api/v1/campaigns/{id}/summary (docs/api.md).
 */
export type DeltaState = 'within_tolerance' | 'out_of_tolerance' | 'not_significant' | 'not_available';

export interface RunCounts {
	planned: number | null;
	total: number;
	imported: number;
	reduced: number;
	reviewed: number;
	accepted: number;
	returned: number;
	tare: number;
	withDeltas: number;
	points: number;
	firstDate: string | null;
	lastDate: string | null;
}

export interface QuantityInfo {
	key: string;
	label: string;
	unit: string;
	tolerance: number;
	toleranceSource: 'campaign' | 'default';
}

export interface SummaryCell {
	quantity: string;
	runs: number;
	mean: number | null;
	/** Sample standard deviation over the configuration's runs. */
	stddev: number | null;
	/** The value with the largest magnitude. */
	worst: number | null;
	/** Largest |value| / tolerance. */
	worstRatio: number | null;
	counts: Record<DeltaState, number>;
	/** The state of most runs (a tie goes to the worse state); not_available only when no run has a value. */
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

export interface PooledRepeatability {
	quantity: string;
	groups: number;
	runs: number;
	pooledStddev: number | null;
}

export interface SummaryFacts {
	campaign: { id: number; code: string; name: string; kind: string; status: string; plannedRuns: number | null; startDate: string | null; endDate: string | null; facilityName: string | null };
	/** When these numbers were computed from the data. */
	generatedAt: string;
	runs: RunCounts;
	quantities: QuantityInfo[];
	configurations: SummaryConfiguration[];
	worstOffenders: WorstOffender[];
	repeatability: PooledRepeatability[];
	text: string[];
	caution: string;
}

export interface TrendSeries {
	configurationName: string;
	quantity: string;
	runId: number[];
	value: (number | null)[];
	uncertainty: (number | null)[];
	/** Index into `stateCodes`. */
	state: number[];
}

export interface RepeatGroup {
	configurationName: string;
	quantity: string;
	groupRunId: number;
	n: number;
	mean: number;
	stddev: number | null;
	range: number;
	runId: number[];
	value: number[];
}

export interface SummaryTrends {
	runs: { id: number[]; runNumber: string[]; seq: number[]; testDate: (string | null)[]; state: string[]; repeatOf: (number | null)[] };
	stateCodes: DeltaState[];
	series: TrendSeries[];
	repeatGroups: RepeatGroup[];
}

export type CampaignSummary = SummaryFacts & { trends: SummaryTrends };
