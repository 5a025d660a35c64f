/**
 * Database side of reductions: the context a reduction needs (facility,
 * configuration reference values, tare points), writing a new version with
 * its points, and reading samples back (COPY TO, parsed as it streams).
 */
import { QueryTypes, type Transaction } from 'sequelize';
import { to as copyTo } from 'pg-copy-streams';
import type { PoolClient } from 'pg';
import { UNITS } from '../../aero/units';
import type { TarePoint } from '../../aero/axes';
import { getModels, getSequelize } from '../db';
import type { ColumnMapping } from '../imports/mapping';
import { RunError } from './errors';
import type { ReduceContext, ReductionOut } from './reduce';

export interface Actor {
	id: string;
	email: string;
	role: string;
	requestId?: string | null;
	ip?: string | null;
}

export async function loadReduceContext(
	run: { campaignId: number; configurationId?: number | null; kind: 'tunnel' | 'flight'; id?: number; isTare?: boolean },
	tareRunId: number | null,
	rowNumbers: ArrayLike<number>,
	transaction?: Transaction
): Promise<ReduceContext> {
	const { Campaign, Facility, Configuration } = getModels();
	const campaign = await Campaign.findByPk(run.campaignId, { transaction });
	const facility = campaign?.facilityId ? await Facility.findByPk(campaign.facilityId, { transaction }) : null;
	const config = run.configurationId ? await Configuration.findByPk(run.configurationId, { transaction }) : null;
	let tare: TarePoint[] | null = null;
	if (tareRunId) {
		if (run.id !== undefined && Number(tareRunId) === Number(run.id)) throw new RunError(422, 'invalid_reference', 'A run cannot be its own tare.');
		tare = await tarePoints(tareRunId, transaction);
	}
	return {
		kind: run.kind,
		rowNumbers,
		facility: facility ? { kind: facility.kind, testSection: facility.testSection ?? null, corrections: facility.corrections ?? null } : null,
		reference: {
			area: config?.refArea ?? null,
			span: config?.refSpan ?? null,
			chord: config?.refChord ?? null,
			momentRef: config?.momentRef ? { x: config.momentRef.x, y: config.momentRef.y, z: config.momentRef.z } : null
		},
		tare
	};
}

/** Body-axis loads of a wind-off run's current reduction, for weight tares. */
async function tarePoints(tareRunId: number, transaction?: Transaction): Promise<TarePoint[]> {
	const rows = await getSequelize().query<{ values: { forces?: { normal: number; axial: number; pitching: number }; uncorrected?: { alphaDeg: number } } }>(
		`SELECT p."values" FROM points p JOIN reductions r ON r.id = p.reduction_id
		  WHERE r.run_id = :id AND r.is_current ORDER BY p.idx`,
		{ replacements: { id: tareRunId }, type: QueryTypes.SELECT, transaction }
	);
	const pts: TarePoint[] = [];
	for (const r of rows) {
		const f = r.values?.forces;
		const a = r.values?.uncorrected?.alphaDeg;
		if (f && typeof a === 'number') pts.push({ alphaDeg: a, normal: f.normal, axial: f.axial, pitching: f.pitching });
	}
	if (pts.length === 0) throw new RunError(422, 'invalid_tare', `Run ${tareRunId} has no balance loads to use as a weight tare (its file gives coefficients, not forces).`, [{ field: 'tareRunId', message: 'no loads' }]);
	return pts;
}

/** Write `out` as the next version of the run's reduction and make it current. Returns the version. */
/** Points per INSERT statement in writeReduction (keeps one statement's JSON to a few MB). */
const POINTS_PER_STATEMENT = 2_000;

const finiteOrNull = (v: number | null | undefined) => (typeof v === 'number' && Number.isFinite(v) ? v : null);

