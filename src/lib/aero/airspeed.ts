/**
 * Airspeeds: calibrated (CAS), equivalent (EAS), true (TAS) airspeed and Mach
 * number by the subsonic compressible pitot relations (isentropic flow,
 * γ = 1.4), dynamic pressure and Reynolds number.
 *
 * References: Anderson, *Fundamentals of Aerodynamics*, ch. 8 (pitot tube in
 * subsonic compressible flow); Kimberlin, *Flight Testing of Fixed-Wing
 * Aircraft* (AIAA 2003), ch. 2 (airspeed calibration relations).
 */
import { A0, GAMMA, P0, R_AIR, RHO0, speedOfSound } from './atmosphere';

/** Above this Mach number the subsonic pitot relation no longer holds. */
export const SUBSONIC_PITOT_MACH_LIMIT = 1;

export type AirspeedKind = 'CAS' | 'EAS' | 'TAS' | 'MACH';

function check(name: string, v: number, positive = false): void {
	if (typeof v !== 'number' || !Number.isFinite(v)) throw new Error(`${name} must be a finite number (got ${String(v)})`);
	if (positive && v <= 0) throw new Error(`${name} must be > 0 (got ${v})`);
}

/** Impact pressure qc = pt − p for Mach M at static pressure p (subsonic isentropic). */
export function impactPressureFromMach(mach: number, pressurePa: number): number {
	check('impactPressure: mach', mach);
	check('impactPressure: pressure', pressurePa, true);
	if (mach < 0) throw new Error(`impactPressure: mach must be ≥ 0 (got ${mach})`);
	if (mach >= SUBSONIC_PITOT_MACH_LIMIT) {
		throw new Error(`impactPressure: mach ${mach} ≥ 1; the subsonic pitot relation does not apply (Rayleigh pitot formula not implemented)`);
	}
	return pressurePa * (Math.pow(1 + ((GAMMA - 1) / 2) * mach * mach, GAMMA / (GAMMA - 1)) - 1);
}

/** Mach number from impact pressure qc and static pressure p (subsonic isentropic). */
export function machFromImpactPressure(qcPa: number, pressurePa: number): number {
	check('mach: impact pressure', qcPa);
	check('mach: pressure', pressurePa, true);
	if (qcPa < 0) throw new Error(`mach: impact pressure must be ≥ 0 (got ${qcPa})`);
	const M = Math.sqrt((2 / (GAMMA - 1)) * (Math.pow(qcPa / pressurePa + 1, (GAMMA - 1) / GAMMA) - 1));
	if (M >= SUBSONIC_PITOT_MACH_LIMIT) {
		throw new Error(`mach: impact pressure ${qcPa} Pa at p = ${pressurePa} Pa gives M ≥ 1; the subsonic pitot relation does not apply`);
	}
	return M;
}

/** Calibrated airspeed (m/s) from impact pressure: the sea-level standard pitot relation. */
export function casFromImpactPressure(qcPa: number): number {
	return A0 * machFromImpactPressure(qcPa, P0);
}

/** Impact pressure (Pa) from calibrated airspeed (m/s). */
export function impactPressureFromCas(casMs: number): number {
	check('impactPressure: CAS', casMs);
	if (casMs < 0) throw new Error(`impactPressure: CAS must be ≥ 0 (got ${casMs})`);
	return impactPressureFromMach(casMs / A0, P0);
}

/** Dynamic pressure q = ½ρV², Pa. */
export function dynamicPressure(densityKgM3: number, velocityMs: number): number {
	check('dynamicPressure: density', densityKgM3, true);
	check('dynamicPressure: velocity', velocityMs);
	return 0.5 * densityKgM3 * velocityMs * velocityMs;
}

/** Dynamic pressure from Mach and static pressure: q = (γ/2)·p·M² = 0.7·p·M². */
export function dynamicPressureFromMach(pressurePa: number, mach: number): number {
	check('dynamicPressure: pressure', pressurePa, true);
	check('dynamicPressure: mach', mach);
	return 0.5 * GAMMA * pressurePa * mach * mach;
}

/** Reynolds number Re = ρVL/μ on a reference length (e.g. the mean aerodynamic chord). */
export function reynoldsNumber(densityKgM3: number, velocityMs: number, lengthM: number, viscosityPaS: number): number {
	check('reynoldsNumber: density', densityKgM3, true);
	check('reynoldsNumber: velocity', velocityMs);
	check('reynoldsNumber: length', lengthM, true);
	check('reynoldsNumber: viscosity', viscosityPaS, true);
	return (densityKgM3 * velocityMs * lengthM) / viscosityPaS;
}

export interface AirspeedSet {
	cas: number;
	eas: number;
	tas: number;
	mach: number;
	/** Dynamic pressure ½ρV², Pa. */
	q: number;
	/** Impact pressure pt − p, Pa. */
	qc: number;
	/** Density from p and T, kg/m³. */
	density: number;
	speedOfSound: number;
}

/**
 * All airspeeds from one measured speed of the given kind at static pressure p
 * (Pa) and static temperature T (K). CAS via impact pressure; EAS = TAS·√σ;
 * Mach from TAS and a = √(γRT). Speeds in m/s.
 */
export function airspeeds(value: number, kind: AirspeedKind, pressurePa: number, temperatureK: number): AirspeedSet {
	check(`airspeeds: ${kind}`, value);
	check('airspeeds: pressure', pressurePa, true);
	check('airspeeds: temperature', temperatureK, true);
	if (value < 0) throw new Error(`airspeeds: ${kind} must be ≥ 0 (got ${value})`);
	const a = speedOfSound(temperatureK);
	const rho = pressurePa / (R_AIR * temperatureK);
	const sqrtSigma = Math.sqrt(rho / RHO0);
	let mach: number;
	switch (kind) {
		case 'CAS':
			mach = machFromImpactPressure(impactPressureFromCas(value), pressurePa);
			break;
		case 'EAS':
			mach = value / sqrtSigma / a;
			break;
		case 'TAS':
			mach = value / a;
			break;
		case 'MACH':
			mach = value;
			break;
		default:
			throw new Error(`airspeeds: unknown airspeed kind '${String(kind)}' (expected CAS, EAS, TAS or MACH)`);
	}
	if (mach >= SUBSONIC_PITOT_MACH_LIMIT) {
		throw new Error(`airspeeds: ${kind} ${value} gives M = ${mach.toFixed(3)} ≥ 1; subsonic relations only`);
	}
	const tas = mach * a;
	const qc = impactPressureFromMach(mach, pressurePa);
	return {
		cas: casFromImpactPressure(qc),
		eas: tas * sqrtSigma,
		tas,
		mach,
		q: 0.5 * rho * tas * tas,
		qc,
		density: rho,
		speedOfSound: a
	};
}
