/**
 * Versioned wing configurations. A configuration is a row per version: the
 * versions of one wing share its name (version 1, 2, …, each row's parent
 * the version it was edited from); saving never overwrites, so a run keeps
 * the version it was compared with. Duplicate-and-modify starts a new name
 * at version 1 with the source as parent (a variant, e.g. a flap setting).
 *
 * Geometry is checked twice: field by field (zod) and as a wing by the aero
 * core's validateWing, whose messages name the station or segment.
 */
import { Op, UniqueConstraintError, type Transaction } from 'sequelize';
import type { z } from 'zod';
import { getModels, getSequelize, type Configuration, type WingGeometry } from '$lib/server/db';
import * as audit from '$lib/server/audit';
import type { ErrorDetail } from '$lib/server/http';
import { planformGeometry, validateWing, type PlanformGeometry, type Wing } from '$lib/aero/planform';
import { flapEffectiveness } from '$lib/aero/flap';
import type { SectionTable } from '$lib/aero/nonlinear-lifting-line';
import { ConfigurationInputSchema, DuplicateSchema, type ConfigurationInput, type NamedSectionTable, type SectionTableData } from './schemas';

export { ConfigurationInputSchema, DuplicateSchema, SectionTableDataSchema, NamedSectionTableSchema, MAX_TABLE_POINTS, type ConfigurationInput, type NamedSectionTable, type SectionTableData } from './schemas';

export interface Actor {
	id: string;
	email: string;
}
export interface Context {
	actor: Actor;
	requestId?: string | null;
	ip?: string | null;
}

export class ConfigurationError extends Error {
	constructor(
		public code: 'not_found' | 'invalid' | 'conflict',
		message: string,
		public details: ErrorDetail[] = []
	) {
		super(message);
	}
}

/** Geometry as stored (JSONB), with our optional profile-drag estimate. */
export interface StoredGeometry extends WingGeometry {
	estimatedCD0?: number | null;
	segments: (WingGeometry['segments'][number] & { side?: 'both' | 'left' | 'right' })[];
	stations: (WingGeometry['stations'][number] & { sectionTable?: string | SectionTableData })[];
	/** Section cl(α) tables shared by name between stations. */
	sectionTables?: NamedSectionTable[];
}

export interface ConfigurationDto {
	id: number;
	campaignId: number | null;
	name: string;
	version: number;
	parentId: number | null;
	geometry: StoredGeometry;
	refArea: number | null;
	refSpan: number | null;
	refChord: number | null;
	momentRef: { x: number; y: number; z: number; [k: string]: unknown } | null;
	notes: string | null;
	createdBy: string | null;
	createdAt: string;
	/** True for the newest version of this name. */
	isLatest: boolean;
	/** S, AR, taper, MAC from the aero core (null when the stored geometry is not a valid wing). */
	planform: PlanformGeometry | null;
}

/**
 * Δα_L0 of a segment: the stated value, else, for a flap or aileron with a
 * chord ratio, thin-airfoil flap effectiveness −τ·δf ($lib/aero/flap), else
 * none (0, with a warning).
 */
export function segmentDeltaAlphaZeroLift(g: StoredGeometry['segments'][number], i: number): { value: number; warning: string | null; fromFlapTheory: boolean } {
	if (g.deltaAlphaZeroLiftDeg !== undefined && g.deltaAlphaZeroLiftDeg !== null) return { value: g.deltaAlphaZeroLiftDeg, warning: null, fromFlapTheory: false };
	if (g.kind !== 'other' && typeof g.chordFraction === 'number' && typeof g.deflectionDeg === 'number') {
		try {
			const f = flapEffectiveness(g.chordFraction, g.deflectionDeg);
			return {
				value: f.deltaAlphaZeroLiftDeg,
				warning: `segment ${i} (${g.name}): Δα_L0 = ${f.deltaAlphaZeroLiftDeg.toFixed(3)}° from thin-airfoil flap effectiveness (cf/c ${g.chordFraction}, δf ${g.deflectionDeg}°, τ ${f.tau.toFixed(3)}); section data would be better`,
				fromFlapTheory: true
			};
		} catch (err) {
			return { value: 0, warning: `segment ${i} (${g.name}): ${err instanceof Error ? err.message : String(err)}, so the solver ignores it`, fromFlapTheory: false };
		}
	}
	return { value: 0, warning: `segment ${i} (${g.name}): no Δα_L0 and no flap chord ratio given, so the solver ignores it`, fromFlapTheory: false };
}

/**
 * The aero core's wing for a stored geometry. A segment's Δα_L0 is the stated
 * value, else thin-airfoil flap effectiveness from its chord ratio and
 * deflection (reported in `warnings`), else nothing (also reported).
 */
