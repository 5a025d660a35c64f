/**
 * Runs: import, read, re-reduce, state changes. Routes call this module
 * through a namespace import (`import * as runs from '$lib/server/runs'`)
 * and get plain DTOs back, never model instances.
 */
import { QueryTypes } from 'sequelize';
import { can, type Role } from '../auth/roles';
import * as audit from '../audit';
import * as notifications from '$lib/server/notifications';
import { getModels, getSequelize, type RunState } from '../db';
import { openCsv } from '../imports/csv';
import { ImportError } from '../imports/errors';
import { validateMapping, type ColumnMapping, type RunKind } from '../imports/mapping';
import { sniffKind } from '../imports/validate';
import { parseSpreadsheetInWorker } from '../imports/xlsx';
import { RunError } from './errors';
import { fromImportError, MAX_XLSX_BYTES, resolveMapping } from './import';
import { reduce, ReferenceMissing } from './reduce';
import { loadReduceContext, readSamples, writeReduction, type Actor } from './store';
import type { ReductionSettingsInput } from './schemas';
import { statement } from '../db/sql';
import type { PointDto, PointValues, ReductionDto, RunDetail, RunSummary } from '../../run-types';

export type { PointDto, ReductionDto, RunDetail, RunSummary } from '../../run-types';

export { importRun, maxUploadBytes, type ImportInput, type ImportProgress, type ImportResult } from './import';
export { RunError } from './errors';
export type { Actor } from './store';

/**
 * The run state machine (DESIGN.md "Roles"): test engineers (editRuns) move
 * imported → reduced → reviewed and bring a returned run back to reduced;
 * aerodynamicists and admins (signOff) accept or return a reviewed run, and
 * may return an accepted one.
 */
export const TRANSITIONS: Record<RunState, { to: RunState; capability: 'editRuns' | 'signOff' }[]> = {
	imported: [{ to: 'reduced', capability: 'editRuns' }],
	reduced: [{ to: 'reviewed', capability: 'editRuns' }],
	reviewed: [
		{ to: 'accepted', capability: 'signOff' },
		{ to: 'returned', capability: 'signOff' }
	],
	accepted: [{ to: 'returned', capability: 'signOff' }],
	returned: [{ to: 'reduced', capability: 'editRuns' }]
};

export function allowedTransitions(state: RunState, role: Role | null | undefined): RunState[] {
	return (TRANSITIONS[state] ?? []).filter((t) => can(role, t.capability)).map((t) => t.to);
}

const num = (v: unknown) => (v === null || v === undefined ? null : Number(v));

function reductionDto(r: { id: number; version: number; settings: Record<string, unknown>; fits: Record<string, unknown> | null; corrections: Record<string, unknown> | null }): ReductionDto {
	return { id: Number(r.id), version: r.version, settings: r.settings, fits: r.fits, corrections: r.corrections };
}

interface RunDetailRow {
	id: string;
	campaign_id: string;
	run_number: string;
	kind: RunKind;
	state: RunState;
	is_tare: boolean;
	tare_run_id: string | null;
	repeat_of_run_id: string | null;
	conditions: Record<string, unknown> | null;
	notes: string | null;
	config_id: string | null;
	config_name: string | null;
	config_version: number | null;
	files: { id: number; name: string; size: number; sha256: string; sheet: string | null; storage: string; rowCount: number | null }[];
	reductions: { id: number; version: number; createdAt: string; createdBy: string | null; createdByName: string | null; isCurrent: boolean }[];
	cur_id: string | null;
	cur_version: number | null;
	cur_settings: Record<string, unknown> | null;
	cur_fits: Record<string, unknown> | null;
	cur_corrections: Record<string, unknown> | null;
}

