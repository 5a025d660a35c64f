/**
 * Correlation of runs with the lifting-line model: predictions at each run's
 * conditions (stored with their exact inputs), deltas measured − predicted
 * with uncertainty, significance and tolerance, and model calibrations.
 *
 * For campaign summaries: the view `current_deltas` holds one row per current
 * delta with its run and configuration; `campaignDeltas` and
 * `campaignDeltaSummary` are single queries over it (see DELTA_STATE_SQL).
 *
 * Predictions are preliminary engineering estimates; flight-test and
 * airworthiness decisions follow the organisation's approved procedures.
 */
import { QueryTypes, type Transaction } from 'sequelize';
import { getModels, getSequelize, type Point } from '$lib/server/db';
import * as audit from '$lib/server/audit';
import * as notifications from '$lib/server/notifications';
import * as configurations from '$lib/server/configurations';
import { calibrateLiftingLine, calibratedWing, type CalibrationObservation } from '$lib/aero/calibration';
import { liftCurve } from '$lib/aero/lifting-line';
import { fitLiftCurve } from '$lib/aero/polar-fit';
import {
	computeDeltas,
	computePrediction,
	jsonSafe,
	SOLVER_LINEAR,
	SOLVER_NONLINEAR,
	SOLVERS,
	type DeltaResult,
	type MeasuredPoint,
	type PredictionInputs,
	type PredictionOutputs,
	type SolverSettings
} from './compute';
import { DEFAULT_DELTA_SETTINGS, DELTA_QUANTITIES, DELTA_STATE_SQL, deltaState, resolveTolerances, type DeltaSettings, type DeltaState } from './quantities';

export * from './quantities';
export { computePrediction, computeDeltas, jsonSafe, SOLVER_LINEAR, SOLVER_NONLINEAR, SOLVERS } from './compute';
export type { PredictionInputs, PredictionOutputs, SolverSettings, DeltaResult, MeasuredPoint } from './compute';

export type Context = configurations.Context;

export class CorrelationError extends Error {
	constructor(
		public code: 'not_found' | 'invalid' | 'conflict' | 'not_ready',
		message: string,
		public details: { field?: string; message: string }[] = []
	) {
		super(message);
	}
}

export interface PredictionDto {
	id: number;
	runId: number | null;
	reductionId: number | null;
	configurationId: number;
	configurationVersion: number;
	solver: string;
	settings: SolverSettings & { deltas: DeltaSettings };
	inputs: PredictionInputs;
	outputs: PredictionOutputs;
	isCurrent: boolean;
	createdBy: string | null;
	createdAt: string;
}

export interface DeltaDto extends DeltaResult {
	id: number;
	state: DeltaState;
	label: string;
}

/** Expanded uncertainty used when a point states none: zero (the fit interval then carries it alone). */
const NO_UNCERTAINTY = 0;

function num(v: unknown): number | null {
	return typeof v === 'number' && Number.isFinite(v) ? v : null;
}

function toMeasured(p: Point): MeasuredPoint {
	const u = (p.uncertainty ?? {}) as Record<string, unknown>;
	return {
		idx: p.idx,
		alphaDeg: p.alphaDeg as number,
		CL: p.cl as number,
		CD: num(p.cd),
		uCL: num(u.CL) ?? NO_UNCERTAINTY,
		uCD: num(u.CD) ?? NO_UNCERTAINTY,
		uAlphaDeg: num(u.alphaDeg) ?? NO_UNCERTAINTY
	};
}

async function loadRunMeasurement(runId: number, transaction?: Transaction) {
	const { Run, Reduction, Point: PointM, Campaign } = getModels();
	const run = await Run.findByPk(runId, { transaction });
	if (!run) throw new CorrelationError('not_found', `There is no run ${runId}.`);
	const campaign = await Campaign.findByPk(run.campaignId, { transaction });
	const reduction = await Reduction.findOne({ where: { runId, isCurrent: true }, transaction });
	const points = reduction
		? await PointM.findAll({ where: { reductionId: reduction.id }, order: [['idx', 'ASC']], transaction })
		: [];
	const used = points.filter((p) => !p.excluded && num(p.alphaDeg) !== null && num(p.cl) !== null);
	return { run, campaign, reduction, points, used };
}