export function toWing(geometry: StoredGeometry): { wing: Wing; warnings: string[] } {
	const warnings: string[] = [];
	const segments = (geometry.segments ?? []).map((g, i) => {
		const d = segmentDeltaAlphaZeroLift(g, i);
		if (d.warning) warnings.push(d.warning);
		return {
			name: g.name,
			etaStart: g.etaStart,
			etaEnd: g.etaEnd,
			deltaAlphaZeroLiftDeg: d.value,
			side: g.side ?? 'both'
		};
	});
	return {
		wing: {
			span: geometry.span,
			stations: geometry.stations.map((s) => ({
				eta: s.eta,
				chord: s.chord,
				twistDeg: s.twistDeg,
				a0: s.a0,
				alphaZeroLiftDeg: s.alphaZeroLiftDeg
			})),
			segments
		},
		warnings
	};
}

/**
 * The section tables of a stored geometry for the nonlinear lifting line, one
 * per station at the station's η, or null when no station has one. Stations
 * without a table get the straight line cl = a₀(α − α_L0) of their own
 * section data over ±90° (so a wing may mix tables and linear sections); the
 * solver blends tables linearly in η between stations.
 */
export function sectionTablesOf(geometry: StoredGeometry): { sections: SectionTable[] | null; warnings: string[] } {
	const shared = new Map((geometry.sectionTables ?? []).map((t) => [t.name, t]));
	const warnings: string[] = [];
	const own = geometry.stations.map((s) => (typeof s.sectionTable === 'string' ? shared.get(s.sectionTable) ?? null : s.sectionTable ?? null));
	if (!own.some(Boolean)) return { sections: null, warnings };
	const linearFrom: number[] = [];
	const sections = geometry.stations.map((s, i): SectionTable => {
		const t = own[i];
		if (t) return { eta: s.eta, alphaDeg: [...t.alphaDeg], cl: [...t.cl], ...(t.cd && own.every((o) => !o || o.cd) ? { cd: [...t.cd] } : {}) };
		linearFrom.push(i);
		const rad = Math.PI / 180;
		return { eta: s.eta, alphaDeg: [-90, 90], cl: [s.a0 * (-90 - s.alphaZeroLiftDeg) * rad, s.a0 * (90 - s.alphaZeroLiftDeg) * rad] };
	});
	if (linearFrom.length) warnings.push(`station${linearFrom.length > 1 ? 's' : ''} ${linearFrom.join(', ')}: no section table, linear section cl = a₀(α − α_L0) used (no stall there)`);
	return { sections, warnings };
}

function toDto(row: Configuration, latestVersion: number): ConfigurationDto {
	const geometry = row.geometry as StoredGeometry;
	let planform: PlanformGeometry | null = null;
	try {
		planform = planformGeometry(toWing(geometry).wing);
	} catch {
		planform = null;
	}
	return {
		id: Number(row.id),
		campaignId: row.campaignId == null ? null : Number(row.campaignId),
		name: row.name,
		version: row.version,
		parentId: row.parentId == null ? null : Number(row.parentId),
		geometry,
		refArea: row.refArea ?? null,
		refSpan: row.refSpan ?? null,
		refChord: row.refChord ?? null,
		momentRef: (row.momentRef as ConfigurationDto['momentRef']) ?? null,
		notes: row.notes ?? null,
		createdBy: row.createdBy ?? null,
		createdAt: row.createdAt.toISOString(),
		isLatest: row.version === latestVersion,
		planform
	};
}

async function latestVersions(names: string[], transaction?: Transaction): Promise<Map<string, number>> {
	const out = new Map<string, number>();
	if (names.length === 0) return out;
	const rows = (await getSequelize().query(
		'SELECT name, max(version)::int AS v FROM configurations WHERE name IN (:names) GROUP BY name',
		{ replacements: { names }, type: 'SELECT', transaction }
	)) as { name: string; v: number }[];
	for (const r of rows) out.set(r.name, r.v);
	return out;
}

/** Configurations, newest version of each name unless `allVersions`; optionally of one campaign. */
export async function list(opts: { campaignId?: number; allVersions?: boolean } = {}): Promise<ConfigurationDto[]> {
	const { Configuration } = getModels();
	const where: Record<string, unknown> = {};
	if (opts.campaignId) where.campaignId = opts.campaignId;
	const rows = await Configuration.findAll({ where, order: [['name', 'ASC'], ['version', 'DESC']] });
	const latest = await latestVersions([...new Set(rows.map((r) => r.name))]);
	const dtos = rows.map((r) => toDto(r, latest.get(r.name) ?? r.version));
	return opts.allVersions ? dtos : dtos.filter((d) => d.isLatest);
}

