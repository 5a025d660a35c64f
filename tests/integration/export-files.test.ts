/**
 * Exports read back: the campaign workbook and CSV (@e965/xlsx, csv-parse)
 * against the database, a run's points and deltas with units in the
 * headers, and user text that a spreadsheet would run as a formula
 * (configuration name starting with '=', run number starting with '@')
 * neutralised with a leading apostrophe (OWASP "CSV Injection").
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import * as XLSX from '@e965/xlsx';
import { parse } from 'csv-parse/sync';
import { QueryTypes } from 'sequelize';
import { getSequelize, closeSequelize } from '../../src/lib/server/db';
import { buildSummaryCampaign, type SummaryCampaign } from './summary-campaign';
import { baseUrl } from '../support/env';
import { testAddress } from '../support/session';

let C: SummaryCampaign;
const q = <T extends object>(sql: string, replacements: Record<string, unknown>) => getSequelize().query<T>(sql, { replacements, type: QueryTypes.SELECT });

async function download(path: string, token = C.tokens.program_manager) {
	const res = await fetch(`${baseUrl()}/api/v1${path}`, { headers: { authorization: `Bearer ${token}`, 'x-forwarded-for': testAddress() } });
	return { status: res.status, type: res.headers.get('content-type') ?? '', disposition: res.headers.get('content-disposition') ?? '', bytes: Buffer.from(await res.arrayBuffer()) };
}

function sheetRows(wb: XLSX.WorkBook, name: string): unknown[][] {
	return XLSX.utils.sheet_to_json(wb.Sheets[name], { header: 1, defval: null, raw: true }) as unknown[][];
}

beforeAll(async () => {
	C = await buildSummaryCampaign();
});
afterAll(async () => {
	await closeSequelize();
});

describe('campaign export', () => {
	it('writes an XLSX with one sheet per table whose deltas match the database', async () => {
		const f = await download(`/campaigns/${C.campaignId}/export?format=xlsx`);
		expect(f.status).toBe(200);
		expect(f.type).toContain('spreadsheetml');
		expect(f.disposition).toMatch(/attachment; filename="SUM-[0-9a-f]+-summary\.xlsx"/);
		const wb = XLSX.read(f.bytes);
		expect(wb.SheetNames).toEqual(['Summary', 'Configurations', 'Deltas', 'Worst offenders', 'Runs']);
		const rows = sheetRows(wb, 'Deltas');
		const header = rows[0] as string[];
		const col = (h: string) => header.indexOf(h);
		const body = rows.slice(1);
		const stored = await q<{ run_number: string; quantity: string; value: number | null; uncertainty: number | null; tolerance: number }>(
			`SELECT r.run_number, d.quantity, d.value, d.uncertainty, d.tolerance FROM deltas d JOIN runs r ON r.id = d.run_id WHERE d.is_current AND r.campaign_id = :id`,
			{ id: C.campaignId }
		);
		expect(body.length).toBe(stored.length);
		for (const s of stored) {
			const runCell = s.run_number.startsWith('@') ? `'${s.run_number}` : s.run_number;
			const row = body.find((r) => r[col('run')] === runCell && r[col('quantity')] === s.quantity);
			expect(row, `${s.run_number} ${s.quantity}`).toBeDefined();
			expect(row![col('value')]).toBe(s.value);
			expect(row![col('uncertainty (k = 2)')]).toBe(s.uncertainty);
			expect(row![col('tolerance')]).toBe(s.tolerance);
		}
		// Units in the configuration sheet's headers.
		const confHeader = sheetRows(wb, 'Configurations')[0] as string[];
		expect(confHeader).toContain('ΔCD0 mean [counts]');
		expect(confHeader).toContain('Δα_L0 mean [deg]');
		expect(confHeader).toContain('ΔCLα mean [%]');
		// The caution is in the workbook.
		expect(sheetRows(wb, 'Summary').some((r) => r[0] === 'caution' && String(r[1]).includes('preliminary engineering estimates'))).toBe(true);
	});

	it('neutralises user text that starts with = or @ in every sheet and in CSV', async () => {
		const wb = XLSX.read((await download(`/campaigns/${C.campaignId}/export?format=xlsx`)).bytes);
		const conf = sheetRows(wb, 'Configurations').slice(1);
		expect(conf.map((r) => r[0])).toContain(`'${C.configurationName}`);
		const runs = sheetRows(wb, 'Runs').slice(1);
		expect(runs.map((r) => r[0])).toContain(`'${C.runNumbers[2]}`);
		// No text cell anywhere begins with a formula character.
		for (const name of wb.SheetNames) {
			for (const r of sheetRows(wb, name)) for (const cell of r) if (typeof cell === 'string') expect(cell, `${name}: ${cell}`).not.toMatch(/^[=+\-@\t\r]/);
			// And the workbook holds no formula cells at all.
			const ws = wb.Sheets[name];
			for (const k of Object.keys(ws)) if (!k.startsWith('!')) expect((ws[k] as XLSX.CellObject).f).toBeUndefined();
		}
		const csv = await download(`/campaigns/${C.campaignId}/export?format=csv&table=deltas`);
		expect(csv.type).toContain('text/csv');
		const records = parse(csv.bytes, { bom: true, columns: true, skip_empty_lines: true }) as Record<string, string>[];
		expect(records.some((r) => r.configuration === `'${C.configurationName}`)).toBe(true);
		expect(records.some((r) => r.run === `'${C.runNumbers[2]}`)).toBe(true);
		for (const r of records) for (const v of Object.values(r)) expect(v).not.toMatch(/^[=+@\t\r]|^-[^0-9.]/);
	});

	it('writes the deltas CSV with the stored values (negative numbers stay numbers)', async () => {
		const csv = await download(`/campaigns/${C.campaignId}/export?format=csv&table=deltas`);
		const records = parse(csv.bytes, { bom: true, columns: true, skip_empty_lines: true }) as Record<string, string>[];
		const stored = await q<{ n: number }>(`SELECT count(*)::int AS n FROM deltas d JOIN runs r ON r.id = d.run_id WHERE d.is_current AND r.campaign_id = :id`, { id: C.campaignId });
		expect(records.length).toBe(stored[0].n);
		const negative = records.filter((r) => r.value.startsWith('-'));
		for (const r of negative) expect(Number.isFinite(Number(r.value))).toBe(true);
	});

	it('refuses an unknown table (400) and an unknown campaign (404)', async () => {
		expect((await download(`/campaigns/${C.campaignId}/export?format=csv&table=secrets`)).status).toBe(400);
		expect((await download('/campaigns/987654321/export')).status).toBe(404);
	});
});

describe('run export', () => {
	it('writes the run points with units in the headers, equal to the database', async () => {
		const id = C.runIds[1];
		const f = await download(`/runs/${id}/export?format=xlsx`);
		expect(f.status).toBe(200);
		const wb = XLSX.read(f.bytes);
		expect(wb.SheetNames).toEqual(['Run', 'Points', 'Deltas']);
		const rows = sheetRows(wb, 'Points');
		const header = rows[0] as string[];
		expect(header.slice(0, 6)).toEqual(['point', 'alpha [deg]', 'CL [-]', 'CD [-]', 'Cm [-]', 'q [Pa]']);
		const stored = await q<{ idx: number; alpha_deg: number; cl: number; cd: number; q_pa: number }>(
			'SELECT p.idx, p.alpha_deg, p.cl, p.cd, p.q_pa FROM points p JOIN reductions rd ON rd.id = p.reduction_id AND rd.is_current WHERE rd.run_id = :id ORDER BY p.idx',
			{ id }
		);
		expect(rows.length - 1).toBe(stored.length);
		stored.forEach((p, i) => {
			expect(rows[i + 1].slice(0, 4)).toEqual([p.idx, p.alpha_deg, p.cl, p.cd]);
			expect(rows[i + 1][5]).toBe(p.q_pa);
		});
		const deltas = sheetRows(wb, 'Deltas').slice(1);
		const storedD = await q<{ quantity: string; value: number | null }>('SELECT quantity, value FROM deltas WHERE is_current AND run_id = :id', { id });
		expect(deltas.length).toBe(storedD.length);
		for (const d of storedD) expect(deltas.find((r) => r[0] === d.quantity)![2]).toBe(d.value);
	});

	it('writes the points as CSV read back by csv-parse', async () => {
		const id = C.runIds[0];
		const f = await download(`/runs/${id}/export?format=csv&table=points`, C.tokens.test_engineer);
		expect(f.disposition).toContain('.csv');
		const records = parse(f.bytes, { bom: true, columns: true, skip_empty_lines: true, cast: false }) as Record<string, string>[];
		const stored = await q<{ cl: number }>('SELECT p.cl FROM points p JOIN reductions rd ON rd.id = p.reduction_id AND rd.is_current WHERE rd.run_id = :id ORDER BY p.idx', { id });
		expect(records.map((r) => Number(r['CL [-]']))).toEqual(stored.map((p) => p.cl));
	});
});
