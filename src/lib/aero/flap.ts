/**
 * Plain trailing-edge flap effectiveness by thin-airfoil theory (Glauert):
 * a flap of chord ratio E = cf/c deflected by δf (trailing edge down
 * positive) shifts the section zero-lift angle by
 *
 *   Δα_L0 = −τ·δf,  τ = (θf + sin θf)/π,  cos θf = 1 − 2E,
 *
 * which is the same as τ = 1 − (θh − sin θh)/π with θh = π − θf the
 * Glauert angle of the hinge line (x_h/c = (1 − cos θh)/2). Source: Glauert,
 * *The Elements of Aerofoil and Airscrew Theory*; Anderson, *Fundamentals of
 * Aerodynamics*, ch. 4, thin airfoil theory, the flapped airfoil (section
 * and equation number from memory).
 *
 * Thin-airfoil theory overstates the effect of large deflections (the flow
 * separates over the flap); `largeDeflectionFactor` is an optional, rough
 * reduction for that: common practice, no source.
 *
 * Predictions are preliminary engineering estimates; flight-test and
 * airworthiness decisions follow the organisation's approved procedures,
 * local regulations and licensed practice.
 */

export interface FlapEffectivenessOptions {
	/**
	 * Multiply τ by a correction factor in (0, 1]: a number, or 'large-deflection'
	 * for `largeDeflectionFactor(δf)`. Default: none (pure thin-airfoil theory).
	 */
	correction?: number | 'large-deflection';
}

export interface FlapEffectiveness {
	/** Flap effectiveness dα_L0/dδf (magnitude), thin-airfoil value times the correction. */
	tau: number;
	/** The thin-airfoil value alone. */
	tauThinAirfoil: number;
	/** Correction factor applied (1 when none). */
	correction: number;
	/** Glauert angle θf, rad, with cos θf = 1 − 2·cf/c. */
	thetaF: number;
	/** Change of section zero-lift angle, deg (negative for a flap deflected down). */
	deltaAlphaZeroLiftDeg: number;
}

/** Where the rough large-deflection reduction starts and ends, deg, and its value at the end (common practice, no source). */
export const LARGE_DEFLECTION_START_DEG = 10;
export const LARGE_DEFLECTION_END_DEG = 60;
export const LARGE_DEFLECTION_END_FACTOR = 0.5;

/** Thin-airfoil flap effectiveness τ for a chord ratio cf/c in [0, 1]. */
export function flapEffectivenessTau(chordRatio: number): number {
	if (typeof chordRatio !== 'number' || !Number.isFinite(chordRatio)) throw new Error(`flap: chord ratio cf/c must be a finite number (got ${String(chordRatio)})`);
	if (chordRatio < 0 || chordRatio > 1) throw new Error(`flap: chord ratio cf/c must be within [0, 1] (got ${chordRatio})`);
	const thetaF = Math.acos(1 - 2 * chordRatio);
	return (thetaF + Math.sin(thetaF)) / Math.PI;
}

/**
 * A rough reduction of flap effectiveness for large deflections: 1 up to
 * 10°, falling linearly to 0.5 at 60°, held beyond (the shape of the usual
 * empirical charts, from memory; common practice, no source).
 */
export function largeDeflectionFactor(deflectionDeg: number): number {
	if (typeof deflectionDeg !== 'number' || !Number.isFinite(deflectionDeg)) throw new Error(`flap: deflection must be a finite number (got ${String(deflectionDeg)})`);
	const d = Math.abs(deflectionDeg);
	if (d <= LARGE_DEFLECTION_START_DEG) return 1;
	const t = Math.min(1, (d - LARGE_DEFLECTION_START_DEG) / (LARGE_DEFLECTION_END_DEG - LARGE_DEFLECTION_START_DEG));
	return 1 - t * (1 - LARGE_DEFLECTION_END_FACTOR);
}

/** Δα_L0 of a plain flap of chord ratio cf/c deflected δf degrees (down positive). */
export function flapEffectiveness(chordRatio: number, deflectionDeg: number, options: FlapEffectivenessOptions = {}): FlapEffectiveness {
	const tauThinAirfoil = flapEffectivenessTau(chordRatio);
	if (typeof deflectionDeg !== 'number' || !Number.isFinite(deflectionDeg)) throw new Error(`flap: deflection must be a finite number (got ${String(deflectionDeg)})`);
	if (Math.abs(deflectionDeg) > 90) throw new Error(`flap: deflection must be within ±90° (got ${deflectionDeg})`);
	let correction = 1;
	if (options.correction === 'large-deflection') correction = largeDeflectionFactor(deflectionDeg);
	else if (options.correction !== undefined) {
		const c = options.correction;
		if (typeof c !== 'number' || !Number.isFinite(c) || c <= 0 || c > 1) throw new Error(`flap: correction must be a number in (0, 1] or 'large-deflection' (got ${String(c)})`);
		correction = c;
	}
	const tau = tauThinAirfoil * correction;
	// −τ·δ, written so that a zero deflection gives +0 rather than −0.
	const deltaAlphaZeroLiftDeg = deflectionDeg === 0 ? 0 : -tau * deflectionDeg;
	return { tau, tauThinAirfoil, correction, thetaF: Math.acos(1 - 2 * chordRatio), deltaAlphaZeroLiftDeg };
}
