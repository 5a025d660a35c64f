/**
 * Standard atmosphere: ISO 2533:1975 / U.S. Standard Atmosphere 1976, the
 * three lowest layers (to 32 km geopotential), with an ISA+ΔT offset.
 * Viscosity by Sutherland's law with the USSA 1976 constants.
 */

/** Specific gas constant of dry air, J/(kg·K) (USSA 1976: universal R over molar mass, 8314.32/28.9644). */
export const R_AIR = 287.053;
/** Standard acceleration of gravity, m/s² (exact). */
export const G0 = 9.80665;
/** Ratio of specific heats of air. */
export const GAMMA = 1.4;
/** Sea-level standard values. */
export const T0 = 288.15;
export const P0 = 101325;
export const RHO0 = P0 / (R_AIR * T0); // 1.2250 kg/m³
export const A0 = Math.sqrt(GAMMA * R_AIR * T0); // 340.294 m/s
/** Effective Earth radius for geopotential altitude, m (USSA 1976). */
export const EARTH_RADIUS = 6356766;
/** Sutherland constants (USSA 1976): β in kg/(m·s·K^½), S in K. */
export const SUTHERLAND_BETA = 1.458e-6;
export const SUTHERLAND_S = 110.4;

/** Lowest and highest geopotential altitude covered, m. */
export const ISA_MIN_ALTITUDE = -2000; // ISO 2533 tables start at −2 km
export const ISA_MAX_ALTITUDE = 32000;

interface Layer {
	h: number; // base geopotential altitude, m
	T: number; // base temperature, K
	L: number; // lapse rate, K/m
	p: number; // base pressure, Pa
}

// Base pressures follow from the hydrostatic equation; computed once here so
// the table cannot disagree with the constants above.
const LAYERS: Layer[] = (() => {
	const defs: Array<[number, number]> = [
		[0, -0.0065],
		[11000, 0],
		[20000, 0.001]
	];
	const out: Layer[] = [];
	let T = T0;
	let p = P0;
	for (let i = 0; i < defs.length; i++) {
		const [h, L] = defs[i];
		if (i > 0) {
			const prev = out[i - 1];
			const dh = h - prev.h;
			T = prev.T + prev.L * dh;
			p = layerPressure(prev, dh);
		}
		out.push({ h, T, L, p });
	}
	return out;
})();

function layerPressure(layer: Layer, dh: number): number {
	if (layer.L === 0) return layer.p * Math.exp((-G0 * dh) / (R_AIR * layer.T));
	const T = layer.T + layer.L * dh;
	return layer.p * Math.pow(T / layer.T, -G0 / (R_AIR * layer.L));
}

export interface AtmosphereState {
	/** Geopotential altitude, m. */
	geopotentialAltitude: number;
	/** Temperature, K (standard + ΔT). */
	temperature: number;
	/** Static pressure, Pa. */
	pressure: number;
	/** Density, kg/m³. */
	density: number;
	/** Speed of sound, m/s. */
	speedOfSound: number;
	/** Dynamic viscosity, Pa·s (Sutherland). */
	viscosity: number;
	/** Kinematic viscosity, m²/s. */
	kinematicViscosity: number;
	/** Ratios to sea-level standard: θ = T/T0, δ = p/p0, σ = ρ/ρ0. */
	theta: number;
	delta: number;
	sigma: number;
}

export interface AtmosphereOptions {
	/** Temperature offset from standard, K (ISA+ΔT). Pressure stays standard. */
	deltaT?: number;
	/** Treat the altitude as geometric (above mean sea level) rather than geopotential. */
	geometric?: boolean;
}

function finite(name: string, v: number): void {
	if (typeof v !== 'number' || !Number.isFinite(v)) {
		throw new Error(`${name} must be a finite number (got ${String(v)})`);
	}
}

/** Geometric altitude z (m) to geopotential altitude H (m): H = r0·z/(r0 + z). */
export function geopotentialFromGeometric(z: number): number {
	finite('geometric altitude', z);
	return (EARTH_RADIUS * z) / (EARTH_RADIUS + z);
}

/** Geopotential altitude H (m) to geometric altitude z (m). */
export function geometricFromGeopotential(H: number): number {
	finite('geopotential altitude', H);
	return (EARTH_RADIUS * H) / (EARTH_RADIUS - H);
}

/** Sutherland's law μ = βT^1.5/(T + S), USSA 1976 constants. */
export function sutherlandViscosity(temperatureK: number): number {
	finite('sutherlandViscosity: temperature', temperatureK);
	if (temperatureK <= 0) throw new Error(`sutherlandViscosity: temperature must be > 0 K (got ${temperatureK})`);
	return (SUTHERLAND_BETA * Math.pow(temperatureK, 1.5)) / (temperatureK + SUTHERLAND_S);
}

/** Speed of sound a = √(γRT), m/s. */
export function speedOfSound(temperatureK: number): number {
	finite('speedOfSound: temperature', temperatureK);
	if (temperatureK <= 0) throw new Error(`speedOfSound: temperature must be > 0 K (got ${temperatureK})`);
	return Math.sqrt(GAMMA * R_AIR * temperatureK);
}