function predictionDto(row: Record<string, unknown>): PredictionDto {
	const r = row as Record<string, any>;
	return {
		id: Number(r.id),
		runId: r.run_id == null ? null : Number(r.run_id),
		reductionId: r.reduction_id == null ? null : Number(r.reduction_id),
		configurationId: Number(r.configuration_id),
		configurationVersion: Number(r.configuration_version),
		solver: r.solver,
		settings: r.settings,
		inputs: r.inputs,
		outputs: r.outputs,
		isCurrent: Boolean(r.is_current),
		createdBy: r.created_by ?? null,
		createdAt: new Date(r.created_at).toISOString()
	};
}

function deltaDto(r: Record<string, any>): DeltaDto {
	const d: DeltaDto = {
		id: Number(r.id),
		quantity: r.quantity,
		label: DELTA_QUANTITIES.find((q) => q.key === r.quantity)?.label ?? r.quantity,
		unit: r.unit ?? '',
		value: r.value,
		uncertainty: r.uncertainty,
		tolerance: r.tolerance,
		significant: r.significant,
		outOfTolerance: r.out_of_tolerance,
		details: r.details ?? {},
		state: 'not_available'
	};
	d.state = deltaState(d);
	return d;
}

export interface PredictRequest {
	configurationId?: number;
	solver?: Partial<SolverSettings>;
	deltas?: Partial<DeltaSettings>;
}

/**
 * Predict a run from its current reduction with a configuration (default the
 * run's own) and store the prediction and its deltas as the run's current
 * ones; earlier predictions and deltas stay, no longer current.
 */
