/**
 * Each fixture reads back to the values of the scenario it was generated
 * from (fixtures/scenario.ts), converted to SI. Conversion factors used for
 * the expected values: 1 lbf = 4.4482216152605 N and 1 lbf/ft² =
 * 47.88025898 Pa (NIST SP 811, 2008, App. B.8); °F → K by
 * (F + 459.67)·5/9 (NIST SP 811 §B.9); 1 kt = 1852/3600 m/s, 1 ft = 0.3048 m,
 * 1 lb = 0.45359237 kg (exact definitions).
 */
import { describe, expect, it } from 'vitest';
import { FLIGHT, POLAR, TARE, cd, cl, cm } from '../../../fixtures/scenario';
import { readRunFile, type RunTable } from '../../../src/lib/server/imports/validate';
import { fixture } from './helpers';

const DEG = Math.PI / 180;
const LBF = 4.4482216152605;
const PSF = 47.88025898;

async function table(name: string, kind: 'tunnel' | 'flight', sheet?: string): Promise<RunTable> {
	const r = await readRunFile({ name, buffer: fixture(name), kind, sheet });
	if (!r.ok) throw new Error(`${name}: ${r.problems.map((p) => p.message).join('; ')}`);
	return r.table;
}

const col = (t: RunTable, f: string) => {
	const c = t.columns.get(f);
	if (!c) throw new Error(`no column ${f}`);
	return Array.from(c);
};