/** Density from measured static pressure (Pa) and temperature (K): ρ = p/(RT). */
export function densityFromPressureTemperature(pressurePa: number, temperatureK: number): number {
	finite('density: pressure', pressurePa);
	finite('density: temperature', temperatureK);
	if (pressurePa <= 0) throw new Error(`density: pressure must be > 0 Pa (got ${pressurePa})`);
	if (temperatureK <= 0) throw new Error(`density: temperature must be > 0 K (got ${temperatureK})`);
	return pressurePa / (R_AIR * temperatureK);
}

/** Standard temperature and pressure at a geopotential altitude (no offset). */
function standard(H: number): { T: number; p: number } {
	let i = LAYERS.length - 1;
	while (i > 0 && H < LAYERS[i].h) i--;
	const layer = LAYERS[i];
	const dh = H - layer.h;
	return { T: layer.T + layer.L * dh, p: layerPressure(layer, dh) };
}

/**
 * State of the standard atmosphere (ISO 2533:1975 / U.S. Standard Atmosphere
 * 1976) at an altitude in m, geopotential unless `geometric` is set, with an
 * optional ISA+ΔT temperature offset at standard pressure.
 */
export function standardAtmosphere(altitude: number, options: AtmosphereOptions = {}): AtmosphereState {
	finite('standardAtmosphere: altitude', altitude);
	const deltaT = options.deltaT ?? 0;
	finite('standardAtmosphere: deltaT', deltaT);
	const H = options.geometric ? geopotentialFromGeometric(altitude) : altitude;
	if (H < ISA_MIN_ALTITUDE || H > ISA_MAX_ALTITUDE) {
		throw new Error(
			`standardAtmosphere: geopotential altitude must be within [${ISA_MIN_ALTITUDE}, ${ISA_MAX_ALTITUDE}] m (got ${H})`
		);
	}
	const s = standard(H);
	const T = s.T + deltaT;
	if (T <= 0) throw new Error(`standardAtmosphere: ISA${deltaT >= 0 ? '+' : ''}${deltaT} K gives T ≤ 0 K at ${H} m`);
	return stateFrom(H, s.p, T);
}

function stateFrom(H: number, p: number, T: number): AtmosphereState {
	const rho = p / (R_AIR * T);
	const mu = sutherlandViscosity(T);
	return {
		geopotentialAltitude: H,
		temperature: T,
		pressure: p,
		density: rho,
		speedOfSound: Math.sqrt(GAMMA * R_AIR * T),
		viscosity: mu,
		kinematicViscosity: mu / rho,
		theta: T / T0,
		delta: p / P0,
		sigma: rho / RHO0
	};
}

/**
 * Pressure altitude (geopotential, m) of a static pressure in Pa: the inverse
 * of the standard pressure profile.
 */
export function pressureAltitude(pressurePa: number): number {
	finite('pressureAltitude: pressure', pressurePa);
	if (pressurePa <= 0) throw new Error(`pressureAltitude: pressure must be > 0 Pa (got ${pressurePa})`);
	const pMin = standard(ISA_MAX_ALTITUDE).p;
	const pMax = standard(ISA_MIN_ALTITUDE).p;
	if (pressurePa < pMin || pressurePa > pMax) {
		throw new Error(`pressureAltitude: pressure ${pressurePa} Pa is outside the table [${pMin.toFixed(1)}, ${pMax.toFixed(1)}] Pa`);
	}
	let i = LAYERS.length - 1;
	while (i > 0 && pressurePa > LAYERS[i].p) i--;
	const layer = LAYERS[i];
	if (layer.L === 0) return layer.h - ((R_AIR * layer.T) / G0) * Math.log(pressurePa / layer.p);
	const T = layer.T * Math.pow(pressurePa / layer.p, (-R_AIR * layer.L) / G0);
	return layer.h + (T - layer.T) / layer.L;
}

/**
 * Atmosphere from a pressure altitude (m) and a measured outside air
 * temperature (K), as in flight test: pressure from the standard profile,
 * density from p and the measured T.
 */
export function atmosphereFromPressureAltitude(pressureAltitudeM: number, temperatureK: number): AtmosphereState {
	const std = standardAtmosphere(pressureAltitudeM);
	finite('atmosphere: temperature', temperatureK);
	if (temperatureK <= 0) throw new Error(`atmosphere: temperature must be > 0 K (got ${temperatureK})`);
	return stateFrom(pressureAltitudeM, std.pressure, temperatureK);
}

/** Atmosphere from measured static pressure (Pa) and temperature (K). */
export function atmosphereFromPressureTemperature(pressurePa: number, temperatureK: number): AtmosphereState {
	densityFromPressureTemperature(pressurePa, temperatureK); // validates
	// A tunnel may run above sea-level pressure: pressure altitude is then
	// outside the table and reported as NaN rather than refused.
	const pMin = standard(ISA_MAX_ALTITUDE).p;
	const pMax = standard(ISA_MIN_ALTITUDE).p;
	const H = pressurePa >= pMin && pressurePa <= pMax ? pressureAltitude(pressurePa) : NaN;
	return stateFrom(H, pressurePa, temperatureK);
}