export async function predictRun(ctx: Context, runId: number, req: PredictRequest = {}): Promise<{ prediction: PredictionDto; deltas: DeltaDto[] }> {
	const sequelize = getSequelize();
	const saved = await sequelize.transaction(async (t) => {
		const { run, campaign, reduction, used } = await loadRunMeasurement(runId, t);
		if (!reduction) throw new CorrelationError('not_ready', `Run ${run.runNumber} has no current reduction yet: import and reduce it first.`);
		if (used.length < 4) throw new CorrelationError('not_ready', `Run ${run.runNumber} has ${used.length} usable points (α and CL, not excluded); at least 4 are needed.`);
		const configurationId = req.configurationId ?? (run.configurationId == null ? null : Number(run.configurationId));
		if (!configurationId) throw new CorrelationError('invalid', 'The run has no configuration: give configurationId.', [{ field: 'configurationId', message: 'required' }]);
		let config: configurations.ConfigurationDto;
		try {
			config = await configurations.get(configurationId);
		} catch (err) {
			if (err instanceof configurations.ConfigurationError) throw new CorrelationError('invalid', err.message, [{ field: 'configurationId', message: err.message }]);
			throw err;
		}
		const { wing, warnings } = configurations.toWing(config.geometry);
		const tables = configurations.sectionTablesOf(config.geometry);
		const refArea = config.refArea ?? config.planform?.area;
		if (!refArea) throw new CorrelationError('invalid', `Configuration ${config.name} v${config.version} is not a valid wing.`);
		const measured = used.map(toMeasured);
		const machs = used.map((p) => num(p.mach)).filter((v): v is number => v !== null);
		const res = used.map((p) => num(p.reynolds)).filter((v): v is number => v !== null);
		const cond = run.conditions ?? {};
		const deltaSettings: DeltaSettings = { ...DEFAULT_DELTA_SETTINGS, ...(req.deltas ?? {}) };
		// Linear, or nonlinear when the configuration's stations carry section tables (unless a solver is asked for).
		const solverName = req.solver?.solver ?? (tables.sections ? SOLVER_NONLINEAR : SOLVER_LINEAR);
		if (!(SOLVERS as readonly string[]).includes(solverName)) {
			throw new CorrelationError('invalid', `Unknown solver '${solverName}' (available: ${SOLVERS.join(', ')}).`, [{ field: 'solver.solver', message: 'unknown solver' }]);
		}
		if (solverName === SOLVER_NONLINEAR && !tables.sections) {
			throw new CorrelationError('invalid', `Configuration ${config.name} v${config.version} has no section cl(α) tables: the nonlinear solver needs them.`, [{ field: 'solver.solver', message: 'no section tables' }]);
		}
		const settings: SolverSettings = { solver: solverName as SolverSettings['solver'], ...(req.solver?.terms ? { terms: req.solver.terms } : {}), ...(req.solver?.symmetry ? { symmetry: req.solver.symmetry } : {}) };
		// The run's representative Mach and Reynolds numbers: the median of its points (nominally constant in a sweep).
		const mean = (v: number[]) => {
			const s = [...v].sort((a, b) => a - b);
			const k = s.length >> 1;
			return s.length % 2 ? s[k] : (s[k - 1] + s[k]) / 2;
		};
		const inputs: PredictionInputs = jsonSafe({
			wing,
			alphasDeg: measured.map((p) => p.alphaDeg),
			pointIdx: measured.map((p) => p.idx),
			mach: machs.length ? mean(machs) : num(cond.mach) ?? 0,
			reynolds: res.length ? mean(res) : num(cond.reynolds),
			refArea,
			profileDragCD0: config.geometry.estimatedCD0 ?? null,
			alphaRefDeg: deltaSettings.alphaRefDeg,
			clRef: deltaSettings.clRef,
			reductionId: Number(reduction.id),
			warnings: settings.solver === SOLVER_NONLINEAR ? [...warnings, ...tables.warnings] : warnings,
			...(settings.solver === SOLVER_NONLINEAR ? { sections: tables.sections } : {})
		});
		let outputs: PredictionOutputs;
		let deltas: DeltaResult[];
		try {
			outputs = computePrediction(inputs, settings);
			deltas = computeDeltas(measured, outputs, deltaSettings, resolveTolerances(campaign?.tolerances).tolerances);
		} catch (err) {
			throw new CorrelationError('invalid', `The prediction could not be made: ${err instanceof Error ? err.message : String(err)}`);
		}
		await sequelize.query('UPDATE predictions SET is_current = false WHERE run_id = :runId AND is_current', { replacements: { runId }, transaction: t });
		await sequelize.query('UPDATE deltas SET is_current = false WHERE run_id = :runId AND is_current', { replacements: { runId }, transaction: t });
		const [pred] = (await sequelize.query(
			`INSERT INTO predictions (run_id, reduction_id, configuration_id, configuration_version, solver, settings, inputs, outputs, created_by, is_current)
			 VALUES (:runId, :reductionId, :configurationId, :version, :solver, :settings, :inputs, :outputs, :by, true) RETURNING id`,
			{
				replacements: {
					runId,
					reductionId: reduction.id,
					configurationId: config.id,
					version: config.version,
					solver: settings.solver,
					settings: JSON.stringify({ ...settings, deltas: deltaSettings }),
					inputs: JSON.stringify(inputs),
					outputs: JSON.stringify(outputs),
					by: ctx.actor.id
				},
				type: QueryTypes.SELECT,
				transaction: t
			}
		)) as { id: string }[];
		const predictionId = Number(pred.id);
		for (const d of deltas) {
			await sequelize.query(
				`INSERT INTO deltas (run_id, prediction_id, reduction_id, quantity, value, uncertainty, significant, out_of_tolerance, unit, tolerance, details, is_current)
				 VALUES (:runId, :predictionId, :reductionId, :quantity, :value, :uncertainty, :significant, :oot, :unit, :tolerance, :details, true)`,
				{
					replacements: {
						runId,
						predictionId,
						reductionId: reduction.id,
						quantity: d.quantity,
						value: d.value,
						uncertainty: d.uncertainty,
						significant: d.significant,
						oot: d.outOfTolerance,
						unit: d.unit,
						tolerance: d.tolerance,
						details: JSON.stringify(d.details)
					},
					transaction: t
				}
			);
		}
		await audit.record(
			{
				actor: ctx.actor,
				action: 'run.predicted',
				entityType: 'run',
				entityId: runId,
				details: { predictionId, configurationId: config.id, configurationVersion: config.version, solver: settings.solver, outOfTolerance: deltas.filter((d) => d.outOfTolerance && d.significant).map((d) => d.quantity) },
				requestId: ctx.requestId,
				ip: ctx.ip
			},
			{ transaction: t }
		);
		return predictionId;
	});
	// After the commit: mail the aerodynamicists about new out-of-tolerance deltas (never throws).
	void notifications.notifyDeltasOutOfTolerance(runId);
	const prediction = await getPrediction(saved);
	return { prediction, deltas: await deltasOfPrediction(saved) };
}

