/** Shapes of the v1 API answers the pages read (docs/api.md). */

// The run API's shapes are defined once, for server and pages alike.
import type { RunKind } from '$lib/run-types';
export type { RunKind, RunState, RunSummary, RunDetail, PointsAnswer, RunConditions as Conditions, ReductionDto as Reduction, PointDto as Point } from '$lib/run-types';

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

export interface Page<T> {
	items: T[];
	total: number;
	limit: number;
	offset: number;
}

import type { RunDetail } from '$lib/run-types';

export interface ImportResult {
	run: RunDetail;
	/** Some answers name the run by id only. */
	runId?: number;
	reductionVersion: number;
	warnings: (string | { message: string })[];
}
