/**
 * Column mapping: which column of a facility's file holds which quantity, in
 * which unit. Spanline proposes one from header names and units (our own
 * synonym table below), the user confirms or corrects it, and it can be saved
 * as a facility's named profile and applied to the next file by header name.
 *
 * A mapping is plain JSON: { version: 1, kind, columns: [{ index, header, field, unit, confidence? }] }.
 */
import { isUnit, parseUnit, quantityOf, type Quantity } from '../../aero/units';

export type RunKind = 'tunnel' | 'flight';

export interface FieldDef {
	id: string;
	label: string;
	kinds: readonly RunKind[];
	quantity: Quantity;
	/** Unit assumed when the file names none (low confidence). */
	defaultUnit: string;
	/** Spellings, compared after normalising (lower case, no spaces/punctuation). */
	synonyms: readonly string[];
}

const T: readonly RunKind[] = ['tunnel'];
const F: readonly RunKind[] = ['flight'];
const TF: readonly RunKind[] = ['tunnel', 'flight'];

/** Canonical fields with our synonym table. Order matters only for display. */
export const FIELDS: readonly FieldDef[] = [
	{ id: 'run', label: 'run number', kinds: T, quantity: 'dimensionless', defaultUnit: '1', synonyms: ['run', 'runno', 'runnumber', 'runnr', 'runid'] },
	{ id: 'point', label: 'point number', kinds: T, quantity: 'dimensionless', defaultUnit: '1', synonyms: ['point', 'pointno', 'pointnumber', 'pnt', 'ptno', 'seq', 'sequence'] },
	{ id: 'alpha', label: 'angle of attack α', kinds: TF, quantity: 'angle', defaultUnit: 'deg', synonyms: ['alpha', 'α', 'aoa', 'alfa', 'angleofattack', 'incidence', 'alphadeg', 'aoadeg', 'alphacorr', 'alpha_geo', 'alphageo', 'aoa_deg'] },
	{ id: 'beta', label: 'sideslip β', kinds: T, quantity: 'angle', defaultUnit: 'deg', synonyms: ['beta', 'β', 'aos', 'sideslip', 'angleofsideslip', 'yaw', 'betadeg'] },
	{ id: 'normal_force', label: 'normal force', kinds: T, quantity: 'force', defaultUnit: 'N', synonyms: ['normalforce', 'fn', 'nf', 'n', 'fz', 'normal', 'nforce'] },
	{ id: 'axial_force', label: 'axial force', kinds: T, quantity: 'force', defaultUnit: 'N', synonyms: ['axialforce', 'fa', 'af', 'a', 'fx', 'axial', 'chordforce', 'aforce'] },
	{ id: 'side_force', label: 'side force', kinds: T, quantity: 'force', defaultUnit: 'N', synonyms: ['sideforce', 'fy', 'sf', 'y', 'side'] },
	{ id: 'lift', label: 'lift', kinds: T, quantity: 'force', defaultUnit: 'N', synonyms: ['lift', 'l', 'liftforce', 'flift'] },
	{ id: 'drag', label: 'drag', kinds: T, quantity: 'force', defaultUnit: 'N', synonyms: ['drag', 'd', 'dragforce', 'fdrag'] },
	{ id: 'pitching_moment', label: 'pitching moment', kinds: T, quantity: 'moment', defaultUnit: 'N·m', synonyms: ['pitchingmoment', 'pitchmoment', 'pm', 'my', 'm', 'pitch moment', 'mpitch'] },
	{ id: 'rolling_moment', label: 'rolling moment', kinds: T, quantity: 'moment', defaultUnit: 'N·m', synonyms: ['rollingmoment', 'rollmoment', 'rm', 'mx', 'mroll'] },
	{ id: 'yawing_moment', label: 'yawing moment', kinds: T, quantity: 'moment', defaultUnit: 'N·m', synonyms: ['yawingmoment', 'yawmoment', 'ym', 'mz', 'myaw'] },
	{ id: 'CL', label: 'lift coefficient CL', kinds: T, quantity: 'dimensionless', defaultUnit: '1', synonyms: ['cl', 'clift', 'liftcoefficient', 'liftcoeff'] },
	{ id: 'CD', label: 'drag coefficient CD', kinds: T, quantity: 'dimensionless', defaultUnit: '1', synonyms: ['cd', 'cdrag', 'dragcoefficient', 'dragcoeff'] },
	{ id: 'Cm', label: 'pitching-moment coefficient Cm', kinds: T, quantity: 'dimensionless', defaultUnit: '1', synonyms: ['cm', 'cmy', 'pitchingmomentcoefficient', 'cmpitch', 'cm25'] },
	{ id: 'CN', label: 'normal-force coefficient CN', kinds: T, quantity: 'dimensionless', defaultUnit: '1', synonyms: ['cn', 'cz', 'normalforcecoefficient'] },
	{ id: 'CA', label: 'axial-force coefficient CA', kinds: T, quantity: 'dimensionless', defaultUnit: '1', synonyms: ['ca', 'cx', 'axialforcecoefficient', 'cc'] },
	{ id: 'q', label: 'dynamic pressure q', kinds: T, quantity: 'pressure', defaultUnit: 'Pa', synonyms: ['q', 'qinf', 'q∞', 'qbar', 'dynpress', 'dynamicpressure', 'dynpressure', 'pdyn', 'qdyn', 'qc'] },
	{ id: 'velocity', label: 'velocity V', kinds: T, quantity: 'velocity', defaultUnit: 'm/s', synonyms: ['v', 'vel', 'velocity', 'u', 'uinf', 'vinf', 'v∞', 'u∞', 'speed', 'windspeed', 'airspeed', 'tunnelspeed'] },
	{ id: 'density', label: 'air density ρ', kinds: T, quantity: 'density', defaultUnit: 'kg/m3', synonyms: ['rho', 'ρ', 'density', 'airdensity', 'rhoinf'] },
	{ id: 'temperature', label: 'temperature', kinds: T, quantity: 'temperature', defaultUnit: 'degC', synonyms: ['t', 'temp', 'temperature', 'tinf', 't∞', 'ts', 'tstat', 'statictemperature', 'airtemp', 'tt', 'ttotal', 'totaltemperature'] },
	{ id: 'static_pressure', label: 'static pressure', kinds: T, quantity: 'pressure', defaultUnit: 'Pa', synonyms: ['p', 'ps', 'pstat', 'pinf', 'p∞', 'staticpressure', 'pstatic', 'pamb', 'baro', 'pbaro', 'barometricpressure'] },
	{ id: 'total_pressure', label: 'total pressure', kinds: T, quantity: 'pressure', defaultUnit: 'Pa', synonyms: ['pt', 'p0', 'ptot', 'ptotal', 'totalpressure', 'stagnationpressure', 'pt0'] },
	{ id: 'time', label: 'time', kinds: F, quantity: 'time', defaultUnit: 's', synonyms: ['time', 't', 'timestamp', 'elapsed', 'elapsedtime', 'sec', 'tsec', 'times'] },
	{ id: 'airspeed_cas', label: 'calibrated airspeed', kinds: F, quantity: 'velocity', defaultUnit: 'kt', synonyms: ['kcas', 'cas', 'vcas', 'vc', 'calibratedairspeed', 'kias', 'ias', 'vias', 'indicatedairspeed'] },
	{ id: 'airspeed_eas', label: 'equivalent airspeed', kinds: F, quantity: 'velocity', defaultUnit: 'kt', synonyms: ['keas', 'eas', 'veas', 've', 'equivalentairspeed'] },
	{ id: 'airspeed_tas', label: 'true airspeed', kinds: F, quantity: 'velocity', defaultUnit: 'kt', synonyms: ['ktas', 'tas', 'vtas', 'vt', 'trueairspeed'] },
	{ id: 'pressure_altitude', label: 'pressure altitude', kinds: F, quantity: 'length', defaultUnit: 'ft', synonyms: ['hp', 'alt', 'altitude', 'palt', 'pressurealtitude', 'pressalt', 'hpft', 'h', 'altp'] },
	{ id: 'oat', label: 'outside air temperature', kinds: F, quantity: 'temperature', defaultUnit: 'degC', synonyms: ['oat', 'sat', 'outsideairtemperature', 'ambienttemperature', 'tamb', 'ts', 'temp', 't'] },
	{ id: 'weight', label: 'weight (mass)', kinds: F, quantity: 'mass', defaultUnit: 'kg', synonyms: ['wt', 'weight', 'gw', 'grossweight', 'mass', 'w', 'm', 'acweight', 'gwt'] },
	{ id: 'load_factor', label: 'load factor nz', kinds: F, quantity: 'dimensionless', defaultUnit: 'g', synonyms: ['nz', 'n', 'loadfactor', 'az', 'normalloadfactor', 'nzg', 'gload'] },
	{ id: 'climb_rate', label: 'rate of climb', kinds: F, quantity: 'rate', defaultUnit: 'ft/min', synonyms: ['climbrate', 'roc', 'rateofclimb', 'vs', 'vz', 'hdot', 'verticalspeed', 'vsi', 'rc'] },
	{ id: 'longitudinal_accel', label: 'longitudinal acceleration', kinds: F, quantity: 'acceleration', defaultUnit: 'm/s2', synonyms: ['ax', 'nx', 'longitudinalaccel', 'longitudinalacceleration', 'longaccel', 'accelx', 'axbody'] },
	{ id: 'thrust', label: 'thrust', kinds: F, quantity: 'force', defaultUnit: 'N', synonyms: ['thrust', 'fn', 'netthrust', 'thr', 'fnet'] },
	{ id: 'pitch', label: 'pitch attitude θ', kinds: F, quantity: 'angle', defaultUnit: 'deg', synonyms: ['pitch', 'theta', 'θ', 'pitchattitude', 'pitchangle'] },
	{ id: 'flap', label: 'flap deflection', kinds: F, quantity: 'angle', defaultUnit: 'deg', synonyms: ['flap', 'flaps', 'flapdeflection', 'flapangle', 'df', 'δf'] },
	{ id: 'power', label: 'shaft power', kinds: F, quantity: 'power', defaultUnit: 'kW', synonyms: ['power', 'shp', 'shaftpower', 'pwr', 'bhp'] }
];