/** Run detail in one statement (run, configuration, source files, reduction versions with authors, current reduction). */
export async function getRun(id: number, role: Role | null): Promise<RunDetail | null> {
	const [row] = await statement<RunDetailRow>(
		`SELECT r.id, r.campaign_id, r.run_number, r.kind, r.state, r.is_tare, r.tare_run_id, r.repeat_of_run_id, r.conditions, r.notes,
		        c.id AS config_id, c.name AS config_name, c.version AS config_version,
		        (SELECT coalesce(json_agg(json_build_object('id', f.id, 'name', f.name, 'size', f.size, 'sha256', f.sha256, 'sheet', f.sheet,
		                                                    'storage', f.storage, 'rowCount', f.row_count) ORDER BY f.id), '[]')
		           FROM source_files f WHERE f.run_id = r.id) AS files,
		        (SELECT coalesce(json_agg(json_build_object('id', d.id, 'version', d.version, 'createdAt', d.created_at, 'createdBy', d.created_by,
		                                                    'createdByName', coalesce(u.name, u.email), 'isCurrent', d.is_current) ORDER BY d.version), '[]')
		           FROM reductions d LEFT JOIN users u ON u.id = d.created_by WHERE d.run_id = r.id) AS reductions,
		        cur.id AS cur_id, cur.version AS cur_version, cur.settings AS cur_settings, cur.fits AS cur_fits, cur.corrections AS cur_corrections
		   FROM runs r
		   LEFT JOIN configurations c ON c.id = r.configuration_id
		   LEFT JOIN reductions cur ON cur.run_id = r.id AND cur.is_current
		  WHERE r.id = $1`,
		[id]
	);
	if (!row) return null;
	const c = (row.conditions ?? {}) as Record<string, unknown>;
	return {
		id: Number(row.id),
		campaignId: Number(row.campaign_id),
		runNumber: row.run_number,
		kind: row.kind,
		state: row.state,
		isTare: row.is_tare,
		tareRunId: num(row.tare_run_id),
		repeatOfRunId: num(row.repeat_of_run_id),
		configuration: row.config_id ? { id: Number(row.config_id), name: row.config_name!, version: row.config_version! } : null,
		conditions: {
			qPa: num(c.qPa),
			velocity: num(c.velocityMps),
			density: num(c.densityKgM3),
			temperatureK: num(c.temperatureK),
			pressurePa: num(c.staticPressurePa),
			reynolds: num(c.reynolds),
			mach: num(c.mach)
		},
		sourceFiles: row.files.map((f) => ({ ...f, id: Number(f.id), size: Number(f.size) })),
		currentReduction:
			row.cur_id === null
				? null
				: reductionDto({ id: Number(row.cur_id), version: row.cur_version!, settings: row.cur_settings ?? {}, fits: row.cur_fits, corrections: row.cur_corrections }),
		// json_build_object writes timestamptz in the session's offset notation; the API speaks ISO 8601 UTC.
		reductions: row.reductions.map((r) => ({ ...r, id: Number(r.id), createdAt: new Date(r.createdAt).toISOString(), createdByName: r.createdBy ? r.createdByName : null })),
		notes: row.notes ?? null,
		allowedTransitions: allowedTransitions(row.state, role)
	};
}

