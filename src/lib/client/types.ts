/** Shapes of the v1 API answers the pages read (docs/api.md). */

export type RunKind = 'tunnel' | 'flight';
export type RunState = 'imported' | 'reduced' | 'reviewed' | 'accepted' | 'returned';

export interface MappingColumn {
	index: number;
	header: string;
	field: string | null;
	unit: string | null;
	confidence?: number;
}
export interface Mapping {
	version: 1;
	kind?: RunKind;
	columns: MappingColumn[];
}

export interface Preview {
	/** headerRow and unitRow are 1-based file lines (sheet rows for XLSX). */
	layout: { separator: string | null; decimal: 'point' | 'comma'; preamble: { row: number; key: string; value: string }[]; headerRow: number; unitRow: number | null };
	sheets?: string[];
	headers: string[];
	units: (string | null)[];
	sampleRows: string[][];
	mapping: Mapping;
	mappingSource: string;
	missing: string[];
}

export interface RunSummary {
	id: number;
	campaignId: number;
	runNumber: number | string;
	kind: RunKind;
	state: RunState;
	isTare?: boolean;
	configuration?: { id: number; name: string; version?: number } | null;
	configurationName?: string | null;
	pointCount?: number | null;
	importedAt?: string | null;
	createdAt?: string | null;
	[key: string]: unknown;
}

export interface Page<T> {
	items: T[];
	total: number;
	limit: number;
	offset: number;
}

export interface Conditions {
	qPa: number | null;
	velocity: number | null;
	density: number | null;
	temperatureK: number | null;
	pressurePa: number | null;
	reynolds: number | null;
	mach: number | null;
}

export interface Reduction {
	id: number;
	version: number;
	settings: Record<string, unknown>;
	fits: Record<string, unknown> | null;
	corrections: Record<string, unknown> | null;
}

export interface RunDetail {
	id: number;
	campaignId: number;
	runNumber: number | string;
	kind: RunKind;
	state: RunState;
	isTare: boolean;
	tareRunId: number | null;
	repeatOfRunId: number | null;
	configuration: { id: number; name: string; version: number } | null;
	conditions: Conditions;
	sourceFiles: { id: number; name: string; size: number; sha256: string; sheet: string | null; storage: string }[];
	currentReduction: Reduction | null;
	reductions: { id: number; version: number; createdAt: string; createdBy: string | null; createdByName: string | null; isCurrent: boolean; settings?: Record<string, unknown> }[];
	notes: string | null;
	allowedTransitions: string[];
}

export interface Point {
	idx: number;
	alphaDeg: number;
	CL: number;
	CD: number;
	Cm: number | null;
	qPa: number | null;
	velocity: number | null;
	reynolds: number | null;
	mach: number | null;
	uncertainty: { CL?: number | null; CD?: number | null; alphaDeg?: number | null } | null;
	corrections: { deltaAlphaDeg?: number | null; deltaCD?: number | null; blockage?: number | null } | null;
	flags: string[] | null;
	excluded: boolean;
	/** Stored detail: uncorrected values, forces, each correction's contribution. */
	values?: {
		row?: number;
		uncorrected?: { alphaDeg?: number | null; CL?: number | null; CD?: number | null; Cm?: number | null; qPa?: number | null };
		corrections?: {
			solidBlockage?: { epsilon: number };
			wakeBlockage?: { epsilon: number; method: string };
			blockage?: { epsilon: number; dq: number; dCL: number; dCD: number; dCm: number };
			liftInterference?: { dAlphaDeg: number; dCD: number };
			streamlineCurvature?: { dAlphaDeg: number; dCm: number };
		};
		[key: string]: unknown;
	};
}

export interface PointsAnswer {
	reduction: Reduction;
	points: Point[];
}

export interface ImportResult {
	run: RunDetail;
	/** Some answers name the run by id only. */
	runId?: number;
	reductionVersion: number;
	warnings: (string | { message: string })[];
}
