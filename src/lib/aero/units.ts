/**
 * Units of measure for imports and display: SI and US customary.
 *
 * Conversion factors are the exact or recommended values of NIST Special
 * Publication 811 (2008 edition), *Guide for the Use of the International
 * System of Units*, Appendix B.8/B.9. Temperatures are affine and are
 * converted through kelvin, never by a bare factor.
 *
 * No units package is used: the well-known ones do not carry the spreadsheet
 * spellings our imports meet ("in-lb", "kts", "[deg]"), and the table below is
 * small enough to test in full.
 */

export type Quantity =
	| 'force'
	| 'moment'
	| 'pressure'
	| 'length'
	| 'area'
	| 'volume'
	| 'velocity'
	| 'mass'
	| 'temperature'
	| 'angle'
	| 'angularRate'
	| 'density'
	| 'time'
	| 'dimensionless'
	| 'acceleration'
	| 'power'
	| 'rate';

export interface UnitDef {
	quantity: Quantity;
	label: string;
	toSI: (v: number) => number;
	fromSI: (v: number) => number;
}

// Exact definitions (NIST SP 811, App. B): the international foot and pound.
const FT = 0.3048;
const IN = 0.0254;
const LB = 0.45359237;
const G0 = 9.80665;
/** 1 lbf = 0.45359237 kg × 9.80665 m/s² = 4.4482216152605 N (exact). */
const LBF = LB * G0;
/** Conventional inch of mercury (NIST SP 811 App. B: 3.386 389 E+03 Pa). */
const INHG = 3386.389;
/** Mechanical horsepower, 550 ft·lbf/s (NIST SP 811 App. B: 7.456 999 E+02 W). */
const HP = 550 * FT * LBF;
/** Slug = 1 lbf·s²/ft. */
const SLUG = LBF / FT;

function linear(quantity: Quantity, label: string, factor: number): UnitDef {
	return { quantity, label, toSI: (v) => v * factor, fromSI: (v) => v / factor };
}

function affine(quantity: Quantity, label: string, factor: number, offset: number): UnitDef {
	// SI = (v + offset) · factor
	return { quantity, label, toSI: (v) => (v + offset) * factor, fromSI: (v) => v / factor - offset };
}

/** Unit table keyed by unit id. SI unit of each quantity has factor 1. */
export const UNITS: Record<string, UnitDef> = {
	// force
	N: linear('force', 'N', 1),
	kN: linear('force', 'kN', 1000),
	lbf: linear('force', 'lbf', LBF),
	kgf: linear('force', 'kgf', G0),
	// moment
	'N·m': linear('moment', 'N·m', 1),
	'N*m': linear('moment', 'N·m', 1),
	'lbf·ft': linear('moment', 'lbf·ft', LBF * FT),
	'in·lbf': linear('moment', 'in·lbf', LBF * IN),
	// pressure
	Pa: linear('pressure', 'Pa', 1),
	kPa: linear('pressure', 'kPa', 1000),
	hPa: linear('pressure', 'hPa', 100),
	mbar: linear('pressure', 'mbar', 100),
	psf: linear('pressure', 'lbf/ft²', LBF / (FT * FT)),
	psi: linear('pressure', 'lbf/in²', LBF / (IN * IN)),
	inHg: linear('pressure', 'inHg', INHG),
	// length
	m: linear('length', 'm', 1),
	mm: linear('length', 'mm', 1e-3),
	cm: linear('length', 'cm', 1e-2),
	km: linear('length', 'km', 1e3),
	ft: linear('length', 'ft', FT),
	in: linear('length', 'in', IN),
	// area
	m2: linear('area', 'm²', 1),
	cm2: linear('area', 'cm²', 1e-4),
	mm2: linear('area', 'mm²', 1e-6),
	ft2: linear('area', 'ft²', FT * FT),
	in2: linear('area', 'in²', IN * IN),
	// volume (model volume for solid blockage)
	m3: linear('volume', 'm³', 1),
	ft3: linear('volume', 'ft³', FT * FT * FT),
	in3: linear('volume', 'in³', IN * IN * IN),
	// velocity
	'm/s': linear('velocity', 'm/s', 1),
	'km/h': linear('velocity', 'km/h', 1 / 3.6),
	kt: linear('velocity', 'kt', 1852 / 3600),
	'ft/s': linear('velocity', 'ft/s', FT),
	mph: linear('velocity', 'mph', 1609.344 / 3600),
	// rate of climb: same dimension as velocity, kept apart so a column can
	// say what it is; converts freely to and from velocity units.
	'ft/min': linear('rate', 'ft/min', FT / 60),
	'm/min': linear('rate', 'm/min', 1 / 60),
	// mass
	kg: linear('mass', 'kg', 1),
	lb: linear('mass', 'lb', LB),
	slug: linear('mass', 'slug', SLUG),
	// temperature (affine)
	K: linear('temperature', 'K', 1),
	degC: affine('temperature', '°C', 1, 273.15),
	degF: affine('temperature', '°F', 5 / 9, 459.67),
	degR: linear('temperature', '°R', 5 / 9),
	// angle
	rad: linear('angle', 'rad', 1),
	deg: linear('angle', '°', Math.PI / 180),
	// angular rate
	'rad/s': linear('angularRate', 'rad/s', 1),
	'deg/s': linear('angularRate', '°/s', Math.PI / 180),
	// density
	'kg/m3': linear('density', 'kg/m³', 1),
	'slug/ft3': linear('density', 'slug/ft³', SLUG / (FT * FT * FT)),
	// time
	s: linear('time', 's', 1),
	ms: linear('time', 'ms', 1e-3),
	min: linear('time', 'min', 60),
	h: linear('time', 'h', 3600),
	// dimensionless; 'g' is a load factor (n = L/W), numerically 1 per g
	'1': linear('dimensionless', '–', 1),
	'%': linear('dimensionless', '%', 0.01),
	g: linear('dimensionless', 'g', 1),
	// acceleration; 'g0' is standard gravity as an acceleration unit
	'm/s2': linear('acceleration', 'm/s²', 1),
	'ft/s2': linear('acceleration', 'ft/s²', FT),
	g0: linear('acceleration', 'g₀', G0),
	// power
	W: linear('power', 'W', 1),
	kW: linear('power', 'kW', 1000),
	hp: linear('power', 'hp', HP)
};