export async function listRuns(campaignId: number, q: { state?: RunState; kind?: RunKind; limit: number; offset: number }): Promise<{ items: RunSummary[]; total: number; limit: number; offset: number }> {
	const where = ['r.campaign_id = :campaignId'];
	if (q.state) where.push('r.state = :state');
	if (q.kind) where.push('r.kind = :kind');
	const clause = where.join(' AND ');
	const r = { campaignId, state: q.state, kind: q.kind, limit: q.limit, offset: q.offset };
	const sequelize = getSequelize();
	const rows = await sequelize.query<{ id: string; campaign_id: string; run_number: string; kind: RunKind; state: RunState; is_tare: boolean; configuration_id: string | null; test_date: string | null; created_at: Date; point_count: string; version: number | null; total: string }>(
		`SELECT r.id, r.campaign_id, r.run_number, r.kind, r.state, r.is_tare, r.configuration_id, r.test_date, r.created_at,
		        red.version, (SELECT count(*) FROM points p WHERE p.reduction_id = red.id) AS point_count,
		        count(*) OVER () AS total
		   FROM runs r LEFT JOIN reductions red ON red.run_id = r.id AND red.is_current
		  WHERE ${clause} ORDER BY r.run_number LIMIT :limit OFFSET :offset`,
		{ replacements: r, type: QueryTypes.SELECT }
	);
	// The window count rides along with the page; only a page past the end needs its own count.
	const total =
		rows.length > 0
			? rows[0].total
			: (await sequelize.query<{ total: string }>(`SELECT count(*) AS total FROM runs r WHERE ${clause}`, { replacements: r, type: QueryTypes.SELECT }))[0].total;
	return {
		items: rows.map((x) => ({
			id: Number(x.id),
			campaignId: Number(x.campaign_id),
			runNumber: x.run_number,
			kind: x.kind,
			state: x.state,
			isTare: x.is_tare,
			configurationId: num(x.configuration_id),
			testDate: x.test_date,
			createdAt: new Date(x.created_at).toISOString(),
			pointCount: Number(x.point_count),
			currentVersion: x.version
		})),
		total: Number(total),
		limit: q.limit,
		offset: q.offset
	};
}

interface PointRow {
	idx: number;
	alpha_deg: number | null;
	cl: number | null;
	cd: number | null;
	cm: number | null;
	q_pa: number | null;
	velocity: number | null;
	reynolds: number | null;
	mach: number | null;
	uncertainty: PointDto['uncertainty'];
	flags: PointDto['flags'];
	excluded: boolean;
	values: Record<string, unknown> | null;
}

/** Points of the current reduction, or of `version` (null when the run or version does not exist), in one statement (points as one JSON array: a run can have thousands, and no model instances are built). */
export async function getPoints(runId: number, version?: number): Promise<{ reduction: ReductionDto; points: PointDto[] } | null> {
	const [red] = await statement<{ id: number; version: number; settings: Record<string, unknown>; fits: Record<string, unknown> | null; corrections: Record<string, unknown> | null; points: PointRow[] }>(
		`SELECT d.id, d.version, d.settings, d.fits, d.corrections,
		        (SELECT coalesce(json_agg(json_build_object('idx', p.idx, 'alpha_deg', p.alpha_deg, 'cl', p.cl, 'cd', p.cd, 'cm', p.cm, 'q_pa', p.q_pa,
		                                                    'velocity', p.velocity, 'reynolds', p.reynolds, 'mach', p.mach, 'uncertainty', p.uncertainty,
		                                                    'flags', p.flags, 'excluded', p.excluded, 'values', p."values") ORDER BY p.idx), '[]')
		           FROM points p WHERE p.reduction_id = d.id) AS points
		   FROM reductions d WHERE d.run_id = $1 AND ${version ? 'd.version = $2' : 'd.is_current'}`,
		version ? [runId, version] : [runId]
	);
	if (!red) return null;
	const pts = red.points;
	return {
		reduction: reductionDto(red),
		points: pts.map((p) => {
			const v = (p.values ?? {}) as PointValues;
			const c = v.corrections;
			return {
				idx: p.idx,
				alphaDeg: p.alpha_deg ?? null,
				CL: p.cl ?? null,
				CD: p.cd ?? null,
				Cm: p.cm ?? null,
				qPa: p.q_pa ?? null,
				velocity: p.velocity ?? null,
				reynolds: p.reynolds ?? null,
				mach: p.mach ?? null,
				uncertainty: p.uncertainty ?? null,
				corrections:
					c?.liftInterference && c.streamlineCurvature && c.blockage
						? { deltaAlphaDeg: c.liftInterference.dAlphaDeg + c.streamlineCurvature.dAlphaDeg, deltaCD: c.liftInterference.dCD, blockage: c.blockage.epsilon }
						: null,
				flags: p.flags,
				excluded: p.excluded,
				values: v
			};
		})
	};
}