const FIELD_BY_ID = new Map(FIELDS.map((f) => [f.id, f]));

export function fieldDef(id: string): FieldDef | undefined {
	return FIELD_BY_ID.get(id);
}

export interface MappingColumn {
	/** 0-based column index in the file. */
	index: number;
	header: string;
	/** Canonical field id, or null when the column is ignored. */
	field: string | null;
	/** Unit id (see src/lib/aero/units.ts), or null when unknown/ignored. */
	unit: string | null;
	/** 0..1, how sure the proposal is (absent in saved profiles). */
	confidence?: number;
}

export interface ColumnMapping {
	version: 1;
	kind?: RunKind;
	columns: MappingColumn[];
}

/** Lower case, no blanks or punctuation (Greek letters kept). */
export function normaliseName(s: string): string {
	return s
		.normalize('NFKC')
		.toLowerCase()
		.replace(/[\s_\-.:/\\()[\]{}'"`,;#*]+/g, '');
}

/**
 * Split "Alpha [deg]", "Lift (lbf)", "aoa_deg", "Hp ft", "OAT degC" into a name
 * and a unit id. A trailing token is read as a unit only when it names one
 * and is not the whole header (so a header "N" stays a name).
 */
export function splitHeader(header: string, expected?: Quantity): { name: string; unit: string | null } {
	const h = header.trim();
	const m = /^(.*?)\s*[[(]([^\])]*)[\])]\s*$/.exec(h);
	if (m && m[1] !== '') {
		return { name: m[1], unit: parseUnit(m[2], expected) };
	}
	const t = /^(.+?)[\s_]+([^\s_]+)$/.exec(h);
	if (t) {
		const u = parseUnit(t[2], expected);
		// Bare letters that are also names ("CL d", "q a") are not read as units.
		if (u !== null && t[2].length > 1 && u !== '1') return { name: t[1], unit: u };
	}
	return { name: h, unit: null };
}