describe('fixtures read back to their generating polar', () => {
	it('tunnel-clean-polar.csv: lift, drag and moment from CL = 0.085(α+2) with stall, CD = 0.011 + 0.052 CL²', async () => {
		const t = await table('tunnel-clean-polar.csv', 'tunnel');
		expect(t.rowCount).toBe(21);
		expect(t.format).toMatchObject({ type: 'csv', separator: ',', decimalComma: false });
		const alpha = col(t, 'alpha');
		const lift = col(t, 'lift');
		const drag = col(t, 'drag');
		const pm = col(t, 'pitching_moment');
		const qS = POLAR.Q * POLAR.S;
		for (let i = 0; i < 21; i++) {
			const a = -6 + i;
			expect(alpha[i]).toBeCloseTo(a * DEG, 12);
			// values are written with 5–6 decimals
			expect(lift[i]).toBeCloseTo(cl(a) * qS, 4);
			expect(drag[i]).toBeCloseTo(cd(cl(a)) * qS, 4);
			expect(pm[i]).toBeCloseTo(cm(cl(a)) * qS * POLAR.C, 5);
		}
		expect(col(t, 'q').every((q) => q === 600)).toBe(true);
		expect(col(t, 'temperature')[0]).toBeCloseTo(293.15, 9);
		expect(Array.from(t.rowNumbers.subarray(0, 3))).toEqual([2, 3, 4]);
	});

	it('tunnel-other-facility-us.csv: body-axis lbf and psf convert back to the same polar', async () => {
		const t = await table('tunnel-other-facility-us.csv', 'tunnel');
		expect(t.format).toMatchObject({ type: 'csv', separator: ';', decimalComma: true, bom: true });
		expect(t.preamble.map((p) => p.key)).toEqual(['Facility', 'Model', 'Run', 'Operator']);
		expect(t.preamble[2].value).toBe('27');
		expect(t.unitCells).toEqual(['deg', 'lbf', 'lbf', 'psf', 'degF']);
		expect(t.rowCount).toBe(17);
		const alpha = col(t, 'alpha');
		const N = col(t, 'normal_force');
		const A = col(t, 'axial_force');
		const q = col(t, 'q');
		for (let i = 0; i < 17; i++) {
			const a = alpha[i];
			// rotate body axes back to wind axes: L = N cos α − A sin α, D = N sin α + A cos α
			const CL = (N[i] * Math.cos(a) - A[i] * Math.sin(a)) / (q[i] * POLAR.S);
			const CD = (N[i] * Math.sin(a) + A[i] * Math.cos(a)) / (q[i] * POLAR.S);
			expect(a).toBeCloseTo((-4 + i) * DEG, 12);
			expect(CL).toBeCloseTo(cl(-4 + i), 5);
			expect(CD).toBeCloseTo(cd(cl(-4 + i)), 5);
		}
		expect(q[0]).toBeCloseTo(12.531261 * PSF, 4);
		expect(q[0]).toBeCloseTo(600, 3);
		expect(N[0]).toBeCloseTo(-4.138613 * LBF, 6);
		expect(col(t, 'temperature')[0]).toBeCloseTo(((68 + 459.67) * 5) / 9, 9);
	});

	it('tunnel-tare-wind-off.csv: weight tares NF = −W cos α, AF = W sin α', async () => {
		const t = await table('tunnel-tare-wind-off.csv', 'tunnel');
		expect(t.rowCount).toBe(11);
		const alpha = col(t, 'alpha');
		const nf = col(t, 'normal_force');
		const af = col(t, 'axial_force');
		const pm = col(t, 'pitching_moment');
		for (let i = 0; i < 11; i++) {
			expect(nf[i]).toBeCloseTo(-TARE.W * Math.cos(alpha[i]), 4);
			expect(af[i]).toBeCloseTo(TARE.W * Math.sin(alpha[i]), 4);
			expect(pm[i]).toBeCloseTo(TARE.W * TARE.X * Math.cos(alpha[i]), 5);
		}
	});

	it('tunnel-two-sheets.xlsx: asks for a sheet, then reads "Run 14" coefficients', async () => {
		const first = await readRunFile({ name: 'tunnel-two-sheets.xlsx', buffer: fixture('tunnel-two-sheets.xlsx'), kind: 'tunnel' });
		expect(first.ok).toBe(false);
		if (first.ok) return;
		expect(first.sheets).toEqual(['Run 14', 'Notes']);
		expect(first.problems[0].message).toBe("the workbook has 2 sheets ('Run 14', 'Notes'); choose the sheet to import");

		const t = await table('tunnel-two-sheets.xlsx', 'tunnel', 'Run 14');
		expect(t.format).toEqual({ type: 'xlsx', sheet: 'Run 14', sheets: ['Run 14', 'Notes'] });
		expect(t.preamble[0].key).toBe('Run 14 (clean configuration, invented data)');
		expect(t.headerRow).toBe(2);
		expect(t.rowCount).toBe(8);
		const CL = col(t, 'CL');
		const CD = col(t, 'CD');
		col(t, 'alpha').forEach((a, i) => {
			expect(a).toBeCloseTo((-4 + 2 * i) * DEG, 12);
			expect(CL[i]).toBeCloseTo(cl(-4 + 2 * i), 6);
			expect(CD[i]).toBeCloseTo(cd(cl(-4 + 2 * i)), 6);
		});
		expect(Array.from(t.rowNumbers.subarray(0, 2))).toEqual([4, 5]);
	});

	it('flight-steady-segments.csv: 3,000 samples at 10 Hz in SI', async () => {
		const t = await table('flight-steady-segments.csv', 'flight');
		expect(t.rowCount).toBe(FLIGHT.HZ * FLIGHT.DURATION_S);
		const time = col(t, 'time');
		expect(time[10]).toBeCloseTo(1.0, 12);
		const cas = col(t, 'airspeed_cas');
		const hp = col(t, 'pressure_altitude');
		const w = col(t, 'weight');
		const nz = col(t, 'load_factor');
		const oat = col(t, 'oat');
		// middle of the third segment, t = 150 s (row index 1500); noise is bounded (±3 × amplitude)
		const i = 1500;
		expect(cas[i] / (1852 / 3600)).toBeGreaterThan(100 - 1);
		expect(cas[i] / (1852 / 3600)).toBeLessThan(100 + 1);
		expect(Math.abs(hp[i] / 0.3048 - FLIGHT.HP_FT)).toBeLessThanOrEqual(12.5);
		expect(w[0]).toBeCloseTo(FLIGHT.MASS0_LB * 0.45359237, 6);
		expect(Math.abs(nz[i] - 1)).toBeLessThan(0.02);
		expect(Math.abs(oat[i] - (FLIGHT.OAT_C + 273.15))).toBeLessThan(0.35);
		expect(t.columns.has('thrust')).toBe(true);
		expect(t.columns.has('climb_rate')).toBe(true);
	});
});

