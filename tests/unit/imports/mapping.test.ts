import { describe, expect, it } from 'vitest';
import { applyProfile, proposeMapping, splitHeader, toProfile, validateMapping, type ColumnMapping } from '../../../src/lib/server/imports/mapping';

const fields = (m: ColumnMapping) => m.columns.map((c) => [c.header, c.field, c.unit]);

describe('proposeMapping', () => {
	it('maps the clean-polar naming (SI, units in brackets)', () => {
		const m = proposeMapping(['Run', 'Point', 'Alpha [deg]', 'q [Pa]', 'T [degC]', 'Lift [N]', 'Drag [N]', 'PM [N m]'], null, 'tunnel');
		expect(fields(m)).toEqual([
			['Run', 'run', '1'],
			['Point', 'point', '1'],
			['Alpha [deg]', 'alpha', 'deg'],
			['q [Pa]', 'q', 'Pa'],
			['T [degC]', 'temperature', 'degC'],
			['Lift [N]', 'lift', 'N'],
			['Drag [N]', 'drag', 'N'],
			['PM [N m]', 'pitching_moment', 'N·m']
		]);
		expect(validateMapping(m, 'tunnel')).toEqual({ ok: true, missing: [], messages: [] });
	});

	it('maps the other facility naming with a unit row (lbf, psf, °F)', () => {
		const m = proposeMapping(['AoA', 'FN', 'FA', 'Qinf', 'Temp'], ['deg', 'lbf', 'lbf', 'psf', 'degF'], 'tunnel');
		expect(fields(m)).toEqual([
			['AoA', 'alpha', 'deg'],
			['FN', 'normal_force', 'lbf'],
			['FA', 'axial_force', 'lbf'],
			['Qinf', 'q', 'psf'],
			['Temp', 'temperature', 'degF']
		]);
	});

	it.each([
		['α', 'tunnel', 'alpha'],
		['Angle of attack', 'tunnel', 'alpha'],
		['aoa_deg', 'tunnel', 'alpha'],
		['Normal force', 'tunnel', 'normal_force'],
		['NF', 'tunnel', 'normal_force'],
		['L', 'tunnel', 'lift'],
		['D', 'tunnel', 'drag'],
		['Pitch moment', 'tunnel', 'pitching_moment'],
		['q_inf', 'tunnel', 'q'],
		['dyn press', 'tunnel', 'q'],
		['Q', 'tunnel', 'q'],
		['Vel', 'tunnel', 'velocity'],
		['U', 'tunnel', 'velocity'],
		['CL', 'tunnel', 'CL'],
		['Cm', 'tunnel', 'Cm'],
		['Tas', 'flight', 'airspeed_tas'],
		['KCAS', 'flight', 'airspeed_cas'],
		['Hp', 'flight', 'pressure_altitude'],
		['ALT', 'flight', 'pressure_altitude'],
		['OAT', 'flight', 'oat'],
		['Wt', 'flight', 'weight'],
		['GW', 'flight', 'weight'],
		['Nz', 'flight', 'load_factor'],
		['nz', 'flight', 'load_factor'],
		['Hp ft', 'flight', 'pressure_altitude']
	] as const)('%s (%s) → %s', (header, kind, field) => {
		expect(proposeMapping([header], null, kind).columns[0].field).toBe(field);
	});

	it('reads units from header suffixes and picks the expected quantity for "lb"', () => {
		expect(splitHeader('Lift (lbf)')).toEqual({ name: 'Lift', unit: 'lbf' });
		expect(splitHeader('OAT degC')).toEqual({ name: 'OAT', unit: 'degC' });
		expect(splitHeader('N')).toEqual({ name: 'N', unit: null });
		const m = proposeMapping(['Drag [lb]', 'GW [lb]'], null, 'tunnel');
		expect(m.columns[0].unit).toBe('lbf');
		const f = proposeMapping(['GW [lb]', 'KCAS'], null, 'flight');
		expect(f.columns.map((c) => c.unit)).toEqual(['lb', 'kt']);
	});

	it('ignores unknown and hostile headers', () => {
		const m = proposeMapping(['__proto__', 'constructor', 'Comment'], null, 'tunnel');
		expect(m.columns.map((c) => c.field)).toEqual([null, null, null]);
		expect(({} as Record<string, unknown>).alpha).toBeUndefined();
	});

	it('gives a field to one column only', () => {
		const m = proposeMapping(['alpha', 'AoA'], null, 'tunnel');
		expect(m.columns.filter((c) => c.field === 'alpha')).toHaveLength(1);
	});
});