/**
 * Re-reduce from the stored samples with new settings (merged over the
 * current version's): a new version, marked current; older versions stay.
 */
export async function reReduce(actor: Actor, runId: number, settings: ReductionSettingsInput): Promise<{ version: number; warnings: string[] }> {
	const { Run, Reduction } = getModels();
	const run = await Run.findByPk(runId);
	if (!run) throw new RunError(404, 'not_found', 'No such run.');
	const files = await getSequelize().query<{ id: string; layout: { headers?: string[] } | null; column_mapping: ColumnMapping | null }>(
		'SELECT id, layout, column_mapping FROM source_files WHERE run_id = :id ORDER BY id LIMIT 1',
		{ replacements: { id: runId }, type: QueryTypes.SELECT }
	);
	const file = files[0];
	if (!file || !file.layout?.headers) throw new RunError(409, 'no_samples', 'This run has no imported samples to reduce.');
	const current = await Reduction.findOne({ where: { runId, isCurrent: true } });
	const prev = (current?.settings ?? {}) as ReductionSettingsInput & { mapping?: ColumnMapping };
	const mapping = (settings.mapping ?? prev.mapping ?? file.column_mapping) as ColumnMapping;
	const check = validateMapping(mapping, run.kind);
	const width = file.layout.headers.length;
	const outOfRange = mapping.columns.filter((c) => c.field !== null && c.index >= width);
	if (!check.ok || outOfRange.length) {
		throw new RunError(422, 'invalid_mapping', 'The mapping cannot reduce this run.', [
			...check.messages.map((m) => ({ field: 'settings.mapping', message: m })),
			...outOfRange.map((c) => ({ field: 'settings.mapping', column: c.header, message: `column ${c.index + 1} does not exist in the file` }))
		]);
	}
	const merged: ReductionSettingsInput = {
		tareRunId: settings.tareRunId !== undefined ? settings.tareRunId : (prev.tareRunId ?? run.tareRunId ?? null),
		corrections: settings.corrections ?? pickCorrectionInputs(prev.corrections),
		reference: settings.reference,
		balanceOffset: settings.balanceOffset ?? prev.balanceOffset,
		excludedPoints: settings.excludedPoints ?? prev.excludedPoints,
		segments: settings.segments ?? (prev.segments as ReductionSettingsInput['segments']),
		thrustIncidenceDeg: settings.thrustIncidenceDeg ?? prev.thrustIncidenceDeg,
		uncertainty: settings.uncertainty ?? prev.uncertainty,
		note: settings.note
	};
	if (merged.tareRunId) {
		const tareRun = await Run.findByPk(merged.tareRunId);
		if (!tareRun || Number(tareRun.campaignId) !== Number(run.campaignId) || !tareRun.isTare) {
			throw new RunError(422, 'invalid_reference', `Run ${merged.tareRunId} is not a tare run of this campaign.`, [{ field: 'settings.tareRunId', message: 'not a tare run of this campaign' }]);
		}
	}
	const samples = await readSamples(runId, width, mapping);
	if (samples.missing.length) {
		throw new RunError(422, 'invalid_mapping', 'The mapping uses cells that are not numbers in the stored samples.', samples.missing.map((m) => ({ row: m.row, column: m.field, message: `row ${m.row}: no number for ${m.field}` })));
	}
	const sequelize = getSequelize();
	return sequelize.transaction(async (t) => {
		const ctx = await loadReduceContext({ id: Number(run.id), campaignId: Number(run.campaignId), configurationId: run.configurationId, kind: run.kind }, merged.tareRunId ?? null, samples.rowNumbers, t);
		let out;
		try {
			out = reduce(samples.columns, ctx, { ...merged, mapping });
		} catch (e) {
			if (e instanceof ReferenceMissing) throw new RunError(422, 'reference_missing', e.message);
			if (e instanceof Error && !(e instanceof RunError)) throw new RunError(422, 'reduction_failed', `The run could not be reduced: ${e.message}`);
			throw e;
		}
		const version = await writeReduction(runId, out, actor, t);
		if (merged.tareRunId !== (run.tareRunId ?? null)) await run.update({ tareRunId: merged.tareRunId ?? null }, { transaction: t });
		await audit.record(
			{
				actor: { id: actor.id, email: actor.email },
				action: 'run.re_reduced',
				entityType: 'run',
				entityId: runId,
				details: { version, previousVersion: current?.version ?? null, settings: { ...merged, mapping: settings.mapping ? 'changed' : 'unchanged' } },
				requestId: actor.requestId ?? null,
				ip: actor.ip ?? null
			},
			{ transaction: t }
		);
		return { version, warnings: out.warnings };
	});
}