export async function get(id: number): Promise<ConfigurationDto> {
	const { Configuration } = getModels();
	const row = await Configuration.findByPk(id);
	if (!row) throw new ConfigurationError('not_found', `There is no configuration ${id}.`);
	const latest = await latestVersions([row.name]);
	return toDto(row, latest.get(row.name) ?? row.version);
}

/** Every version of the configuration's name, newest first. */
export async function versions(id: number): Promise<ConfigurationDto[]> {
	const one = await get(id);
	const { Configuration } = getModels();
	const rows = await Configuration.findAll({ where: { name: one.name }, order: [['version', 'DESC']] });
	const latest = rows[0]?.version ?? one.version;
	return rows.map((r) => toDto(r, latest));
}

function zodDetails(error: z.ZodError): ErrorDetail[] {
	return error.issues.map((issue) => {
		const path = issue.path;
		if ((path[0] === 'stations' || path[0] === 'segments') && typeof path[1] === 'number') {
			const kind = path[0] === 'stations' ? 'station' : 'segment';
			const field = path.slice(2).join('.');
			return { field: `${path[0]}[${path[1]}]${field ? '.' + field : ''}`, row: path[1], column: field || undefined, message: `${kind} ${path[1]}${field ? ` ${field}` : ''}: ${issue.message}` };
		}
		return { field: path.join('.') || undefined, message: issue.message };
	});
}

/** validateWing's message "station 3: chord must be …" → a detail with field and row. */
function wingDetail(message: string): ErrorDetail {
	const m = /^(station|segment) (\d+)[^:]*: (\w+)?/.exec(message);
	if (m) {
		const row = Number(m[2]);
		const list = m[1] === 'station' ? 'stations' : 'segments';
		const field = m[3] && /^[a-zA-Z]+$/.test(m[3]) && m[3] !== 'the' && m[3] !== 'need' ? m[3] : undefined;
		return { field: `${list}[${row}]${field ? '.' + field : ''}`, row, column: field, message };
	}
	return { field: /span/.test(message) ? 'span' : undefined, message };
}

/** Parse and check an input; throws ConfigurationError('invalid') with per-field details. */
export function parseInput(raw: unknown): ConfigurationInput {
	const parsed = ConfigurationInputSchema.safeParse(raw);
	if (!parsed.success) throw new ConfigurationError('invalid', 'The configuration has invalid fields.', zodDetails(parsed.error));
	const input = parsed.data;
	try {
		validateWing(toWing(geometryOf(input)).wing);
	} catch (err) {
		const message = err instanceof Error ? err.message : String(err);
		throw new ConfigurationError('invalid', message, [wingDetail(message)]);
	}
	return input;
}

function geometryOf(input: ConfigurationInput): StoredGeometry {
	return {
		span: input.span,
		stations: input.stations.map((s) => ({
			eta: s.eta,
			chord: s.chord,
			twistDeg: s.twistDeg,
			a0: s.a0,
			alphaZeroLiftDeg: s.alphaZeroLiftDeg,
			...(s.sectionTable !== undefined ? { sectionTable: s.sectionTable } : {})
		})),
		...(input.sectionTables.length ? { sectionTables: input.sectionTables } : {}),
		segments: input.segments.map((g) => ({
			name: g.name,
			kind: g.kind,
			etaStart: g.etaStart,
			etaEnd: g.etaEnd,
			deflectionDeg: g.deflectionDeg,
			...(g.deltaAlphaZeroLiftDeg !== undefined ? { deltaAlphaZeroLiftDeg: g.deltaAlphaZeroLiftDeg } : {}),
			...(g.chordFraction !== undefined ? { chordFraction: g.chordFraction } : {}),
			side: g.side
		})),
		estimatedCD0: input.estimatedCD0 ?? null
	};
}

/** The editable form of a stored configuration (what the editor and duplicate start from). */
export function inputOf(dto: ConfigurationDto): ConfigurationInput {
	const g = dto.geometry;
	return {
		name: dto.name,
		campaignId: dto.campaignId,
		span: g.span,
		stations: g.stations.map((s) => ({ ...s })),
		segments: (g.segments ?? []).map((s) => ({ ...s, side: s.side ?? 'both' })),
		sectionTables: (g.sectionTables ?? []).map((t) => ({ ...t })),
		refArea: dto.refArea,
		refSpan: dto.refSpan,
		refChord: dto.refChord,
		momentRef: dto.momentRef ? { x: Number(dto.momentRef.x), y: Number(dto.momentRef.y), z: Number(dto.momentRef.z) } : null,
		estimatedCD0: g.estimatedCD0 ?? null,
		notes: dto.notes
	};
}