export async function getPrediction(id: number): Promise<PredictionDto> {
	const rows = (await getSequelize().query('SELECT * FROM predictions WHERE id = :id', { replacements: { id }, type: QueryTypes.SELECT })) as Record<string, unknown>[];
	if (!rows.length) throw new CorrelationError('not_found', `There is no prediction ${id}.`);
	return predictionDto(rows[0]);
}

export async function deltasOfPrediction(predictionId: number): Promise<DeltaDto[]> {
	const rows = (await getSequelize().query('SELECT * FROM deltas WHERE prediction_id = :predictionId ORDER BY id', { replacements: { predictionId }, type: QueryTypes.SELECT })) as Record<string, any>[];
	const order = new Map(DELTA_QUANTITIES.map((q, i) => [q.key as string, i]));
	return rows.map(deltaDto).sort((a, b) => (order.get(a.quantity) ?? 99) - (order.get(b.quantity) ?? 99));
}

/** Every prediction of a run, newest first (without the bulky outputs' curve). */
export async function predictionsOfRun(runId: number): Promise<Omit<PredictionDto, 'inputs' | 'outputs'>[]> {
	const rows = (await getSequelize().query(
		`SELECT id, run_id, reduction_id, configuration_id, configuration_version, solver, settings, is_current, created_by, created_at,
		        '{}'::jsonb AS inputs, '{}'::jsonb AS outputs
		 FROM predictions WHERE run_id = :runId ORDER BY created_at DESC, id DESC`,
		{ replacements: { runId }, type: QueryTypes.SELECT }
	)) as Record<string, unknown>[];
	return rows.map((r) => {
		const { inputs: _i, outputs: _o, ...rest } = predictionDto(r);
		return rest;
	});
}

export interface RunCorrelation {
	run: { id: number; campaignId: number; runNumber: string; state: string; configurationId: number | null; testDate: string | null; repeatOfRunId: number | null };
	reduction: { id: number; version: number } | null;
	points: (MeasuredPoint & { excluded: boolean })[];
	prediction: PredictionDto | null;
	deltas: DeltaDto[];
	/** Why the current prediction may be out of date (empty when it is not). */
	stale: string[];
}

/** A run's measured points, current prediction and deltas. */
export async function runCorrelation(runId: number): Promise<RunCorrelation> {
	const { run, reduction, points } = await loadRunMeasurement(runId);
	const rows = (await getSequelize().query('SELECT * FROM predictions WHERE run_id = :runId AND is_current', { replacements: { runId }, type: QueryTypes.SELECT })) as Record<string, unknown>[];
	const prediction = rows.length ? predictionDto(rows[0]) : null;
	const stale: string[] = [];
	if (prediction) {
		if (reduction && prediction.reductionId !== Number(reduction.id)) stale.push('the run has been re-reduced since this prediction');
		const versions = await configurations.versions(prediction.configurationId);
		if (versions[0] && versions[0].version > prediction.configurationVersion) stale.push(`configuration version ${versions[0].version} is newer than the predicted version ${prediction.configurationVersion}`);
	}
	return {
		run: {
			id: Number(run.id),
			campaignId: Number(run.campaignId),
			runNumber: run.runNumber,
			state: run.state,
			configurationId: run.configurationId == null ? null : Number(run.configurationId),
			testDate: run.testDate ?? null,
			repeatOfRunId: run.repeatOfRunId == null ? null : Number(run.repeatOfRunId)
		},
		reduction: reduction ? { id: Number(reduction.id), version: reduction.version } : null,
		points: points.filter((p) => num(p.alphaDeg) !== null && num(p.cl) !== null).map((p) => ({ ...toMeasured(p), excluded: p.excluded })),
		prediction,
		deltas: prediction ? await deltasOfPrediction(prediction.id) : [],
		stale
	};
}

