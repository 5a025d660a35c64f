// One zod schema per input, shared by the editor's form action and the JSON API.
import { z } from 'zod';

const finite = (what: string) => z.number({ error: `${what} must be a number` }).refine(Number.isFinite, `${what} must be a finite number`);

/** Most points one section table may have (a pasted table is rarely longer than 200 rows). */
export const MAX_TABLE_POINTS = 400;

/**
 * A section cl(α) table (and optional cd(α)): α in degrees, strictly
 * increasing, at least 2 points. Used by the nonlinear lifting line in place
 * of the station's a₀ and α_L0.
 */
export const SectionTableDataSchema = z
	.object({
		alphaDeg: z.array(finite('alphaDeg')).min(2, 'a section table needs at least 2 points').max(MAX_TABLE_POINTS, `a section table has at most ${MAX_TABLE_POINTS} points`),
		cl: z.array(finite('cl')).max(MAX_TABLE_POINTS),
		cd: z.array(finite('cd')).max(MAX_TABLE_POINTS).optional(),
		/** Where the table comes from (section test, code, handbook), free text. */
		source: z.string().trim().max(500).optional()
	})
	.superRefine((t, ctx) => {
		if (t.cl.length !== t.alphaDeg.length) ctx.addIssue({ code: 'custom', path: ['cl'], message: `cl has ${t.cl.length} values but alphaDeg has ${t.alphaDeg.length}` });
		if (t.cd && t.cd.length !== t.alphaDeg.length) ctx.addIssue({ code: 'custom', path: ['cd'], message: `cd has ${t.cd.length} values but alphaDeg has ${t.alphaDeg.length}` });
		for (let i = 1; i < t.alphaDeg.length; i++) {
			if (!(t.alphaDeg[i] > t.alphaDeg[i - 1])) {
				ctx.addIssue({ code: 'custom', path: ['alphaDeg', i], message: `alphaDeg must increase (row ${i}: ${t.alphaDeg[i]} after ${t.alphaDeg[i - 1]})` });
				break;
			}
		}
	});
export type SectionTableData = z.infer<typeof SectionTableDataSchema>;

/** A named table that several stations may share. */
export const NamedSectionTableSchema = z.intersection(z.object({ name: z.string().trim().min(1, 'section table name is required').max(120) }), SectionTableDataSchema);
export type NamedSectionTable = z.infer<typeof NamedSectionTableSchema>;

export const StationSchema = z.object({
	eta: finite('eta'),
	chord: finite('chord'),
	twistDeg: finite('twistDeg').default(0),
	a0: finite('a0').default(2 * Math.PI),
	alphaZeroLiftDeg: finite('alphaZeroLiftDeg').default(0),
	/** The station's section cl(α): the name of a shared table in `sectionTables`, or a table of its own. */
	sectionTable: z.union([z.string().trim().min(1).max(120), SectionTableDataSchema]).optional()
});

export const SegmentSchema = z.object({
	name: z.string().trim().min(1, 'segment name is required').max(120),
	kind: z.enum(['flap', 'aileron', 'other']).default('flap'),
	etaStart: finite('etaStart'),
	etaEnd: finite('etaEnd'),
	deflectionDeg: finite('deflectionDeg').default(0),
	/** Change of section zero-lift angle over the segment, deg; the solver uses this value. */
	deltaAlphaZeroLiftDeg: finite('deltaAlphaZeroLiftDeg').optional(),
	chordFraction: finite('chordFraction').optional(),
	side: z.enum(['both', 'left', 'right']).default('both')
});

const positiveOrNull = (what: string) =>
	z.union([z.number().refine((v) => Number.isFinite(v) && v > 0, `${what} must be > 0`), z.null()]).optional();

export const ConfigurationInputSchema = z.object({
	name: z.string().trim().min(1, 'name is required').max(200),
	campaignId: z.number().int().positive().nullable().optional(),
	span: z.number().refine((v) => Number.isFinite(v) && v > 0, 'span must be > 0'),
	stations: z.array(StationSchema).min(2, 'at least two stations (root and tip) are needed').max(200),
	segments: z.array(SegmentSchema).max(20).default([]),
	/** Section tables shared by name between stations. */
	sectionTables: z.array(NamedSectionTableSchema).max(50).default([]),
	refArea: positiveOrNull('refArea'),
	refSpan: positiveOrNull('refSpan'),
	refChord: positiveOrNull('refChord'),
	momentRef: z.object({ x: finite('momentRef.x'), y: finite('momentRef.y'), z: finite('momentRef.z') }).nullable().optional(),
	/** Estimated profile-drag coefficient CD0 (from section data or a wetted-area estimate), for ΔCD0. */
	estimatedCD0: z.union([z.number().refine((v) => Number.isFinite(v) && v >= 0, 'estimatedCD0 must be ≥ 0'), z.null()]).optional(),
	notes: z.string().max(4000).nullable().optional()
}).superRefine((c, ctx) => {
	const names = new Set<string>();
	c.sectionTables.forEach((t, i) => {
		if (names.has(t.name)) ctx.addIssue({ code: 'custom', path: ['sectionTables', i, 'name'], message: `two section tables are named “${t.name}”` });
		names.add(t.name);
	});
	c.stations.forEach((s, i) => {
		if (typeof s.sectionTable === 'string' && !names.has(s.sectionTable)) {
			ctx.addIssue({ code: 'custom', path: ['stations', i, 'sectionTable'], message: `there is no section table named “${s.sectionTable}”` });
		}
	});
	c.segments.forEach((g, i) => {
		if (g.chordFraction !== undefined && !(g.chordFraction > 0 && g.chordFraction <= 1)) {
			ctx.addIssue({ code: 'custom', path: ['segments', i, 'chordFraction'], message: 'chordFraction (cf/c) must be within (0, 1]' });
		}
	});
});
export type ConfigurationInput = z.infer<typeof ConfigurationInputSchema>;

export const DuplicateSchema = z.object({
	name: z.string().trim().min(1, 'name is required').max(200),
	notes: z.string().max(4000).nullable().optional()
});