function quantityMatches(unit: string, q: Quantity): boolean {
	if (!isUnit(unit)) return false;
	const uq = quantityOf(unit);
	if (uq === q) return true;
	const dim = (x: Quantity) => (x === 'rate' ? 'velocity' : x);
	return dim(uq) === dim(q);
}

interface Candidate {
	field: FieldDef;
	score: number;
}

function candidatesFor(name: string, kind: RunKind): Candidate[] {
	const n = normaliseName(name);
	if (n === '') return [];
	const out: Candidate[] = [];
	for (const f of FIELDS) {
		if (!f.kinds.includes(kind)) continue;
		let score = 0;
		for (const syn of f.synonyms) {
			const s = normaliseName(syn);
			if (s === n) score = Math.max(score, s.length <= 1 ? 0.75 : 0.95);
			else if (s.length >= 4 && n.length >= 4 && (n.startsWith(s) || n.endsWith(s))) score = Math.max(score, 0.6);
		}
		if (score > 0) out.push({ field: f, score });
	}
	return out.sort((a, b) => b.score - a.score);
}

/**
 * Propose a mapping from header names and (optionally) the unit row.
 * Each field is given to at most one column (the most confident one).
 */
export function proposeMapping(headers: readonly string[], unitCells: readonly string[] | null, kind: RunKind): ColumnMapping {
	type Pick = { field: FieldDef; score: number; unit: string | null; unitScore: number };
	const picks: (Pick | null)[] = headers.map((header, index) => {
		const raw = unitCells?.[index]?.trim() ?? '';
		const split = splitHeader(header);
		const cands = candidatesFor(split.name, kind);
		if (cands.length === 0 && split.name !== header.trim()) cands.push(...candidatesFor(header, kind));
		// The unit helps choose between candidates ("N" with unit lbf is a force).
		const rowUnit = raw !== '' ? parseUnit(raw) : null;
		let best: Pick | null = null;
		for (const c of cands) {
			const q = c.field.quantity;
			const fromRow = raw !== '' ? parseUnit(raw, q) : null;
			const fromHeader = splitHeader(header, q).unit;
			let unit = fromRow ?? fromHeader;
			let unitScore = 1;
			let score = c.score;
			if (unit !== null && !quantityMatches(unit, q)) {
				score -= 0.4; // the name says one thing, the unit another
				unit = null;
			}
			if (unit === null) {
				// Airspeed headers such as KCAS name their unit.
				const implied = /^k(cas|ias|eas|tas)$/.test(normaliseName(split.name)) ? 'kt' : null;
				unit = implied ?? c.field.defaultUnit;
				unitScore = implied ? 1 : q === 'dimensionless' ? 0.9 : 0.5;
				if (rowUnit === null && raw === '' && q === 'dimensionless') unitScore = 1;
			}
			score *= 0.7 + 0.3 * unitScore;
			if (!best || score > best.score) best = { field: c.field, score, unit, unitScore };
		}
		return best;
	});
	// Resolve duplicates: keep the most confident column per field.
	const owner = new Map<string, number>();
	picks.forEach((p, i) => {
		if (!p) return;
		const j = owner.get(p.field.id);
		if (j === undefined || (picks[j] as Pick).score < p.score) owner.set(p.field.id, i);
	});
	return {
		version: 1,
		kind,
		columns: headers.map((header, index) => {
			const p = picks[index];
			if (!p || owner.get(p.field.id) !== index) {
				const raw = unitCells?.[index]?.trim() ?? '';
				return { index, header, field: null, unit: raw ? parseUnit(raw) : splitHeader(header).unit, confidence: 0 };
			}
			return { index, header, field: p.field.id, unit: p.unit, confidence: Math.round(p.score * 100) / 100 };
		})
	};
}