// ------------------------------------------------------------ campaign level

export interface CampaignDeltaRow {
	id: number;
	runId: number;
	runNumber: string;
	testDate: string | null;
	runState: string;
	repeatOfRunId: number | null;
	configurationId: number;
	configurationVersion: number;
	configurationName: string;
	quantity: string;
	value: number | null;
	uncertainty: number | null;
	tolerance: number | null;
	unit: string | null;
	significant: boolean | null;
	outOfTolerance: boolean | null;
	state: DeltaState;
}

/** Every current delta of a campaign with its run and configuration: one query over `current_deltas`. */
export async function campaignDeltas(campaignId: number): Promise<CampaignDeltaRow[]> {
	const rows = (await getSequelize().query(
		`SELECT id, run_id, run_number, test_date, run_state, repeat_of_run_id, configuration_id, configuration_version, configuration_name,
		        quantity, value, uncertainty, tolerance, unit, significant, out_of_tolerance, ${DELTA_STATE_SQL} AS state
		 FROM current_deltas WHERE campaign_id = :campaignId ORDER BY test_date NULLS LAST, run_number, quantity`,
		{ replacements: { campaignId }, type: QueryTypes.SELECT }
	)) as Record<string, any>[];
	return rows.map((r) => ({
		id: Number(r.id),
		runId: Number(r.run_id),
		runNumber: r.run_number,
		testDate: r.test_date ?? null,
		runState: r.run_state,
		repeatOfRunId: r.repeat_of_run_id == null ? null : Number(r.repeat_of_run_id),
		configurationId: Number(r.configuration_id),
		configurationVersion: Number(r.configuration_version),
		configurationName: r.configuration_name,
		quantity: r.quantity,
		value: r.value,
		uncertainty: r.uncertainty,
		tolerance: r.tolerance,
		unit: r.unit,
		significant: r.significant,
		outOfTolerance: r.out_of_tolerance,
		state: r.state
	}));
}

export interface DeltaSummaryRow {
	configurationId: number;
	configurationName: string;
	configurationVersion: number;
	quantity: string;
	runs: number;
	mean: number | null;
	/** Sample standard deviation over the runs (repeatability when they are repeats). */
	stddev: number | null;
	worst: number | null;
	outOfTolerance: number;
	notSignificant: number;
	withinTolerance: number;
	notAvailable: number;
}

/** Per configuration and quantity: counts by state, mean, scatter and worst |delta|. One query. */
export async function campaignDeltaSummary(campaignId: number): Promise<DeltaSummaryRow[]> {
	const rows = (await getSequelize().query(
		`WITH d AS (SELECT *, ${DELTA_STATE_SQL} AS state FROM current_deltas WHERE campaign_id = :campaignId)
		 SELECT configuration_id, configuration_name, configuration_version, quantity, count(*)::int AS runs,
		        avg(value) AS mean, stddev_samp(value) AS stddev,
		        (array_agg(value ORDER BY abs(value) DESC NULLS LAST))[1] AS worst,
		        count(*) FILTER (WHERE state = 'out_of_tolerance')::int AS out_of_tolerance,
		        count(*) FILTER (WHERE state = 'not_significant')::int AS not_significant,
		        count(*) FILTER (WHERE state = 'within_tolerance')::int AS within_tolerance,
		        count(*) FILTER (WHERE state = 'not_available')::int AS not_available
		 FROM d GROUP BY configuration_id, configuration_name, configuration_version, quantity
		 ORDER BY out_of_tolerance DESC, configuration_name, configuration_version, quantity`,
		{ replacements: { campaignId }, type: QueryTypes.SELECT }
	)) as Record<string, any>[];
	return rows.map((r) => ({
		configurationId: Number(r.configuration_id),
		configurationName: r.configuration_name,
		configurationVersion: Number(r.configuration_version),
		quantity: r.quantity,
		runs: r.runs,
		mean: r.mean,
		stddev: r.stddev,
		worst: r.worst,
		outOfTolerance: r.out_of_tolerance,
		notSignificant: r.not_significant,
		withinTolerance: r.within_tolerance,
		notAvailable: r.not_available
	}));
}

