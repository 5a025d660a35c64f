/**
 * The delta quantities of a run (measured minus predicted), their units and
 * the tolerance bands a campaign may set for them in `campaigns.tolerances`
 * (JSONB, keyed by the `key` below; absolute values in the quantity's unit).
 *
 * Default bands are common practice, no source: they are the order of what a
 * low-speed test team usually accepts for a lifting-line comparison and are
 * meant to be replaced per campaign.
 */
export const DELTA_QUANTITIES = [
	{ key: 'clAlphaPct', label: 'ΔCLα', unit: '%', defaultTolerance: 5, description: 'Lift-curve slope over the linear range, measured minus predicted, in per cent of the prediction.' },
	{ key: 'alphaZeroLiftDeg', label: 'Δα_L0', unit: 'deg', defaultTolerance: 0.5, description: 'Zero-lift angle of the wing.' },
	{ key: 'clAtAlpha', label: 'ΔCL at α_ref', unit: '', defaultTolerance: 0.03, description: 'Lift coefficient at the chosen reference angle (from the linear fit).' },
	{ key: 'clMax', label: 'ΔCLmax', unit: '', defaultTolerance: 0.05, description: 'Maximum lift; needs a stall-capable (nonlinear) prediction.' },
	{ key: 'e', label: 'Δe', unit: '', defaultTolerance: 0.05, description: 'Span efficiency from the parabolic polar over the linear range.' },
	{ key: 'cd0Counts', label: 'ΔCD0', unit: 'counts', defaultTolerance: 10, description: 'Zero-lift drag of the parabolic polar, drag counts (1 count = 0.0001).' },
	{ key: 'cdiCounts', label: 'ΔCDi at CL_ref', unit: 'counts', defaultTolerance: 10, description: 'Induced drag at the chosen reference lift coefficient, drag counts.' },
	{ key: 'rmsCl', label: 'RMS ΔCL', unit: '', defaultTolerance: 0.02, description: 'Root-mean-square of measured minus predicted CL over the linear range.' }
] as const;

export type DeltaQuantity = (typeof DELTA_QUANTITIES)[number]['key'];
export const DELTA_KEYS: readonly DeltaQuantity[] = DELTA_QUANTITIES.map((q) => q.key);

export type ToleranceSet = Record<DeltaQuantity, number>;

/**
 * The campaign's bands with defaults filled in. Older generic keys are read
 * as fallbacks: `cl` for ΔCL at α_ref, `cd` (absolute ΔCD) for ΔCD0 in counts.
 */
export function resolveTolerances(stored: Record<string, unknown> | null | undefined): { tolerances: ToleranceSet; sources: Record<DeltaQuantity, 'campaign' | 'default'> } {
	const s = stored ?? {};
	const num = (v: unknown) => (typeof v === 'number' && Number.isFinite(v) && v >= 0 ? v : undefined);
	const tolerances = {} as ToleranceSet;
	const sources = {} as Record<DeltaQuantity, 'campaign' | 'default'>;
	for (const q of DELTA_QUANTITIES) {
		let v = num(s[q.key]);
		if (v === undefined && q.key === 'clAtAlpha') v = num(s.cl);
		if (v === undefined && q.key === 'cd0Counts' && num(s.cd) !== undefined) v = (num(s.cd) as number) * 1e4;
		tolerances[q.key] = v ?? q.defaultTolerance;
		sources[q.key] = v === undefined ? 'default' : 'campaign';
	}
	return { tolerances, sources };
}

/** Settings of the delta computation, stored with each prediction. */
export interface DeltaSettings {
	/** Reference angle for ΔCL, deg (default 4). */
	alphaRefDeg: number;
	/** Reference lift coefficient for ΔCDi (default 0.5). */
	clRef: number;
}

export const DEFAULT_DELTA_SETTINGS: DeltaSettings = { alphaRefDeg: 4, clRef: 0.5 };

/**
 * A delta's state for tables: not available (no value), out of tolerance
 * (significant and beyond the band), not significant (within the combined
 * uncertainty, whatever the band), or within tolerance.
 */
export type DeltaState = 'not_available' | 'out_of_tolerance' | 'not_significant' | 'within_tolerance';

export function deltaState(d: { value: number | null; significant: boolean | null; outOfTolerance: boolean | null }): DeltaState {
	if (d.value === null || d.significant === null) return 'not_available';
	if (d.significant && d.outOfTolerance) return 'out_of_tolerance';
	if (!d.significant) return 'not_significant';
	return 'within_tolerance';
}

/** The same rule in SQL, over a row source with value, significant, out_of_tolerance columns. */
export const DELTA_STATE_SQL = `CASE WHEN value IS NULL OR significant IS NULL THEN 'not_available'
  WHEN significant AND out_of_tolerance THEN 'out_of_tolerance'
  WHEN NOT significant THEN 'not_significant'
  ELSE 'within_tolerance' END`;