export interface MappingCheck {
	ok: boolean;
	/** Required fields (or groups) that no column supplies. */
	missing: string[];
	/** One message per issue, phrased for the user. */
	messages: string[];
}

/**
 * Required fields for a reduction:
 * - tunnel: alpha; coefficients (CL and CD) or forces (lift and drag, or
 *   normal and axial force); for forces also q, or velocity with density or
 *   with static pressure and temperature (ideal gas);
 * - flight: time, an airspeed (CAS, EAS or TAS), pressure altitude, weight,
 *   load factor.
 */
export function validateMapping(mapping: ColumnMapping, kind: RunKind): MappingCheck {
	const messages: string[] = [];
	const missing: string[] = [];
	const have = new Set<string>();
	const seen = new Map<string, string>();
	if (!mapping || mapping.version !== 1 || !Array.isArray(mapping.columns)) {
		return { ok: false, missing: [], messages: ['the mapping is not a version-1 column mapping'] };
	}
	for (const c of mapping.columns) {
		if (c.field === null) continue;
		const def = FIELD_BY_ID.get(c.field);
		if (!def) {
			messages.push(`column '${c.header}': '${c.field}' is not a known field`);
			continue;
		}
		if (!def.kinds.includes(kind)) {
			messages.push(`column '${c.header}': ${def.label} is not used in ${kind} runs`);
			continue;
		}
		const prev = seen.get(c.field);
		if (prev !== undefined) messages.push(`columns '${prev}' and '${c.header}' are both mapped to ${def.label}`);
		seen.set(c.field, c.header);
		if (c.unit === null || !isUnit(c.unit)) messages.push(`column '${c.header}' (${def.label}): choose a unit`);
		else if (!quantityMatches(c.unit, def.quantity)) messages.push(`column '${c.header}' (${def.label}): unit '${c.unit}' is not a unit of ${def.quantity}`);
		have.add(c.field);
	}
	const need = (ok: boolean, what: string) => {
		if (!ok) {
			missing.push(what);
			messages.push(`missing ${what}`);
		}
	};
	if (kind === 'tunnel') {
		need(have.has('alpha'), 'alpha (angle of attack)');
		const coeffs = have.has('CL') && have.has('CD');
		const forces = (have.has('lift') && have.has('drag')) || (have.has('normal_force') && have.has('axial_force'));
		need(coeffs || forces, 'coefficients (CL and CD) or forces (lift and drag, or normal and axial force)');
		if (forces && !coeffs) {
			const qInfo = have.has('q') || (have.has('velocity') && (have.has('density') || (have.has('static_pressure') && have.has('temperature'))));
			need(qInfo, 'dynamic pressure q (or velocity with density, or velocity with static pressure and temperature)');
		}
	} else {
		need(have.has('time'), 'time');
		need(have.has('airspeed_cas') || have.has('airspeed_eas') || have.has('airspeed_tas'), 'an airspeed (CAS, EAS or TAS)');
		need(have.has('pressure_altitude'), 'pressure altitude');
		need(have.has('weight'), 'weight');
		need(have.has('load_factor'), 'load factor (nz)');
	}
	return { ok: messages.length === 0, missing, messages };
}

