/**
 * Exports for reports: the campaign summary and any run's points and deltas,
 * as an XLSX workbook (one sheet per table, units in the header row) or one
 * table as CSV (RFC 4180, UTF-8 with BOM so spreadsheets read the encoding).
 *
 * Text cells are neutralised against formula injection (OWASP "CSV
 * Injection"): a text starting with = + - @, a tab or a carriage return gets
 * a leading apostrophe, so no spreadsheet evaluates it. Numbers stay numbers.
 */
import * as XLSX from '@e965/xlsx';
import { QueryTypes } from 'sequelize';
import { getSequelize } from '$lib/server/db';
import * as runs from '$lib/server/runs';
import * as correlation from '$lib/server/correlation';
import * as summary from '$lib/server/summary';
import { DELTA_QUANTITIES } from '$lib/server/correlation/quantities';

export type Cell = string | number | boolean | null;

/** A table: header cells (with units) and rows. */
export interface Table {
	name: string;
	header: string[];
	rows: Cell[][];
}

export class ExportError extends Error {
	constructor(
		public code: 'not_found' | 'invalid',
		message: string
	) {
		super(message);
	}
}

const FORMULA_START = /^[=+\-@\t\r]/;

/** Neutralise one text cell (OWASP CSV Injection guidance: prefix a single quote). */
export function neutralise(text: string): string {
	return FORMULA_START.test(text) ? `'${text}` : text;
}

function cellOut(v: Cell): Cell {
	if (typeof v === 'string') return neutralise(v);
	if (typeof v === 'number' && !Number.isFinite(v)) return null;
	return v;
}

