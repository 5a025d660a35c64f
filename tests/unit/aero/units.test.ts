import { describe, expect, it } from 'vitest';
import { UNITS, convert, fromSI, parseUnit, siUnitOf, toSI, quantityOf } from '$lib/aero/units';

// Source of every factor below: NIST Special Publication 811 (2008 ed.),
// Guide for the Use of the International System of Units, Appendix B.8 and B.9.
// Exact definitions are compared to 1e-12 relative; NIST's rounded 7-digit
// entries to the precision printed (relative 1e-6).
const NIST: Array<[string, string, number, number]> = [
	// [unit, SI unit, factor, relative tolerance]
	['lbf', 'N', 4.4482216152605, 1e-12], // exact
	['kgf', 'N', 9.80665, 1e-12], // exact
	['ft', 'm', 0.3048, 1e-12], // exact
	['in', 'm', 0.0254, 1e-12], // exact
	['ft2', 'm2', 0.09290304, 1e-12], // exact
	['lb', 'kg', 0.45359237, 1e-12], // exact
	['kt', 'm/s', 1852 / 3600, 1e-12], // exact (international knot)
	['mph', 'm/s', 0.44704, 1e-12], // exact
	['ft/s', 'm/s', 0.3048, 1e-12], // exact
	['ft/min', 'm/s', 0.00508, 1e-12], // exact
	['km/h', 'm/s', 0.2777778, 1e-6],
	['psi', 'Pa', 6894.757, 1e-6],
	['psf', 'Pa', 47.88026, 1e-6],
	['inHg', 'Pa', 3386.389, 1e-6], // conventional, 32 °F
	['mbar', 'Pa', 100, 1e-12],
	['hPa', 'Pa', 100, 1e-12],
	['kPa', 'Pa', 1000, 1e-12],
	['slug', 'kg', 14.59390, 1e-6],
	['slug/ft3', 'kg/m3', 515.3788, 1e-6],
	['lbf·ft', 'N·m', 1.355818, 1e-6],
	['in·lbf', 'N·m', 0.1129848, 1e-6],
	['hp', 'W', 745.6999, 1e-6], // 550 ft·lbf/s
	['deg', 'rad', Math.PI / 180, 1e-12],
	['g0', 'm/s2', 9.80665, 1e-12], // standard acceleration of gravity, exact
	['ft/s2', 'm/s2', 0.3048, 1e-12],
	['min', 's', 60, 1e-12],
	['h', 's', 3600, 1e-12],
	['degR', 'K', 5 / 9, 1e-12]
];

describe('units: NIST SP 811 Appendix B factors', () => {
	it.each(NIST)('1 %s = %f %s', (unit, si, factor, tol) => {
		expect(siUnitOf(quantityOf(unit))).toBe(si);
		const got = convert(1, unit, si);
		expect(Math.abs(got - factor) / factor).toBeLessThan(tol);
	});
});

describe('units: temperatures are affine (NIST SP 811 App. B.9)', () => {
	it.each([
		// [value, from, to, expected]
		[0, 'degC', 'K', 273.15],
		[100, 'degC', 'degF', 212],
		[32, 'degF', 'degC', 0],
		[-40, 'degC', 'degF', -40],
		[518.67, 'degR', 'degF', 59],
		[288.15, 'K', 'degR', 518.67],
		[15, 'degC', 'degR', 518.67],
		[59, 'degF', 'K', 288.15]
	] as Array<[number, string, string, number]>)('%f %s = %f %s', (v, a, b, want) => {
		expect(convert(v, a, b)).toBeCloseTo(want, 10);
	});
});

describe('units: round trips through SI for every unit', () => {
	it.each(Object.keys(UNITS))('%s', (unit) => {
		for (const v of [-123.456, 0, 1, 98765.4321]) {
			const back = fromSI(toSI(v, unit), unit);
			expect(Math.abs(back - v)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(v)));
		}
	});
	it('every unit converts to its own SI unit and back', () => {
		for (const unit of Object.keys(UNITS)) {
			const si = siUnitOf(UNITS[unit].quantity);
			expect(convert(convert(2.5, unit, si), si, unit)).toBeCloseTo(2.5, 12);
		}
	});
});

describe('units: rate and velocity share a dimension', () => {
	it('1000 ft/min = 5.08 m/s = 9.8747 kt (NIST SP 811 exact factors)', () => {
		expect(convert(1000, 'ft/min', 'm/s')).toBeCloseTo(5.08, 12);
		expect(convert(1000, 'ft/min', 'kt')).toBeCloseTo(5.08 / (1852 / 3600), 10);
	});
});

describe('units: errors name both units', () => {
	it('different quantities', () => {
		expect(() => convert(1, 'lbf', 'm')).toThrow(
			"cannot convert from 'lbf' (force) to 'm' (length): quantities differ"
		);
	});
	it('unknown unit', () => {
		expect(() => convert(1, 'furlong', 'm')).toThrow(
			"unknown unit 'furlong' (converting from 'furlong' to 'm')"
		);
		expect(() => convert(1, 'm', 'parsec')).toThrow(/unknown unit 'parsec'/);
		expect(() => toSI(1, 'bogus')).toThrow("unknown unit 'bogus'");
	});
});

describe('units: parseUnit reads spreadsheet spellings', () => {
	it.each([
		['[deg]', 'deg'],
		['Alpha [deg]', 'deg'],
		['Lift (lbf)', 'lbf'],
		['(lbf)', 'lbf'],
		['psf', 'psf'],
		['°', 'deg'],
		['°C', 'degC'],
		['OAT (°F)', 'degF'],
		['ft/s', 'ft/s'],
		['kts', 'kt'],
		['knots', 'kt'],
		['KCAS', 'kt'],
		['N m', 'N·m'],
		['Nm', 'N·m'],
		['N.m', 'N·m'],
		['N·m', 'N·m'],
		['lb', 'lb'],
		['lbs', 'lb'],
		['in-lb', 'in·lbf'],
		['ft-lbf', 'lbf·ft'],
		['m/s²', 'm/s2'],
		['m/s^2', 'm/s2'],
		['ft^2', 'ft2'],
		['kg/m³', 'kg/m3'],
		['Pa', 'Pa'],
		['kPa', 'kPa'],
		['CL [-]', '1'],
		['hp', 'hp'],
		['fpm', 'ft/min'],
		['sec', 's']
	])('%s → %s', (text, id) => {
		expect(parseUnit(text)).toBe(id);
	});
	it('unknown spellings give null', () => {
		expect(parseUnit('furlongs per fortnight')).toBeNull();
		expect(parseUnit('')).toBeNull();
		expect(parseUnit('Alpha')).toBeNull();
	});
	it('expected quantity resolves lb to lbf and g to g0', () => {
		expect(parseUnit('lb', 'force')).toBe('lbf');
		expect(parseUnit('Drag (lbs)', 'force')).toBe('lbf');
		expect(parseUnit('g', 'acceleration')).toBe('g0');
		expect(parseUnit('g')).toBe('g');
	});
});
