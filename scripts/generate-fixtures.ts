/**
 * Writes the files in fixtures/ from known inputs (see fixtures/README.md).
 * Everything here is invented for Spanline's demo scenario. Deterministic:
 * the noise comes from a seeded generator, so re-running gives the same bytes.
 *
 *   npx tsx scripts/generate-fixtures.ts
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import * as XLSX from '@e965/xlsx';
import { FLIGHT, POLAR, TARE, cd, cl, cm, kcasAt, mulberry32 } from '../fixtures/scenario';

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..', 'fixtures');

const LBF = 0.45359237 * 9.80665; // N per lbf (exact, NIST SP 811 App. B)
const PSF = LBF / (0.3048 * 0.3048); // Pa per lbf/ft²

function write(name: string, data: string | Uint8Array): void {
	const p = join(ROOT, name);
	mkdirSync(dirname(p), { recursive: true });
	writeFileSync(p, data);
}

const f = (v: number, d: number) => v.toFixed(d);

function cleanPolarRows() {
	const rows: { alpha: number; L: number; D: number; M: number }[] = [];
	for (let a = -6; a <= 14; a++) {
		const CL = cl(a);
		const qS = POLAR.Q * POLAR.S;
		rows.push({ alpha: a, L: CL * qS, D: cd(CL) * qS, M: cm(CL) * qS * POLAR.C });
	}
	return rows;
}

// 1. Clean polar, SI, comma separated, wind axes.
{
	const lines = ['Run,Point,Alpha [deg],q [Pa],T [degC],Lift [N],Drag [N],PM [N m]'];
	cleanPolarRows().forEach((r, i) => {
		lines.push([7, i + 1, f(r.alpha, 2), f(POLAR.Q, 1), f(POLAR.T_C, 1), f(r.L, 5), f(r.D, 5), f(r.M, 6)].join(','));
	});
	write('tunnel-clean-polar.csv', lines.join('\n') + '\n');
}

// 2. Another facility: semicolons, decimal comma, preamble, unit row, US customary, body axes.
{
	const dc = (v: number, d: number) => v.toFixed(d).replace('.', ',');
	const T_F = POLAR.T_C * 1.8 + 32;
	const lines = [
		'Facility: Lakeside low-speed tunnel (invented)',
		'Model;SL-2 demo half-wing',
		'Run;27',
		'Operator;A. Tester',
		'',
		'AoA;FN;FA;Qinf;Temp',
		'deg;lbf;lbf;psf;degF'
	];
	for (let a = -4; a <= 12; a++) {
		const CL = cl(a);
		const qS = POLAR.Q * POLAR.S;
		const L = CL * qS;
		const D = cd(CL) * qS;
		const r = (a * Math.PI) / 180;
		const N = L * Math.cos(r) + D * Math.sin(r);
		const A = D * Math.cos(r) - L * Math.sin(r);
		lines.push([dc(a, 2), dc(N / LBF, 6), dc(A / LBF, 6), dc(POLAR.Q / PSF, 6), dc(T_F, 1)].join(';'));
	}
	write('tunnel-other-facility-us.csv', '\ufeff' + lines.join('\r\n') + '\r\n');
}

// 3. Wind-off weight tare: NF = −W·cos α, AF = W·sin α, PM = W·X·cos α.
{
	const lines = ['Alpha [deg],NF [N],AF [N],PM [N m],q [Pa]'];
	for (let a = -6; a <= 14; a += 2) {
		const r = (a * Math.PI) / 180;
		lines.push([f(a, 2), f(-TARE.W * Math.cos(r), 5), f(TARE.W * Math.sin(r), 5), f(TARE.W * TARE.X * Math.cos(r), 6), '0.0'].join(','));
	}
	write('tunnel-tare-wind-off.csv', lines.join('\n') + '\n');
}

// 4. Two sheets: "Run 14" (coefficients) and "Notes".
{
	const aoa: (string | number)[][] = [['Run 14 (clean configuration, invented data)'], ['alpha [deg]', 'CL', 'CD', 'Cm'], ['deg', '-', '-', '-']];
	for (let a = -4; a <= 10; a += 2) {
		const CL = cl(a);
		aoa.push([a, Number(CL.toFixed(6)), Number(cd(CL).toFixed(6)), Number(cm(CL).toFixed(6))]);
	}
	const wb = XLSX.utils.book_new();
	XLSX.utils.book_append_sheet(wb, XLSX.utils.aoa_to_sheet(aoa), 'Run 14');
	XLSX.utils.book_append_sheet(wb, XLSX.utils.aoa_to_sheet([['Notes'], ['Transition strip at 5 % chord.'], ['Repeat of run 12.']]), 'Notes');
	write('tunnel-two-sheets.xlsx', XLSX.write(wb, { type: 'buffer', bookType: 'xlsx' }));
}

// 5. Flight time history with five steady level segments.
{
	const rnd = mulberry32(20250304);
	const noise = (a: number) => (rnd() + rnd() + rnd() - 1.5) * 2 * a; // ~triangular-ish, bounded ±3a
	const KT = 1852 / 3600;
	const lines = ['time [s],KCAS,Hp [ft],OAT [degC],Weight [lb],Nz,AoA [deg],Climb rate [ft/min],ax [m/s2],Thrust [N]'];
	const n = FLIGHT.HZ * FLIGHT.DURATION_S;
	for (let i = 0; i < n; i++) {
		const t = i / FLIGHT.HZ;
		const v = kcasAt(t) * KT; // EAS ≈ CAS at these speeds (compressibility neglected)
		const dv = ((kcasAt(t + 0.05) - kcasAt(t - 0.05)) / 0.1) * KT;
		const massLb = FLIGHT.MASS0_LB - FLIGHT.FUEL_LB_PER_S * t;
		const m = massLb * 0.45359237;
		const q = 0.5 * FLIGHT.RHO0 * v * v;
		const CL = (m * 9.80665) / (q * FLIGHT.S);
		const D = q * FLIGHT.S * (FLIGHT.CD0 + FLIGHT.K * CL * CL);
		const T = D + m * dv;
		const alpha = CL / FLIGHT.CL_ALPHA + FLIGHT.ALPHA0;
		lines.push(
			[
				f(t, 1),
				f(kcasAt(t) + noise(0.3), 1),
				f(FLIGHT.HP_FT + noise(4), 0),
				f(FLIGHT.OAT_C + noise(0.1), 1),
				f(massLb, 1),
				f(1 + noise(0.006), 3),
				f(alpha + noise(0.03), 2),
				f(noise(20), 0),
				f(dv + noise(0.01), 3),
				f(T + noise(15), 0)
			].join(',')
		);
	}
	write('flight-steady-segments.csv', lines.join('\n') + '\n');
}

// 6. Broken files.
{
	const clean = cleanPolarRows();
	const row = (r: (typeof clean)[number], i: number) => [7, i + 1, f(r.alpha, 2), '600.0', '20.0', f(r.L, 5), f(r.D, 5), f(r.M, 6)];
	const header = 'Run,Point,Alpha [deg],q [Pa],T [degC],Lift [N],Drag [N],PM [N m]';

	// wrong types: line 5 alpha 'n/a', line 8 Drag '#DIV/0!', line 12 Lift 'abc'
	const wrong = clean.map(row);
	wrong[3][2] = 'n/a';
	wrong[6][6] = '#DIV/0!';
	wrong[10][5] = 'abc';
	write('broken/wrong-types.csv', [header, ...wrong.map((r) => r.join(','))].join('\n') + '\n');

	const noAlpha = clean.map((r, i) => row(r, i).filter((_, j) => j !== 2));
	write('broken/missing-alpha.csv', ['Run,Point,q [Pa],T [degC],Lift [N],Drag [N],PM [N m]', ...noAlpha.map((r) => r.join(','))].join('\n') + '\n');

	// ragged: line 4 lacks its last cell, line 9 has an extra one
	const ragged = clean.map(row).map((r) => r.join(','));
	ragged[2] = ragged[2].slice(0, ragged[2].lastIndexOf(','));
	ragged[7] = ragged[7] + ',99.9';
	write('broken/ragged-rows.csv', [header, ...ragged].join('\n') + '\n');

	write('broken/empty.csv', '');
	write('broken/header-only.csv', header + '\n');

	const rnd = mulberry32(7);
	const junk = new Uint8Array(2048);
	for (let i = 0; i < junk.length; i++) junk[i] = Math.floor(rnd() * 256);
	write('broken/binary-junk.csv', junk);

	// formulas (cached values) and a merged block inside the data area
	const aoa: (string | number)[][] = [['alpha [deg]', 'CL', 'CD']];
	for (let a = 0; a <= 6; a++) aoa.push([a, Number(cl(a).toFixed(6)), Number(cd(cl(a)).toFixed(6))]);
	const ws = XLSX.utils.aoa_to_sheet(aoa);
	ws['C3'] = { t: 'n', v: Number(cd(cl(1)).toFixed(6)), f: '0.011+0.052*B3^2' };
	ws['C4'] = { t: 'n', v: Number(cd(cl(2)).toFixed(6)), f: '0.011+0.052*B4^2' };
	ws['!merges'] = [XLSX.utils.decode_range('B6:C6')];
	const wb = XLSX.utils.book_new();
	XLSX.utils.book_append_sheet(wb, ws, 'Data');
	write('broken/formulas-merged.xlsx', XLSX.write(wb, { type: 'buffer', bookType: 'xlsx' }));
}

console.log(`fixtures written to ${ROOT}`);