const SI_UNIT: Record<Quantity, string> = {
	force: 'N',
	moment: 'N·m',
	pressure: 'Pa',
	length: 'm',
	area: 'm2',
	volume: 'm3',
	velocity: 'm/s',
	rate: 'm/s',
	mass: 'kg',
	temperature: 'K',
	angle: 'rad',
	angularRate: 'rad/s',
	density: 'kg/m3',
	time: 's',
	dimensionless: '1',
	acceleration: 'm/s2',
	power: 'W'
};

/** The SI unit id of a quantity (e.g. 'force' → 'N'). */
export function siUnitOf(quantity: Quantity): string {
	const id = SI_UNIT[quantity];
	if (id === undefined) throw new Error(`unknown quantity '${String(quantity)}'`);
	return id;
}

/** Quantities that share one dimension and so may be converted into each other. */
function dimensionOf(q: Quantity): string {
	return q === 'rate' ? 'velocity' : q;
}

function lookup(unit: string, context: string): UnitDef {
	const def = Object.prototype.hasOwnProperty.call(UNITS, unit) ? UNITS[unit] : undefined;
	if (!def) throw new Error(`unknown unit '${unit}'${context}`);
	return def;
}

/** True when `unit` is a unit id of the table. */
export function isUnit(unit: string): boolean {
	return Object.prototype.hasOwnProperty.call(UNITS, unit);
}

/** Quantity of a unit id; throws for an unknown id. */
export function quantityOf(unit: string): Quantity {
	return lookup(unit, '').quantity;
}

/** Convert a value in `unit` to the SI unit of its quantity. */
export function toSI(value: number, unit: string): number {
	return lookup(unit, '').toSI(value);
}

/** Convert a value in the SI unit of `unit`'s quantity to `unit`. */
export function fromSI(value: number, unit: string): number {
	return lookup(unit, '').fromSI(value);
}

/**
 * Convert `value` from `fromUnit` to `toUnit`. Throws when either unit is
 * unknown or when they measure different quantities.
 */
export function convert(value: number, fromUnit: string, toUnit: string): number {
	const ctx = ` (converting from '${fromUnit}' to '${toUnit}')`;
	const a = lookup(fromUnit, ctx);
	const b = lookup(toUnit, ctx);
	if (dimensionOf(a.quantity) !== dimensionOf(b.quantity)) {
		throw new Error(
			`cannot convert from '${fromUnit}' (${a.quantity}) to '${toUnit}' (${b.quantity}): quantities differ`
		);
	}
	if (fromUnit === toUnit) return value;
	return b.fromSI(a.toSI(value));
}

/**
 * Spellings met in spreadsheet unit rows and header suffixes, normalised by
 * `normalise` (lower case, no spaces, product dots and dashes removed,
 * superscripts to digits). Values are unit ids.
 */