describe('broken fixtures give problems naming row and column', () => {
	const read = (name: string, kind: 'tunnel' | 'flight' = 'tunnel') => readRunFile({ name, buffer: fixture(`broken/${name}`), kind });

	it('wrong-types.csv', async () => {
		const r = await read('wrong-types.csv');
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.problems.map((p) => [p.row, p.column, p.header, p.value])).toEqual([
			[5, 3, 'Alpha [deg]', 'n/a'],
			[8, 7, 'Drag [N]', '#DIV/0!'],
			[12, 6, 'Lift [N]', 'abc']
		]);
		expect(r.problems[0].message).toBe("row 5, column 'Alpha [deg]': 'n/a' is not a number (a missing-value mark)");
		expect(r.problems[0].file).toBe('wrong-types.csv');
	});

	it('wrong-types.csv imports once the bad rows are excluded', async () => {
		const r = await readRunFile({ name: 'wrong-types.csv', buffer: fixture('broken/wrong-types.csv'), kind: 'tunnel', excludeRows: [5, 8, 12] });
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(r.table.rowCount).toBe(18);
		expect(r.table.excludedRows).toEqual([5, 8, 12]);
		expect(Array.from(r.table.rowNumbers)).not.toContain(5);
	});

	it('missing-alpha.csv names the missing field and proposes a mapping', async () => {
		const r = await read('missing-alpha.csv');
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.problems).toEqual([{ file: 'missing-alpha.csv', row: 1, column: null, header: null, value: null, message: 'missing alpha (angle of attack)' }]);
		expect(r.mappingProposal?.columns.find((c) => c.field === 'lift')?.header).toBe('Lift [N]');
	});

	it('ragged-rows.csv', async () => {
		const r = await read('ragged-rows.csv');
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.problems.map((p) => p.message)).toEqual(['row 4 has 7 cells, the header has 8', 'row 9 has 9 cells, the header has 8']);
	});

	it('header-only.csv', async () => {
		const r = await read('header-only.csv');
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.problems[0].message).toBe('the file has a header (line 1) but no data rows');
	});

	it('formulas-merged.xlsx: merged cells with their range; formulas flagged', async () => {
		const r = await read('formulas-merged.xlsx');
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.problems).toEqual([
			{
				file: 'formulas-merged.xlsx',
				sheet: 'Data',
				row: 6,
				column: 2,
				header: 'CL',
				value: 'B6:C6',
				message: "row 6, column 'CL': cells B6:C6 are merged; unmerge them so that every row and column has its own value"
			}
		]);
		expect(r.warnings[0]).toBe("2 cells hold formulas; their saved values were used (row 3 column 3, row 4 column 3)");
	});

	it.each([
		['empty.csv', 400, 'the file is empty'],
		['binary-junk.csv', 415, 'this is not a CSV or XLSX file: its first bytes are binary data']
	])('%s is refused (%i)', async (name, status, message) => {
		await expect(read(name)).rejects.toMatchObject({ name: 'ImportError', status, message });
	});

	it('binary junk is recognised by content, whatever the name', async () => {
		await expect(readRunFile({ name: 'looks-fine.xlsx', buffer: fixture('broken/binary-junk.csv'), kind: 'tunnel' })).rejects.toMatchObject({ status: 415 });
		const r = await readRunFile({ name: 'really-a-csv.xlsx', buffer: fixture('tunnel-clean-polar.csv'), kind: 'tunnel' });
		expect(r.ok).toBe(true);
	});
});