// ------------------------------------------------------------ calibration

export interface CalibrationRequest {
	configurationId: number;
	/** Runs to fit; default every accepted run of the campaign with that configuration. */
	runIds?: number[];
	fitSpanEfficiency?: boolean;
}

export interface CalibrationDto {
	id: number;
	campaignId: number;
	configurationId: number;
	configurationVersion: number;
	runIds: number[];
	options: Record<string, unknown>;
	result: {
		a0Scale: { value: number; standardError: number; ci95: [number, number] };
		alphaZeroLiftShiftDeg: { value: number; standardError: number; ci95: [number, number] };
		effectiveA0: { value: number; standardError: number; ci95: [number, number] };
		spanEfficiencyFactor?: { value: number; standardError: number; ci95: [number, number] };
		profileDragCD0?: { value: number; standardError: number; ci95: [number, number] };
		liftSlope: number;
		alphaZeroLiftDeg: number;
		rmsResidual: number;
		dof: number;
		iterations: number;
	};
	observations: number;
	rmsResidual: number | null;
	createdBy: string | null;
	createdAt: string;
}

function calibrationDto(r: Record<string, any>): CalibrationDto {
	return {
		id: Number(r.id),
		campaignId: Number(r.campaign_id),
		configurationId: Number(r.configuration_id),
		configurationVersion: Number(r.configuration_version),
		runIds: (r.run_ids as (string | number)[]).map(Number),
		options: r.options,
		result: r.result,
		observations: r.observations,
		rmsResidual: r.rms_residual,
		createdBy: r.created_by ?? null,
		createdAt: new Date(r.created_at).toISOString()
	};
}

/** Linear-range observations of a run's current reduction (the calibration fits lift in its linear range only). */
async function observationsOf(runId: number): Promise<CalibrationObservation[]> {
	const { used } = await loadRunMeasurement(runId);
	if (used.length < 4) return [];
	const m = used.map(toMeasured);
	const lift = fitLiftCurve(m.map((p) => p.alphaDeg), m.map((p) => p.CL));
	return lift.linearRange.indices.map((i) => ({ alphaDeg: m[i].alphaDeg, CL: m[i].CL, CD: m[i].CD ?? undefined, mach: num(used[i].mach) ?? undefined }));
}

