import { describe, expect, it } from 'vitest';
import {
	airspeeds,
	casFromImpactPressure,
	dynamicPressure,
	dynamicPressureFromMach,
	impactPressureFromCas,
	impactPressureFromMach,
	machFromImpactPressure,
	reynoldsNumber
} from '$lib/aero/airspeed';
import { standardAtmosphere } from '$lib/aero/atmosphere';

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('subsonic compressible pitot relation (Anderson, Fundamentals of Aerodynamics, ch. 8)', () => {
	it('qc/p = (1 + 0.2 M²)^3.5 − 1, hand-evaluated at M = 0.5: 1.05^3.5 − 1 = 0.186212', () => {
		// 1.05^3.5 = exp(3.5 ln 1.05) = exp(0.170761) = 1.186212 (hand calculation)
		expect(rel(impactPressureFromMach(0.5, 1), 0.186212)).toBeLessThan(1e-5);
	});
	it.each([0.05, 0.3, 0.6, 0.85, 0.99])('M = %f round-trips through qc', (M) => {
		const p = 40000;
		expect(machFromImpactPressure(impactPressureFromMach(M, p), p)).toBeCloseTo(M, 12);
	});
	it.each([0.03, 0.1, 0.2])('qc/q = 1 + M²/4 + M⁴/40 + … at M = %f (binomial expansion, Anderson ch. 8), 1e-6 relative', (M) => {
		const p = 101325;
		const q = 0.7 * p * M * M;
		expect(rel(impactPressureFromMach(M, p) / q, 1 + (M * M) / 4 + M ** 4 / 40)).toBeLessThan(1e-6);
	});
	it('CAS round-trips through impact pressure', () => {
		expect(casFromImpactPressure(impactPressureFromCas(120))).toBeCloseTo(120, 10);
	});
});

describe('airspeeds: CAS, EAS, TAS, Mach (Kimberlin, Flight Testing of Fixed-Wing Aircraft, airspeed chapter; definitions)', () => {
	it('at sea-level standard CAS = EAS = TAS (definition of CAS and EAS), 1e-9 relative', () => {
		const s = airspeeds(100, 'TAS', 101325, 288.15);
		expect(rel(s.cas, 100)).toBeLessThan(1e-9);
		expect(rel(s.eas, 100)).toBeLessThan(1e-9);
	});
	it('EAS = TAS·√σ and q = ½ρ0·EAS² = ½ρV² = 0.7·p·M² (identities; Kimberlin ch. 8)', () => {
		const atm = standardAtmosphere(6000);
		const s = airspeeds(150, 'CAS', atm.pressure, atm.temperature);
		expect(rel(s.eas, s.tas * Math.sqrt(atm.sigma))).toBeLessThan(1e-12);
		expect(rel(s.q, 0.5 * 1.225 * s.eas * s.eas)).toBeLessThan(1e-5);
		expect(rel(s.q, 0.7 * atm.pressure * s.mach * s.mach)).toBeLessThan(1e-9);
		// Above sea level at speed, EAS < CAS (compressibility correction is negative).
		expect(s.eas).toBeLessThan(s.cas);
	});
	it.each(['CAS', 'EAS', 'TAS', 'MACH'] as const)('every kind reproduces the same state from %s', (kind) => {
		const atm = standardAtmosphere(4000, { deltaT: 10 });
		const ref = airspeeds(0.45, 'MACH', atm.pressure, atm.temperature);
		const v = { CAS: ref.cas, EAS: ref.eas, TAS: ref.tas, MACH: ref.mach }[kind];
		const s = airspeeds(v, kind, atm.pressure, atm.temperature);
		expect(s.tas).toBeCloseTo(ref.tas, 9);
		expect(s.cas).toBeCloseTo(ref.cas, 9);
	});
	it('dynamic pressure and Reynolds number (definitions)', () => {
		expect(dynamicPressure(1.225, 50)).toBeCloseTo(1531.25, 10);
		expect(dynamicPressureFromMach(101325, 0.5)).toBeCloseTo(0.7 * 101325 * 0.25, 9);
		expect(reynoldsNumber(1.225, 50, 0.3, 1.7894e-5)).toBeCloseTo((1.225 * 50 * 0.3) / 1.7894e-5, 6);
	});
});

describe('airspeed: bad input', () => {
	it.each([
		[() => impactPressureFromMach(1.2, 101325), 'mach 1.2 ≥ 1'],
		[() => airspeeds(-1, 'CAS', 101325, 288.15), 'airspeeds: CAS must be ≥ 0 (got -1)'],
		[() => airspeeds(100, 'IAS' as never, 101325, 288.15), "unknown airspeed kind 'IAS'"],
		[() => airspeeds(500, 'TAS', 101325, 288.15), 'subsonic relations only'],
		[() => reynoldsNumber(1.2, 10, 0, 1e-5), 'reynoldsNumber: length must be > 0 (got 0)'],
		[() => dynamicPressure(NaN, 10), 'dynamicPressure: density must be a finite number (got NaN)']
	] as Array<[() => unknown, string]>)('%#', (fn, msg) => {
		expect(fn).toThrow(msg);
	});
});