/** The user-given correction inputs of an applied-settings record (drop what was derived). */
function pickCorrectionInputs(c: unknown): ReductionSettingsInput['corrections'] {
	if (!c || typeof c !== 'object') return undefined;
	const x = c as Record<string, unknown>;
	if (x.enabled === false) return { enabled: false };
	return undefined; // facility defaults again
}

/** Move a run to another state, if the state machine and the role allow it. */
export async function changeState(actor: Actor, runId: number, to: RunState, note?: string): Promise<void> {
	const { Run } = getModels();
	await getSequelize().transaction(async (t) => {
		const run = await Run.findByPk(runId, { transaction: t, lock: t.LOCK.UPDATE });
		if (!run) throw new RunError(404, 'not_found', 'No such run.');
		const state = run.state as RunState;
		const edge = (TRANSITIONS[state] ?? []).find((e) => e.to === to);
		if (!edge) {
			throw new RunError(409, 'invalid_transition', `A run in state '${run.state}' cannot move to '${to}'.`, [{ field: 'to', message: `allowed from '${run.state}': ${(TRANSITIONS[state] ?? []).map((e) => e.to).join(', ') || 'none'}` }]);
		}
		if (!can(actor.role as Role, edge.capability)) {
			throw new RunError(403, 'forbidden', `Your role may not move a run from '${run.state}' to '${to}' (needs '${edge.capability}').`);
		}
		const from = run.state;
		const notes = note ? `${run.notes ? `${run.notes}\n` : ''}[${new Date().toISOString().slice(0, 10)} ${actor.email}, ${from} → ${to}] ${note}` : run.notes;
		await run.update({ state: to, notes }, { transaction: t });
		await audit.record(
			{
				actor: { id: actor.id, email: actor.email },
				action: to === 'accepted' || to === 'returned' ? 'run.signed_off' : 'run.state_changed',
				entityType: 'run',
				entityId: runId,
				details: { from, to, note: note ?? null },
				requestId: actor.requestId ?? null,
				ip: actor.ip ?? null
			},
			{ transaction: t }
		);
	});
	// After the commit: tell the aerodynamicists (never throws; mail failures stay in the outbox).
	if (to === 'reduced') void notifications.notifyRunReduced(runId);
}

/** The run's original file: metadata for the download route. */
export async function sourceFile(runId: number, fileId: number): Promise<{ id: number; name: string; size: number; sha256: string; storage: string; storageKey: string | null; contentType: string | null } | null> {
	const rows = await getSequelize().query<{ id: string; name: string; size: string; sha256: string; storage: string; storage_key: string | null; content_type: string | null }>(
		'SELECT id, name, size, sha256, storage, storage_key, content_type FROM source_files WHERE id = :fileId AND run_id = :runId',
		{ replacements: { runId, fileId }, type: QueryTypes.SELECT }
	);
	const f = rows[0];
	return f ? { id: Number(f.id), name: f.name, size: Number(f.size), sha256: f.sha256, storage: f.storage, storageKey: f.storage_key, contentType: f.content_type } : null;
}