async function insert(ctx: Context, input: ConfigurationInput, version: number, parentId: number | null, action: string, transaction: Transaction) {
	const { Configuration } = getModels();
	try {
		const row = await Configuration.create(
			{
				campaignId: input.campaignId ?? null,
				name: input.name,
				version,
				parentId,
				geometry: geometryOf(input),
				refArea: input.refArea ?? null,
				refSpan: input.refSpan ?? null,
				refChord: input.refChord ?? null,
				momentRef: input.momentRef ?? null,
				notes: input.notes ?? null,
				createdBy: ctx.actor.id
			},
			{ transaction }
		);
		await audit.record(
			{ actor: ctx.actor, action, entityType: 'configuration', entityId: row.id, details: { name: row.name, version, parentId }, requestId: ctx.requestId, ip: ctx.ip },
			{ transaction }
		);
		return row;
	} catch (err) {
		if (err instanceof UniqueConstraintError) {
			throw new ConfigurationError('conflict', `A configuration named “${input.name}” with version ${version} already exists.`, [{ field: 'name', message: 'name and version must be unique' }]);
		}
		throw err;
	}
}

/** A new configuration (version 1). The name must not be in use. */
export async function create(ctx: Context, raw: unknown): Promise<ConfigurationDto> {
	const input = parseInput(raw);
	const row = await getSequelize().transaction(async (t) => {
		const { Configuration } = getModels();
		if (await Configuration.count({ where: { name: input.name }, transaction: t })) {
			throw new ConfigurationError('conflict', `The name “${input.name}” is taken: save a new version of it, or choose another name.`, [{ field: 'name', message: 'name is in use' }]);
		}
		return insert(ctx, input, 1, null, 'configuration.created', t);
	});
	return get(Number(row.id));
}

/**
 * Save edits of configuration `id` as the next version of its name. Only the
 * newest version may be edited (409 otherwise), and the name stays (rename =
 * duplicate).
 */
export async function saveVersion(ctx: Context, id: number, raw: unknown): Promise<ConfigurationDto> {
	const input = parseInput(raw);
	const row = await getSequelize().transaction(async (t) => {
		const { Configuration } = getModels();
		const base = await Configuration.findByPk(id, { transaction: t, lock: t.LOCK.UPDATE });
		if (!base) throw new ConfigurationError('not_found', `There is no configuration ${id}.`);
		if (input.name !== base.name) {
			throw new ConfigurationError('invalid', 'A new version keeps the name; use duplicate to start a variant under a new name.', [{ field: 'name', message: `name must stay “${base.name}”` }]);
		}
		const newest = await Configuration.max<number, Configuration>('version', { where: { name: base.name }, transaction: t });
		if (newest !== base.version) {
			throw new ConfigurationError('conflict', `Version ${base.version} is not the newest (version ${newest} is): open the newest version to edit it.`);
		}
		return insert(ctx, input, base.version + 1, Number(base.id), 'configuration.version_saved', t);
	});
	return get(Number(row.id));
}

/** A variant: a copy of `id` under a new name, version 1, the source as parent; `changes` may modify it. */
export async function duplicate(ctx: Context, id: number, raw: unknown, changes?: unknown): Promise<ConfigurationDto> {
	const parsed = DuplicateSchema.safeParse(raw);
	if (!parsed.success) throw new ConfigurationError('invalid', 'The duplicate needs a name.', zodDetails(parsed.error));
	const source = await get(id);
	const base = { ...inputOf(source), ...(changes && typeof changes === 'object' ? changes : {}), name: parsed.data.name };
	if (parsed.data.notes !== undefined) base.notes = parsed.data.notes;
	const input = parseInput(base);
	const row = await getSequelize().transaction(async (t) => {
		const { Configuration } = getModels();
		if (await Configuration.count({ where: { name: input.name }, transaction: t })) {
			throw new ConfigurationError('conflict', `The name “${input.name}” is taken.`, [{ field: 'name', message: 'name is in use' }]);
		}
		return insert(ctx, input, 1, source.id, 'configuration.duplicated', t);
	});
	return get(Number(row.id));
}

/** Ids of every version sharing the name of `id` (for comparisons across versions). */
export async function versionIds(id: number): Promise<number[]> {
	const { Configuration } = getModels();
	const one = await Configuration.findByPk(id, { attributes: ['name'] });
	if (!one) return [];
	const rows = await Configuration.findAll({ where: { name: { [Op.eq]: one.name } }, attributes: ['id'] });
	return rows.map((r) => Number(r.id));
}
