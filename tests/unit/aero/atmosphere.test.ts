import { describe, expect, it } from 'vitest';
import {
	standardAtmosphere,
	sutherlandViscosity,
	pressureAltitude,
	densityFromPressureTemperature,
	atmosphereFromPressureAltitude,
	atmosphereFromPressureTemperature,
	geopotentialFromGeometric,
	geometricFromGeopotential
} from '$lib/aero/atmosphere';

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('standard atmosphere rows (ISO 2533:1975 / U.S. Standard Atmosphere 1976, geopotential altitude)', () => {
	// Rows as listed in aero-checks.md; tolerance 1e-5 relative (table values
	// are printed to 6 significant figures).
	it.each([
		// H (m), T (K), p (Pa), rho (kg/m3), a (m/s)
		[0, 288.15, 101325, 1.225, 340.294],
		[11000, 216.65, 22632.06, 0.363918, 295.07],
		[20000, 216.65, 5474.89, 0.0880349, 295.07]
	])('H = %i m', (H, T, p, rho, a) => {
		const s = standardAtmosphere(H);
		expect(rel(s.temperature, T)).toBeLessThan(1e-9);
		expect(rel(s.pressure, p)).toBeLessThan(1e-5);
		expect(rel(s.density, rho)).toBeLessThan(1e-5);
		expect(rel(s.speedOfSound, a)).toBeLessThan(1e-5);
	});
	// U.S. Standard Atmosphere 1976 tables, from memory; tolerance 1e-4 relative.
	it.each([
		[5000, 255.65, 54019.9, 0.736116],
		[32000, 228.65, 868.02, 0.013225]
	])('H = %i m (USSA 1976 table, from memory)', (H, T, p, rho) => {
		const s = standardAtmosphere(H);
		expect(rel(s.temperature, T)).toBeLessThan(1e-9);
		expect(rel(s.pressure, p)).toBeLessThan(1e-4);
		expect(rel(s.density, rho)).toBeLessThan(1e-4);
	});
	it('ISA+ΔT keeps standard pressure and lowers density by T/(T+ΔT) (definition of ISA+ΔT)', () => {
		const std = standardAtmosphere(3000);
		const hot = standardAtmosphere(3000, { deltaT: 20 });
		expect(hot.pressure).toBe(std.pressure);
		expect(hot.temperature).toBeCloseTo(std.temperature + 20, 12);
		expect(rel(hot.density, (std.density * std.temperature) / (std.temperature + 20))).toBeLessThan(1e-12);
	});
	it('geometric altitude option uses H = r0·z/(r0+z), r0 = 6 356 766 m (USSA 1976)', () => {
		const H = geopotentialFromGeometric(11000);
		expect(H).toBeCloseTo((6356766 * 11000) / (6356766 + 11000), 9);
		expect(geometricFromGeopotential(H)).toBeCloseTo(11000, 9);
		expect(standardAtmosphere(11000, { geometric: true }).geopotentialAltitude).toBeCloseTo(H, 9);
	});
});

describe("Sutherland's law (USSA 1976: β = 1.458e-6, S = 110.4 K)", () => {
	it('μ(288.15 K) = 1.7894e-5 Pa·s, tolerance 1e-4 relative', () => {
		expect(rel(sutherlandViscosity(288.15), 1.7894e-5)).toBeLessThan(1e-4);
	});
	it('kinematic viscosity at sea level 1.4607e-5 m²/s (USSA 1976 table, from memory), 1e-4 relative', () => {
		expect(rel(standardAtmosphere(0).kinematicViscosity, 1.4607e-5)).toBeLessThan(1e-4);
	});
	it('μ(216.65 K) = 1.4216e-5 Pa·s (USSA 1976 table at 11 km, from memory), 1e-4 relative', () => {
		expect(rel(sutherlandViscosity(216.65), 1.4216e-5)).toBeLessThan(1e-4);
	});
});

describe('pressure altitude and measured p, T', () => {
	it.each([-1500, 0, 2500, 11000, 15000, 25000, 31000])('pressureAltitude inverts the profile at %i m', (H) => {
		expect(pressureAltitude(standardAtmosphere(H).pressure)).toBeCloseTo(H, 6);
	});
	it('density from p and T is p/(RT), R = 287.053 J/(kg·K)', () => {
		expect(densityFromPressureTemperature(95000, 300)).toBeCloseTo(95000 / (287.053 * 300), 12);
	});
	it('flight-test state: standard pressure at pressure altitude, measured OAT', () => {
		const s = atmosphereFromPressureAltitude(3000, 280);
		expect(s.pressure).toBe(standardAtmosphere(3000).pressure);
		expect(s.density).toBeCloseTo(s.pressure / (287.053 * 280), 12);
	});
	it('tunnel state above sea-level pressure reports altitude NaN rather than failing', () => {
		const s = atmosphereFromPressureTemperature(140000, 295);
		expect(Number.isNaN(s.geopotentialAltitude)).toBe(true);
		expect(s.density).toBeCloseTo(140000 / (287.053 * 295), 12);
	});
});

describe('atmosphere: bad input', () => {
	it.each([
		[() => standardAtmosphere(40000), 'standardAtmosphere: geopotential altitude must be within [-2000, 32000] m (got 40000)'],
		[() => standardAtmosphere(NaN), 'standardAtmosphere: altitude must be a finite number (got NaN)'],
		[() => standardAtmosphere(0, { deltaT: -300 }), 'gives T ≤ 0 K'],
		[() => sutherlandViscosity(-5), 'sutherlandViscosity: temperature must be > 0 K (got -5)'],
		[() => densityFromPressureTemperature(0, 288), 'density: pressure must be > 0 Pa (got 0)'],
		[() => pressureAltitude(1), 'outside the table']
	] as Array<[() => unknown, string]>)('%#', (fn, msg) => {
		expect(fn).toThrow(msg);
	});
});