/** Fit the configuration's effective a₀ and α_L0 (optionally κ) to runs and store the calibration. */
export async function calibrate(ctx: Context, campaignId: number, req: CalibrationRequest): Promise<CalibrationDto> {
	const { Run, Campaign } = getModels();
	if (!(await Campaign.findByPk(campaignId))) throw new CorrelationError('not_found', `There is no campaign ${campaignId}.`);
	const config = await configurations.get(req.configurationId).catch((err) => {
		throw new CorrelationError('invalid', err instanceof Error ? err.message : String(err), [{ field: 'configurationId', message: 'unknown configuration' }]);
	});
	let runIds = req.runIds;
	if (!runIds || runIds.length === 0) {
		const runs = await Run.findAll({ where: { campaignId, configurationId: config.id, state: 'accepted', isTare: false }, order: [['id', 'ASC']] });
		runIds = runs.map((r) => Number(r.id));
	} else {
		const runs = await Run.findAll({ where: { id: runIds } });
		const foreign = runIds.filter((id) => !runs.some((r) => Number(r.id) === id && Number(r.campaignId) === campaignId));
		if (foreign.length) throw new CorrelationError('invalid', `Runs ${foreign.join(', ')} are not runs of campaign ${campaignId}.`, [{ field: 'runIds', message: 'unknown run' }]);
	}
	const observations: CalibrationObservation[] = [];
	const usedRuns: number[] = [];
	for (const id of runIds) {
		const obs = await observationsOf(id);
		if (obs.length) {
			usedRuns.push(id);
			observations.push(...obs);
		}
	}
	if (observations.length < 3) throw new CorrelationError('not_ready', 'No reduced runs with enough points to calibrate against (accepted runs of this configuration, or give runIds).');
	const { wing } = configurations.toWing(config.geometry);
	const ratio = (config.planform?.area ?? 1) / (config.refArea ?? config.planform?.area ?? 1);
	// Measured CL is on refArea; the solver's on the planform area: compare like with like.
	const scaled = observations.map((o) => ({ ...o, CL: o.CL / ratio, CD: o.CD === undefined ? undefined : o.CD / ratio }));
	let result;
	try {
		result = calibrateLiftingLine(wing, scaled, { fitSpanEfficiency: req.fitSpanEfficiency === true });
	} catch (err) {
		throw new CorrelationError('invalid', `The calibration failed: ${err instanceof Error ? err.message : String(err)}`);
	}
	const { wing: _w, residuals: _r, ...kept } = result;
	const stored = jsonSafe({ ...kept, liftSlopePerDegOnRefArea: result.liftSlope * (Math.PI / 180) * ratio });
	const row = await getSequelize().transaction(async (t) => {
		const [ins] = (await getSequelize().query(
			`INSERT INTO calibrations (campaign_id, configuration_id, configuration_version, run_ids, options, result, observations, rms_residual, created_by)
			 VALUES (:campaignId, :configurationId, :version, ARRAY[:runIds]::bigint[], :options, :result, :observations, :rms, :by) RETURNING *`,
			{
				replacements: {
					campaignId,
					configurationId: config.id,
					version: config.version,
					runIds: usedRuns,
					options: JSON.stringify({ fitSpanEfficiency: req.fitSpanEfficiency === true, requestedRunIds: runIds }),
					result: JSON.stringify(stored),
					observations: observations.length,
					rms: result.rmsResidual * ratio,
					by: ctx.actor.id
				},
				type: QueryTypes.SELECT,
				transaction: t
			}
		)) as Record<string, any>[];
		await audit.record(
			{ actor: ctx.actor, action: 'configuration.calibrated', entityType: 'configuration', entityId: config.id, details: { calibrationId: Number(ins.id), campaignId, runIds: usedRuns }, requestId: ctx.requestId, ip: ctx.ip },
			{ transaction: t }
		);
		return ins;
	});
	return calibrationDto(row);
}

/** Calibrations of a campaign, oldest first: the drift of a₀ and α_L0 as runs arrived. */
export async function calibrationHistory(campaignId: number): Promise<CalibrationDto[]> {
	const rows = (await getSequelize().query('SELECT * FROM calibrations WHERE campaign_id = :campaignId ORDER BY created_at, id', { replacements: { campaignId }, type: QueryTypes.SELECT })) as Record<string, any>[];
	return rows.map(calibrationDto);
}

export interface CalibratedRunCheck {
	runId: number;
	runNumber: string;
	configurationId: number | null;
	points: number;
	/** RMS ΔCL over the run's linear range, original and calibrated model. */
	rmsOriginal: number;
	rmsCalibrated: number;
	usedInFit: boolean;
	/** The linear-range points compared, with the original and calibrated model's CL (on refArea) at each. */
	compared: { alphaDeg: number; CL: number; CLoriginal: number; CLcalibrated: number }[];
}

/**
 * The calibration's a₀ scale and α_L0 shift applied to each run's own
 * configuration, against every reduced run of the campaign (original and
 * calibrated RMS ΔCL over the linear range).
 */
