// One zod schema per input, shared by the editor's form action and the JSON API.
import { z } from 'zod';

const finite = (what: string) => z.number({ error: `${what} must be a number` }).refine(Number.isFinite, `${what} must be a finite number`);

export const StationSchema = z.object({
	eta: finite('eta'),
	chord: finite('chord'),
	twistDeg: finite('twistDeg').default(0),
	a0: finite('a0').default(2 * Math.PI),
	alphaZeroLiftDeg: finite('alphaZeroLiftDeg').default(0)
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
	refArea: positiveOrNull('refArea'),
	refSpan: positiveOrNull('refSpan'),
	refChord: positiveOrNull('refChord'),
	momentRef: z.object({ x: finite('momentRef.x'), y: finite('momentRef.y'), z: finite('momentRef.z') }).nullable().optional(),
	/** Estimated profile-drag coefficient CD0 (from section data or a wetted-area estimate), for ΔCD0. */
	estimatedCD0: z.union([z.number().refine((v) => Number.isFinite(v) && v >= 0, 'estimatedCD0 must be ≥ 0'), z.null()]).optional(),
	notes: z.string().max(4000).nullable().optional()
});
export type ConfigurationInput = z.infer<typeof ConfigurationInputSchema>;

export const DuplicateSchema = z.object({
	name: z.string().trim().min(1, 'name is required').max(200),
	notes: z.string().max(4000).nullable().optional()
});