describe('validateMapping', () => {
	const map = (cols: [string, string | null, string | null][]): ColumnMapping => ({
		version: 1,
		columns: cols.map(([header, field, unit], index) => ({ index, header, field, unit }))
	});

	it.each([
		['coefficients', [['a', 'alpha', 'deg'], ['cl', 'CL', '1'], ['cd', 'CD', '1']], []],
		['wind-axis forces with q', [['a', 'alpha', 'deg'], ['l', 'lift', 'N'], ['d', 'drag', 'N'], ['q', 'q', 'Pa']], []],
		['body-axis forces with V, p and T', [['a', 'alpha', 'deg'], ['n', 'normal_force', 'N'], ['x', 'axial_force', 'N'], ['v', 'velocity', 'm/s'], ['p', 'static_pressure', 'Pa'], ['t', 'temperature', 'K']], []],
		['forces without q', [['a', 'alpha', 'deg'], ['l', 'lift', 'N'], ['d', 'drag', 'N']], ['missing dynamic pressure q (or velocity with density, or velocity with static pressure and temperature)']],
		['no alpha, only lift', [['l', 'lift', 'N'], ['q', 'q', 'Pa']], ['missing alpha (angle of attack)', 'missing coefficients (CL and CD) or forces (lift and drag, or normal and axial force)']],
		['wrong unit quantity', [['a', 'alpha', 'Pa'], ['cl', 'CL', '1'], ['cd', 'CD', '1']], ["column 'a' (angle of attack α): unit 'Pa' is not a unit of angle"]],
		['no unit', [['a', 'alpha', null], ['cl', 'CL', '1'], ['cd', 'CD', '1']], ["column 'a' (angle of attack α): choose a unit"]]
	] as [string, [string, string | null, string | null][], string[]][])('tunnel: %s', (_, cols, messages) => {
		expect(validateMapping(map(cols), 'tunnel').messages).toEqual(messages);
	});

	it('flight needs time, an airspeed, altitude, weight and load factor', () => {
		const r = validateMapping(map([['t', 'time', 's'], ['v', 'airspeed_cas', 'kt']]), 'flight');
		expect(r.ok).toBe(false);
		expect(r.missing).toEqual(['pressure altitude', 'weight', 'load factor (nz)']);
	});

	it('refuses duplicates and fields of the other run kind', () => {
		const r = validateMapping(map([['a', 'alpha', 'deg'], ['b', 'alpha', 'deg'], ['k', 'airspeed_cas', 'kt'], ['cl', 'CL', '1'], ['cd', 'CD', '1']]), 'tunnel');
		expect(r.messages).toEqual(["columns 'a' and 'b' are both mapped to angle of attack α", "column 'k': calibrated airspeed is not used in tunnel runs"]);
	});
});

describe('profiles', () => {
	it('round-trips through JSON and maps a reordered header by name', () => {
		const proposed = proposeMapping(['AoA', 'FN', 'FA', 'Qinf', 'Temp'], ['deg', 'lbf', 'lbf', 'psf', 'degF'], 'tunnel');
		const stored = JSON.parse(JSON.stringify(toProfile(proposed))) as ColumnMapping;
		expect(stored.columns[0]).toEqual({ index: 0, header: 'AoA', field: 'alpha', unit: 'deg' });
		const { mapping, unmatched } = applyProfile(stored, ['Temp', 'Qinf', 'aoa', 'FA', 'FN', 'Remark']);
		expect(mapping.columns.map((c) => [c.index, c.field, c.unit])).toEqual([
			[0, 'temperature', 'degF'],
			[1, 'q', 'psf'],
			[2, 'alpha', 'deg'],
			[3, 'axial_force', 'lbf'],
			[4, 'normal_force', 'lbf'],
			[5, null, null]
		]);
		expect(unmatched).toEqual([]);
		expect(validateMapping(mapping, 'tunnel').ok).toBe(true);
	});

	it('lists profile columns the new file lacks', () => {
		const profile: ColumnMapping = { version: 1, columns: [{ index: 0, header: 'AoA', field: 'alpha', unit: 'deg' }, { index: 1, header: 'FN', field: 'normal_force', unit: 'lbf' }] };
		expect(applyProfile(profile, ['AoA']).unmatched).toEqual(['FN']);
	});
});