export async function calibrationAgainstRuns(calibrationId: number): Promise<{ calibration: CalibrationDto; runs: CalibratedRunCheck[] }> {
	const rows = (await getSequelize().query('SELECT * FROM calibrations WHERE id = :calibrationId', { replacements: { calibrationId }, type: QueryTypes.SELECT })) as Record<string, any>[];
	if (!rows.length) throw new CorrelationError('not_found', `There is no calibration ${calibrationId}.`);
	const cal = calibrationDto(rows[0]);
	const { Run } = getModels();
	const runs = await Run.findAll({ where: { campaignId: cal.campaignId, isTare: false }, order: [['runNumber', 'ASC']] });
	const out: CalibratedRunCheck[] = [];
	for (const run of runs) {
		const obs = await observationsOf(Number(run.id));
		if (!obs.length) continue;
		const config = await configurations.get(run.configurationId == null ? cal.configurationId : Number(run.configurationId));
		const { wing } = configurations.toWing(config.geometry);
		const cw = calibratedWing(wing, cal.result.a0Scale.value, cal.result.alphaZeroLiftShiftDeg.value);
		const ratio = (config.planform?.area ?? 1) / (config.refArea ?? config.planform?.area ?? 1);
		const model = (w: typeof wing) => obs.map((o) => liftCurve(w, [o.alphaDeg], { mach: o.mach ?? 0 }).points[0].CL * ratio);
		const rms = (cl: number[]) => Math.sqrt(obs.reduce((t, o, i) => t + (o.CL - cl[i]) ** 2, 0) / obs.length);
		const original = model(wing);
		const calibrated = model(cw);
		out.push({
			runId: Number(run.id),
			runNumber: run.runNumber,
			configurationId: config.id,
			points: obs.length,
			rmsOriginal: rms(original),
			rmsCalibrated: rms(calibrated),
			usedInFit: cal.runIds.includes(Number(run.id)),
			compared: obs.map((o, i) => ({ alphaDeg: o.alphaDeg, CL: o.CL, CLoriginal: original[i], CLcalibrated: calibrated[i] }))
		});
	}
	return { calibration: cal, runs: out };
}

export interface RunOverview {
	id: number;
	runNumber: string;
	state: string;
	testDate: string | null;
	isTare: boolean;
	repeatOfRunId: number | null;
	configurationId: number | null;
	configurationName: string | null;
	configurationVersion: number | null;
	reductionVersion: number | null;
	predictionId: number | null;
	predictedVersion: number | null;
}

/** Runs of a campaign with their current reduction and prediction (one query), for run pickers. */
export async function campaignRunsOverview(campaignId: number): Promise<RunOverview[]> {
	const rows = (await getSequelize().query(
		`SELECT r.id, r.run_number, r.state, r.test_date, r.is_tare, r.repeat_of_run_id, r.configuration_id,
		        c.name AS configuration_name, c.version AS configuration_version, red.version AS reduction_version,
		        p.id AS prediction_id, p.configuration_version AS predicted_version
		 FROM runs r
		 LEFT JOIN configurations c ON c.id = r.configuration_id
		 LEFT JOIN reductions red ON red.run_id = r.id AND red.is_current
		 LEFT JOIN predictions p ON p.run_id = r.id AND p.is_current
		 WHERE r.campaign_id = :campaignId ORDER BY r.run_number`,
		{ replacements: { campaignId }, type: QueryTypes.SELECT }
	)) as Record<string, any>[];
	const n = (v: unknown) => (v == null ? null : Number(v));
	return rows.map((r) => ({
		id: Number(r.id),
		runNumber: r.run_number,
		state: r.state,
		testDate: r.test_date ?? null,
		isTare: r.is_tare,
		repeatOfRunId: n(r.repeat_of_run_id),
		configurationId: n(r.configuration_id),
		configurationName: r.configuration_name ?? null,
		configurationVersion: n(r.configuration_version),
		reductionVersion: n(r.reduction_version),
		predictionId: n(r.prediction_id),
		predictedVersion: n(r.predicted_version)
	}));
}