export interface PreviewResult {
	layout: { separator: string | null; decimal: 'point' | 'comma'; preamble: { row: number; key: string; value: string }[]; headerRow: number; unitRow: number | null };
	sheets?: string[];
	sheet?: string;
	headers: string[];
	units: (string | null)[];
	sampleRows: string[][];
	mapping: ColumnMapping;
	mappingSource: string;
	missing: string[];
}

/** Read the head of a file (≤ 256 KiB of CSV, or a whole XLSX) and propose a mapping. */
export async function preview(campaignId: number, input: { name: string; kind?: RunKind; sheet?: string; profile?: string; bytes: Uint8Array }): Promise<PreviewResult> {
	const { Campaign } = getModels();
	const campaign = await Campaign.findByPk(campaignId);
	if (!campaign) throw new RunError(404, 'not_found', 'No such campaign.');
	const kind = input.kind ?? campaign.kind;
	if (input.bytes.byteLength === 0) throw new RunError(422, 'empty_file', `'${input.name}' is empty.`);
	try {
		const type = sniffKind(input.bytes.subarray(0, 4096));
		let head: { headers: string[]; unitCells: string[] | null; headerRow: number; unitRow: number | null; preamble: { row: number; key: string; value: string }[] };
		let rows: { cells: (string | number | null)[] }[] = [];
		let layout: PreviewResult['layout'];
		let sheets: string[] | undefined;
		let sheet: string | undefined;
		if (type === 'xlsx') {
			if (input.bytes.byteLength > MAX_XLSX_BYTES) throw new RunError(413, 'file_too_large', `The spreadsheet is larger than ${MAX_XLSX_BYTES / 1024 / 1024} MB.`);
			const res = await parseSpreadsheetInWorker(input.bytes, { sheet: input.sheet ?? null });
			if (res.status === 'needs_sheet') {
				const mapping: ColumnMapping = { version: 1, kind, columns: [] };
				return { layout: { separator: null, decimal: 'point', preamble: [], headerRow: 0, unitRow: null }, sheets: res.sheets, headers: [], units: [], sampleRows: [], mapping, mappingSource: 'proposed', missing: ['a sheet'] };
			}
			head = res.table;
			rows = res.table.rows.slice(0, 20);
			sheets = res.table.sheets;
			sheet = res.table.sheet;
			layout = { separator: null, decimal: 'point', preamble: head.preamble, headerRow: head.headerRow, unitRow: head.unitRow };
		} else {
			// The client sends only the first part of a CSV: drop a last line it may have cut.
			let bytes = input.bytes;
			const lastNl = bytes.lastIndexOf(10);
			if (lastNl > 0 && lastNl < bytes.length - 1) bytes = bytes.subarray(0, lastNl + 1);
			const reader = await openCsv([bytes]);
			head = reader;
			for await (const r of reader.rows) {
				rows.push(r);
				if (rows.length >= 20) break;
			}
			layout = { separator: reader.format.separator, decimal: reader.format.decimalComma ? 'comma' : 'point', preamble: reader.preamble, headerRow: reader.headerRow, unitRow: reader.unitRow };
		}
		const resolved = await resolveMapping(campaign.facilityId ? Number(campaign.facilityId) : null, head.headers, head.unitCells, kind, null, input.profile);
		const check = validateMapping(resolved.mapping, kind);
		return {
			layout,
			...(sheets ? { sheets, sheet } : {}),
			headers: head.headers,
			units: head.headers.map((_, i) => resolved.mapping.columns.find((c) => c.index === i)?.unit ?? null),
			sampleRows: rows.map((r) => r.cells.map((c) => (c === null ? '' : String(c)))),
			mapping: resolved.mapping,
			mappingSource: resolved.source,
			missing: check.missing
		};
	} catch (e) {
		if (e instanceof ImportError) throw fromImportError(e);
		throw e;
	}
}