export async function writeReduction(runId: number, out: ReductionOut, actor: Actor, transaction: Transaction): Promise<number> {
	const { Run, Reduction } = getModels();
	const sequelize = getSequelize();
	// The run row lock orders concurrent re-reductions of one run.
	await sequelize.query('SELECT id FROM runs WHERE id = :id FOR UPDATE', { replacements: { id: runId }, transaction });
	const [{ v }] = await sequelize.query<{ v: number | null }>('SELECT max(version) AS v FROM reductions WHERE run_id = :id', {
		replacements: { id: runId },
		type: QueryTypes.SELECT,
		transaction
	});
	const version = (v ?? 0) + 1;
	await Reduction.update({ isCurrent: false }, { where: { runId, isCurrent: true }, transaction });
	const red = await Reduction.create(
		{ runId, version, settings: out.settings, fits: out.fits, corrections: out.corrections, isCurrent: true, createdBy: actor.id },
		{ transaction }
	);
	// The points go in as JSON through jsonb_to_recordset, a few thousand per
	// statement: one parameter instead of a model instance and 14 escaped
	// literals per point (bulkCreate was most of an upload's database CPU).
	for (let i = 0; i < out.points.length; i += POINTS_PER_STATEMENT) {
		const rows = out.points.slice(i, i + POINTS_PER_STATEMENT).map((p) => ({
			idx: p.idx,
			alpha_deg: finiteOrNull(p.alphaDeg),
			cl: finiteOrNull(p.CL),
			cd: finiteOrNull(p.CD),
			cm: finiteOrNull(p.Cm),
			q_pa: finiteOrNull(p.qPa),
			velocity: finiteOrNull(p.velocity),
			reynolds: finiteOrNull(p.reynolds),
			mach: finiteOrNull(p.mach),
			values: p.values,
			uncertainty: p.uncertainty,
			flags: p.flags,
			excluded: p.excluded
		}));
		await sequelize.query(
			`INSERT INTO points (reduction_id, idx, alpha_deg, cl, cd, cm, q_pa, velocity, reynolds, mach, "values", uncertainty, flags, excluded)
			 SELECT :reductionId, r.idx, r.alpha_deg, r.cl, r.cd, r.cm, r.q_pa, r.velocity, r.reynolds, r.mach, coalesce(r."values", '{}'::jsonb), r.uncertainty, coalesce(r.flags, '{}'), r.excluded
			   FROM jsonb_to_recordset(CAST(:rows AS jsonb)) AS r(idx integer, alpha_deg double precision, cl double precision, cd double precision, cm double precision,
			        q_pa double precision, velocity double precision, reynolds double precision, mach double precision, "values" jsonb, uncertainty jsonb, flags text[], excluded boolean)`,
			{ replacements: { reductionId: Number(red.id), rows: JSON.stringify(rows) }, transaction }
		);
	}
	const c = out.conditions;
	await Run.update(
		{
			conditions: {
				qPa: c.qPa ?? undefined,
				velocityMps: c.velocity ?? undefined,
				densityKgM3: c.density ?? undefined,
				temperatureK: c.temperatureK ?? undefined,
				staticPressurePa: c.pressurePa ?? undefined,
				reynolds: c.reynolds ?? undefined,
				mach: c.mach ?? undefined
			}
		},
		{ where: { id: runId }, transaction }
	);
	return version;
}

/** Parse one COPY text line `row\t{v,v,NULL}` into the row number and values. */
function parseSampleLine(line: string, width: number, out: Float64Array): number {
	const tab = line.indexOf('\t');
	const row = Number(line.slice(0, tab));
	let j = 0;
	let start = tab + 2; // after "{"
	const end = line.length - 1; // "}"
	while (j < width) {
		let k = line.indexOf(',', start);
		if (k < 0 || k > end) k = end;
		const s = line.slice(start, k);
		out[j++] = s === 'NULL' ? NaN : Number(s);
		start = k + 1;
	}
	return row;
}

/**
 * The run's samples back from the samples table (never from the file),
 * mapped and converted to SI with `mapping`. Streams COPY TO so a million
 * rows are not materialised as JS arrays.
 */
export async function readSamples(runId: number, width: number, mapping: ColumnMapping): Promise<{ columns: Map<string, Float64Array>; rowNumbers: Uint32Array; missing: { field: string; row: number }[] }> {
	const sequelize = getSequelize();
	const [{ n }] = await sequelize.query<{ n: string }>('SELECT count(*) AS n FROM samples WHERE run_id = :id', { replacements: { id: runId }, type: QueryTypes.SELECT });
	const count = Number(n);
	const mapped = mapping.columns.filter((c) => c.field !== null && c.unit !== null && UNITS[c.unit]);
	const columns = new Map<string, Float64Array>();
	for (const c of mapped) columns.set(c.field as string, new Float64Array(count));
	const rowNumbers = new Uint32Array(count);
	const missing: { field: string; row: number }[] = [];
	const conn = (await (sequelize.connectionManager as unknown as { getConnection(o: object): Promise<PoolClient> }).getConnection({ type: 'read' })) as PoolClient;
	try {
		const stream = conn.query(copyTo(`COPY (SELECT row_index, "values" FROM samples WHERE run_id = ${Number(runId)} ORDER BY row_index) TO STDOUT`));
		const vals = new Float64Array(width);
		let i = 0;
		let rest = '';
		for await (const chunk of stream as AsyncIterable<Buffer>) {
			const text = rest + chunk.toString('utf8');
			let a = 0;
			let b: number;
			while ((b = text.indexOf('\n', a)) >= 0) {
				const row = parseSampleLine(text.slice(a, b), width, vals);
				a = b + 1;
				if (i >= count) continue;
				rowNumbers[i] = row;
				for (const c of mapped) {
					const v = vals[c.index];
					if (Number.isNaN(v) && missing.length < 200) missing.push({ field: c.field as string, row });
					columns.get(c.field as string)![i] = UNITS[c.unit as string].toSI(v);
				}
				i++;
			}
			rest = text.slice(a);
		}
	} finally {
		(sequelize.connectionManager as unknown as { releaseConnection(c: PoolClient): void }).releaseConnection(conn);
	}
	return { columns, rowNumbers, missing };
}