/** Quote a CSV field when it holds a separator, quote or line break (RFC 4180 §2). */
function csvField(v: Cell): string {
	const c = cellOut(v);
	if (c === null) return '';
	const s = typeof c === 'number' ? String(c) : typeof c === 'boolean' ? (c ? 'true' : 'false') : c;
	return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

export function toCsv(table: Table): string {
	const lines = [table.header, ...table.rows].map((r) => r.map(csvField).join(','));
	return `\uFEFF${lines.join('\r\n')}\r\n`;
}

export function toXlsx(tables: Table[]): Buffer {
	const wb = XLSX.utils.book_new();
	for (const t of tables) {
		const ws = XLSX.utils.aoa_to_sheet([t.header, ...t.rows.map((r) => r.map(cellOut))]);
		ws['!cols'] = t.header.map((h) => ({ wch: Math.min(40, Math.max(10, h.length + 2)) }));
		// Sheet names: at most 31 characters, none of : \ / ? * [ ].
		XLSX.utils.book_append_sheet(wb, ws, t.name.replace(/[:\\/?*[\]]/g, ' ').slice(0, 31));
	}
	return XLSX.write(wb, { type: 'buffer', bookType: 'xlsx', compression: true }) as Buffer;
}

const unitSuffix = (unit: string | null | undefined) => (unit ? ` [${unit}]` : ' [-]');
const quantityLabel = new Map(DELTA_QUANTITIES.map((q) => [q.key as string, q]));

// ------------------------------------------------------------ campaign

interface RunRow {
	id: number;
	run_number: string;
	kind: string;
	state: string;
	is_tare: boolean;
	test_date: string | null;
	repeat_of: string | null;
	configuration: string | null;
	configuration_version: number | null;
	points: number;
	notes: string | null;
}

async function campaignRuns(campaignId: number): Promise<RunRow[]> {
	return getSequelize().query<RunRow>(
		`SELECT r.id, r.run_number, r.kind, r.state, r.is_tare, r.test_date, o.run_number AS repeat_of, c.name AS configuration, c.version AS configuration_version,
		        (SELECT count(*) FROM points p JOIN reductions rd ON rd.id = p.reduction_id WHERE rd.run_id = r.id AND rd.is_current)::int AS points, r.notes
		 FROM runs r LEFT JOIN runs o ON o.id = r.repeat_of_run_id LEFT JOIN configurations c ON c.id = r.configuration_id
		 WHERE r.campaign_id = :campaignId ORDER BY r.created_at, r.id`,
		{ replacements: { campaignId }, type: QueryTypes.SELECT }
	);
}

export const CAMPAIGN_TABLES = ['summary', 'configurations', 'deltas', 'worst', 'runs'] as const;
export type CampaignTable = (typeof CAMPAIGN_TABLES)[number];

/** Every table of a campaign export, in sheet order. */
export async function campaignTables(campaignId: number): Promise<{ title: string; code: string; tables: Record<CampaignTable, Table> }> {
	let s: summary.SummaryFacts;
	try {
		s = await summary.getSummaryFacts(campaignId);
	} catch (err) {
		if (err instanceof summary.SummaryError) throw new ExportError('not_found', err.message);
		throw err;
	}
	const [deltas, runRows] = await Promise.all([correlation.campaignDeltas(campaignId), campaignRuns(campaignId)]);
	const r = s.runs;
	const info: Table = {
		name: 'Summary',
		header: ['item', 'value'],
		rows: [
			['campaign', `${s.campaign.code} ${s.campaign.name}`],
			['kind', s.campaign.kind],
			['facility', s.campaign.facilityName],
			['status', s.campaign.status],
			['computed at', s.generatedAt],
			['runs planned', r.planned],
			['runs in the database', r.total],
			['imported', r.imported],
			['reduced', r.reduced],
			['reviewed', r.reviewed],
			['accepted', r.accepted],
			['returned', r.returned],
			['tare runs', r.tare],
			['runs with current deltas', r.withDeltas],
			['points (current reductions, not excluded)', r.points],
			...s.text.map((t, i): Cell[] => [`summary ${i + 1}`, t]),
			['caution', s.caution]
		]
	};
	const qs = s.quantities;
	const configurations: Table = {
		name: 'Configurations',
		header: ['configuration', 'versions', 'runs', 'runs with deltas', 'deltas out of tolerance', ...qs.flatMap((q) => [`${q.label} mean${unitSuffix(q.unit)}`, `${q.label} std dev${unitSuffix(q.unit)}`, `${q.label} state`, `${q.label} out of tolerance [runs]`])],
		rows: s.configurations.map((c) => [
			c.name,
			c.versions.join(' '),
			c.runs,
			c.runsWithDeltas,
			c.outOfTolerance,
			...qs.flatMap((q): Cell[] => {
				const d = c.deltas[q.key];
				return d ? [d.mean, d.stddev, d.state.replace(/_/g, ' '), d.counts.out_of_tolerance] : [null, null, null, null];
			})
		])
	};
	const deltaTable: Table = {
		name: 'Deltas',
		header: ['run', 'test date', 'run state', 'repeat of run', 'configuration', 'configuration version', 'quantity', 'label', 'value', 'uncertainty (k = 2)', 'tolerance', 'unit', 'significant', 'out of tolerance', 'state'],
		rows: deltas.map((d) => [
			d.runNumber,
			d.testDate,
			d.runState,
			d.repeatOfRunId,
			d.configurationName,
			d.configurationVersion,
			d.quantity,
			quantityLabel.get(d.quantity)?.label ?? d.quantity,
			d.value,
			d.uncertainty,
			d.tolerance,
			d.unit || null,
			d.significant,
			d.outOfTolerance,
			d.state.replace(/_/g, ' ')
		])
	};
	const worst: Table = {
		name: 'Worst offenders',
		header: ['run', 'test date', 'configuration', 'quantity', 'value', 'uncertainty (k = 2)', 'tolerance', 'unit', '|value| / tolerance [-]'],
		rows: s.worstOffenders.map((w) => [w.runNumber, w.testDate, w.configurationName, w.label, w.value, w.uncertainty, w.tolerance, w.unit || null, w.ratio])
	};
	const runTable: Table = {
		name: 'Runs',
		header: ['run', 'kind', 'state', 'tare', 'test date', 'repeat of run', 'configuration', 'configuration version', 'points', 'notes'],
		rows: runRows.map((x) => [x.run_number, x.kind, x.state, x.is_tare, x.test_date, x.repeat_of, x.configuration, x.configuration_version, Number(x.points), x.notes])
	};
	return { title: s.campaign.name, code: s.campaign.code, tables: { summary: info, configurations, deltas: deltaTable, worst, runs: runTable } };
}

// ------------------------------------------------------------ run

export const RUN_TABLES = ['run', 'points', 'deltas'] as const;
export type RunTable = (typeof RUN_TABLES)[number];

export async function runTables(runId: number): Promise<{ runNumber: string; tables: Record<RunTable, Table> }> {
	const detail = await runs.getRun(runId, null);
	if (!detail) throw new ExportError('not_found', 'No such run.');
	const [pts, corr] = await Promise.all([runs.getPoints(runId), correlation.runCorrelation(runId).catch(() => null)]);
	const c = detail.conditions;
	const info: Table = {
		name: 'Run',
		header: ['item', 'value'],
		rows: [
			['run', detail.runNumber],
			['kind', detail.kind],
			['state', detail.state],
			['tare run', detail.isTare],
			['configuration', detail.configuration ? `${detail.configuration.name} v${detail.configuration.version}` : null],
			['reduction version', pts?.reduction.version ?? null],
			['q [Pa]', c.qPa],
			['velocity [m/s]', c.velocity],
			['density [kg/m³]', c.density],
			['temperature [K]', c.temperatureK],
			['pressure [Pa]', c.pressurePa],
			['Reynolds number [-]', c.reynolds],
			['Mach number [-]', c.mach],
			['source files', detail.sourceFiles.map((f) => f.name).join('; ')],
			['notes', detail.notes],
			['prediction', corr?.prediction ? `${corr.prediction.solver}, configuration version ${corr.prediction.configurationVersion}` : null],
			['caution', summary.CAUTION]
		]
	};
	const points: Table = {
		name: 'Points',
		header: ['point', 'alpha [deg]', 'CL [-]', 'CD [-]', 'Cm [-]', 'q [Pa]', 'velocity [m/s]', 'Reynolds number [-]', 'Mach number [-]', 'u(CL) (k = 2) [-]', 'u(CD) (k = 2) [-]', 'u(alpha) (k = 2) [deg]', 'excluded', 'flags'],
		rows: (pts?.points ?? []).map((p) => [
			p.idx,
			p.alphaDeg,
			p.CL,
			p.CD,
			p.Cm,
			p.qPa,
			p.velocity,
			p.reynolds,
			p.mach,
			p.uncertainty?.CL ?? null,
			p.uncertainty?.CD ?? null,
			p.uncertainty?.alphaDeg ?? null,
			p.excluded,
			p.flags.join(' ')
		])
	};
	const deltas: Table = {
		name: 'Deltas',
		header: ['quantity', 'label', 'value', 'uncertainty (k = 2)', 'tolerance', 'unit', 'significant', 'out of tolerance', 'state'],
		rows: (corr?.deltas ?? []).map((d) => [d.quantity, d.label, d.value, d.uncertainty, d.tolerance, d.unit || null, d.significant, d.outOfTolerance, d.state.replace(/_/g, ' ')])
	};
	return { runNumber: detail.runNumber, tables: { run: info, points, deltas } };
}

/** A file name without characters that trouble file systems or headers. */
export function fileName(base: string, ext: string): string {
	return `${base.replace(/[^A-Za-z0-9._-]+/g, '-').replace(/^-+|-+$/g, '') || 'export'}.${ext}`;
}

export const XLSX_TYPE = 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet';
