/**
 * One zod schema per input of the runs API; the page engineer's form actions
 * parse the same schemas.
 */
import { z } from 'zod';

const id = z.coerce.number().int().positive();
const optionalId = z.preprocess((v) => (v === '' || v === null ? undefined : v), id.optional());
const finite = z.number().finite();

export const mappingSchema = z.object({
	version: z.literal(1),
	kind: z.enum(['tunnel', 'flight']).optional(),
	columns: z
		.array(
			z.object({
				index: z.number().int().min(0),
				header: z.string().max(500),
				field: z.string().max(64).nullable(),
				unit: z.string().max(32).nullable(),
				confidence: z.number().optional()
			})
		)
		.max(500)
});
export type MappingInput = z.infer<typeof mappingSchema>;

/** "12,57-60" → [12, 57, 58, 59, 60] (1-based file lines / sheet rows). */
export function parseRowList(text: string): number[] | null {
	const out: number[] = [];
	for (const part of text.split(',').map((s) => s.trim()).filter(Boolean)) {
		const m = /^(\d+)(?:\s*-\s*(\d+))?$/.exec(part);
		if (!m) return null;
		const a = Number(m[1]);
		const b = m[2] ? Number(m[2]) : a;
		if (a < 1 || b < a || b - a > 1_000_000) return null;
		for (let i = a; i <= b; i++) out.push(i);
	}
	return out;
}

const rowList = z
	.string()
	.max(10_000)
	.optional()
	.transform((s, ctx) => {
		if (!s) return [];
		const list = parseRowList(s);
		if (!list) {
			ctx.addIssue({ code: 'custom', message: "rows to exclude are numbers or ranges separated by commas, e.g. '12,57-60'" });
			return z.NEVER;
		}
		return list;
	});

const bool = z.preprocess((v) => (v === 'true' || v === '1' ? true : v === 'false' || v === '0' || v === '' ? false : v), z.boolean().optional());

/** Query of POST /campaigns/{id}/runs. */
export const importQuerySchema = z.object({
	name: z.string().trim().min(1, 'give the file name (?name=)').max(255),
	kind: z.enum(['tunnel', 'flight']).optional(),
	runNumber: z.string().trim().min(1).max(64).optional(),
	configurationId: optionalId,
	tareRunId: optionalId,
	repeatOfRunId: optionalId,
	isTare: bool,
	sheet: z.string().max(200).optional(),
	profile: z.string().max(200).optional(),
	exclude: rowList
});
export type ImportQuery = z.infer<typeof importQuerySchema>;

/** Query of POST /campaigns/{id}/runs/preview. */
export const previewQuerySchema = z.object({
	name: z.string().trim().min(1).max(255),
	kind: z.enum(['tunnel', 'flight']).optional(),
	sheet: z.string().max(200).optional(),
	profile: z.string().max(200).optional()
});

export const listRunsQuerySchema = z.object({
	state: z.enum(['imported', 'reduced', 'reviewed', 'accepted', 'returned']).optional(),
	kind: z.enum(['tunnel', 'flight']).optional(),
	limit: z.coerce.number().int().min(1).max(500).default(50),
	offset: z.coerce.number().int().min(0).default(0)
});

export const pointsQuerySchema = z.object({ version: z.coerce.number().int().min(1).optional() });

/** Settings of a reduction; every field optional, defaults from the run, facility and configuration. */
export const reductionSettingsSchema = z.object({
	mapping: mappingSchema.optional(),
	tareRunId: z.number().int().positive().nullable().optional(),
	corrections: z
		.object({
			enabled: z.boolean().optional(),
			jet: z.enum(['closed', 'open']).optional(),
			testSectionArea: finite.positive().optional(),
			delta: finite.min(0).optional(),
			tau2: finite.min(0).optional(),
			solidBlockageEpsilon: finite.min(0).optional(),
			k1tau1: finite.min(0).optional(),
			modelVolume: finite.min(0).optional(),
			wakeMethod: z.enum(['thom', 'maskell']).optional(),
			maskellCD0: finite.min(0).optional(),
			oswald: finite.positive().optional()
		})
		.optional(),
	reference: z
		.object({
			area: finite.positive().optional(),
			span: finite.positive().optional(),
			chord: finite.positive().optional(),
			momentRef: z.object({ x: finite, y: finite, z: finite }).optional()
		})
		.optional(),
	/** Balance centre relative to the moment reference, body axes, m. */
	balanceOffset: z.object({ dx: finite, dy: finite.optional(), dz: finite.optional() }).optional(),
	/** Point numbers (idx) left out of fits; the points stay stored, flagged excluded. */
	excludedPoints: z.array(z.number().int().min(1)).max(100_000).optional(),
	segments: z
		.object({
			minDuration: finite.min(0).optional(),
			bands: z.record(z.string().max(64), finite.min(0)).optional()
		})
		.optional(),
	thrustIncidenceDeg: finite.optional(),
	/**
	 * Standard (1σ) uncertainties overriding the defaults (src/lib/server/runs/fits.ts
	 * DEFAULT_UNCERTAINTY) and the facility's calibration sheet: absolute balance
	 * components in N and N·m, or fractions (of the run's largest load, of q, of S).
	 */
	uncertainty: z
		.object({
			normal: finite.min(0).optional(),
			axial: finite.min(0).optional(),
			pitching: finite.min(0).optional(),
			balanceFractionOfMax: finite.min(0).optional(),
			qFraction: finite.min(0).optional(),
			areaFraction: finite.min(0).optional(),
			alphaDeg: finite.min(0).optional(),
			CL: finite.min(0).optional(),
			CD: finite.min(0).optional(),
			weightFraction: finite.min(0).optional(),
			loadFactor: finite.min(0).optional(),
			flightQFraction: finite.min(0).optional(),
			thrustFraction: finite.min(0).optional()
		})
		.strict()
		.optional(),
	note: z.string().max(2000).optional()
});
export type ReductionSettingsInput = z.infer<typeof reductionSettingsSchema>;

export const reduceBodySchema = z.object({ settings: reductionSettingsSchema.default({}) });

export const stateBodySchema = z.object({
	to: z.enum(['reduced', 'reviewed', 'accepted', 'returned']),
	note: z.string().trim().max(2000).optional()
});

export const mappingProfileBodySchema = z.object({
	name: z.string().trim().min(1).max(120),
	mapping: mappingSchema
});

/** Flatten zod issues into the API's detail list. */
export function zodDetails(error: z.ZodError): { field: string; message: string }[] {
	return error.issues.map((i) => ({ field: i.path.join('.') || '(body)', message: i.message }));
}