export interface ProfileApplication {
	mapping: ColumnMapping;
	/** Profile columns whose header is not in the new file. */
	unmatched: string[];
}

/**
 * Apply a saved profile to a new file's header, matching columns by header
 * name (normalised), not by position, so a facility may reorder columns.
 */
export function applyProfile(profile: ColumnMapping, headers: readonly string[]): ProfileApplication {
	const byName = new Map<string, MappingColumn>();
	for (const c of profile.columns) byName.set(normaliseName(c.header), c);
	const used = new Set<string>();
	const columns: MappingColumn[] = headers.map((header, index) => {
		const key = normaliseName(header);
		const p = byName.get(key);
		if (!p || used.has(key)) return { index, header, field: null, unit: null };
		used.add(key);
		return { index, header, field: p.field, unit: p.unit, confidence: 1 };
	});
	const unmatched = profile.columns.filter((c) => c.field !== null && !used.has(normaliseName(c.header))).map((c) => c.header);
	return { mapping: { version: 1, kind: profile.kind, columns }, unmatched };
}

/** Strip confidences: the form stored as a facility profile. */
export function toProfile(mapping: ColumnMapping): ColumnMapping {
	return {
		version: 1,
		kind: mapping.kind,
		columns: mapping.columns.map(({ index, header, field, unit }) => ({ index, header, field, unit }))
	};
}
