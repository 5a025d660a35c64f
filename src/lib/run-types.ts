/**
 * The run API's shapes, shared by the server that builds them
 * (`$lib/server/runs`) and the pages that draw them: GET /api/v1/runs/{id},
 * /api/v1/runs/{id}/points and /api/v1/campaigns/{id}/runs (docs/api.md).
 */
export type RunKind = 'tunnel' | 'flight';
export type RunState = 'imported' | 'reduced' | 'reviewed' | 'accepted' | 'returned';

/** What every view of a run starts with. */
export interface RunHead {
	id: number;
	campaignId: number;
	runNumber: string;
	kind: RunKind;
	state: RunState;
	isTare: boolean;
}

export interface RunSummary extends RunHead {
	configurationId: number | null;
	testDate: string | null;
	createdAt: string;
	pointCount: number;
	currentVersion: number | null;
}

export interface ReductionDto {
	id: number;
	version: number;
	settings: Record<string, unknown>;
	fits: Record<string, unknown> | null;
	corrections: Record<string, unknown> | null;
}

export interface RunConditions {
	qPa: number | null;
	velocity: number | null;
	density: number | null;
	temperatureK: number | null;
	pressurePa: number | null;
	reynolds: number | null;
	mach: number | null;
}

export interface RunDetail extends RunHead {
	tareRunId: number | null;
	repeatOfRunId: number | null;
	configuration: { id: number; name: string; version: number } | null;
	conditions: RunConditions;
	sourceFiles: { id: number; name: string; size: number; sha256: string; sheet: string | null; storage: string; rowCount: number | null }[];
	currentReduction: ReductionDto | null;
	reductions: { id: number; version: number; createdAt: string; createdBy: string | null; createdByName: string | null; isCurrent: boolean }[];
	notes: string | null;
	allowedTransitions: string[];
}

/** What a point keeps besides its headline values: uncorrected values, forces, each correction's contribution. */
export interface PointValues {
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
}

/** A reduced point's headline values (null where the point has none), as the reduction produces and stores them. */
export interface PointHeadline {
	idx: number;
	alphaDeg: number | null;
	CL: number | null;
	CD: number | null;
	Cm: number | null;
	qPa: number | null;
	velocity: number | null;
	reynolds: number | null;
	mach: number | null;
	flags: string[];
	excluded: boolean;
}

export interface PointDto extends PointHeadline {
	uncertainty: Record<string, number> | null;
	corrections: { deltaAlphaDeg: number; deltaCD: number; blockage: number } | null;
	values: PointValues;
}

export interface PointsAnswer {
	reduction: ReductionDto;
	points: PointDto[];
}