const SPELLINGS: Record<string, string> = {
	n: 'N', newton: 'N', newtons: 'N', kn: 'kN',
	lbf: 'lbf', lbsf: 'lbf', poundforce: 'lbf', kgf: 'kgf', kp: 'kgf',
	nm: 'N·m', newtonmeter: 'N·m', newtonmetre: 'N·m',
	lbfft: 'lbf·ft', ftlbf: 'lbf·ft', lbft: 'lbf·ft', ftlb: 'lbf·ft', ftlbs: 'lbf·ft', lbsft: 'lbf·ft',
	inlb: 'in·lbf', inlbf: 'in·lbf', lbin: 'in·lbf', lbfin: 'in·lbf', inlbs: 'in·lbf', lbsin: 'in·lbf',
	pa: 'Pa', kpa: 'kPa', hpa: 'hPa', mbar: 'mbar', mb: 'mbar',
	psf: 'psf', 'lbf/ft2': 'psf', 'lb/ft2': 'psf', psi: 'psi', 'lbf/in2': 'psi', 'lb/in2': 'psi',
	inhg: 'inHg', 'in.hg': 'inHg',
	m: 'm', mm: 'mm', cm: 'cm', km: 'km', ft: 'ft', feet: 'ft', foot: 'ft', in: 'in', inch: 'in', inches: 'in',
	m2: 'm2', 'sq.m': 'm2', sqm: 'm2', cm2: 'cm2', mm2: 'mm2', ft2: 'ft2', sqft: 'ft2', in2: 'in2', sqin: 'in2',
	m3: 'm3', ft3: 'ft3', in3: 'in3',
	'm/s': 'm/s', mps: 'm/s', 'km/h': 'km/h', kph: 'km/h', kmh: 'km/h',
	kt: 'kt', kts: 'kt', knot: 'kt', knots: 'kt', kias: 'kt', kcas: 'kt', keas: 'kt', ktas: 'kt',
	'ft/s': 'ft/s', fps: 'ft/s', 'ft/sec': 'ft/s', mph: 'mph',
	'ft/min': 'ft/min', fpm: 'ft/min', 'm/min': 'm/min',
	kg: 'kg', lb: 'lb', lbs: 'lb', lbm: 'lb', pound: 'lb', pounds: 'lb', slug: 'slug', slugs: 'slug',
	k: 'K', kelvin: 'K',
	degc: 'degC', '°c': 'degC', celsius: 'degC',
	degf: 'degF', '°f': 'degF', fahrenheit: 'degF',
	degr: 'degR', '°r': 'degR', rankine: 'degR',
	deg: 'deg', degs: 'deg', degree: 'deg', degrees: 'deg', '°': 'deg', rad: 'rad', radian: 'rad', radians: 'rad',
	'deg/s': 'deg/s', '°/s': 'deg/s', 'deg/sec': 'deg/s', 'rad/s': 'rad/s', 'rad/sec': 'rad/s',
	'kg/m3': 'kg/m3', 'slug/ft3': 'slug/ft3',
	s: 's', sec: 's', second: 's', seconds: 's', ms: 'ms', msec: 'ms', min: 'min', minute: 'min', minutes: 'min',
	h: 'h', hr: 'h', hour: 'h', hours: 'h',
	'1': '1', '-': '1', '–': '1', '': '1', nd: '1', '%': '%', percent: '%',
	g: 'g', "g's": 'g', gs: 'g',
	'm/s2': 'm/s2', 'ft/s2': 'ft/s2', g0: 'g0',
	w: 'W', kw: 'kW', hp: 'hp', shp: 'hp', bhp: 'hp'
};

function normalise(text: string): string {
	return text
		.trim()
		.toLowerCase()
		.replace(/²/g, '2')
		.replace(/³/g, '3')
		.replace(/\^/g, '')
		.replace(/º/g, '°') // masculine ordinal often typed for the degree sign
		.replace(/\s+/g, '')
		.replace(/[·*×]/g, '')
		.replace(/(?<=[a-z])[.-](?=[a-z])/g, '');
}

/**
 * Recognise a unit written in a spreadsheet unit row or as a header suffix
 * ("Alpha [deg]", "Lift (lbf)", "psf", "°C", "kts", "in-lb"). Returns the unit
 * id, or null when the text names no known unit.
 *
 * "lb" is mass by default; pass `expected = 'force'` to read it as lbf (as in
 * balance columns), or `expected = 'acceleration'` to read "g" as g₀.
 */
export function parseUnit(text: string, expected?: Quantity): string | null {
	if (typeof text !== 'string') return null;
	let t = text.trim();
	// A header suffix in brackets or parentheses wins: "CL (–)", "Lift [lbf]".
	const m = /[[(]([^\])[(]*)[\])]\s*$/.exec(t);
	if (m) t = m[1];
	if (isUnit(t)) return disambiguate(t, expected);
	const n = normalise(t);
	if (n === '' && !m) return null;
	const id = Object.prototype.hasOwnProperty.call(SPELLINGS, n) ? SPELLINGS[n] : undefined;
	return id === undefined ? null : disambiguate(id, expected);
}

function disambiguate(id: string, expected?: Quantity): string {
	if (expected === 'force' && id === 'lb') return 'lbf';
	if (expected === 'acceleration' && id === 'g') return 'g0';
	if (expected === 'dimensionless' && id === 'g0') return 'g';
	return id;
}
