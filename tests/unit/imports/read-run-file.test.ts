import { Readable } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { readRunFile } from '../../../src/lib/server/imports/validate';
import { applyProfile, toProfile, proposeMapping } from '../../../src/lib/server/imports/mapping';
import { fixture } from './helpers';

describe('readRunFile', () => {
	it('stops listing at 200 problems and says how many more', async () => {
		const text = 'alpha [deg],CL,CD\n' + Array.from({ length: 300 }, (_, i) => `${i},x,0.01`).join('\n') + '\n';
		const r = await readRunFile({ name: 'many.csv', stream: Readable.from([Buffer.from(text)]), kind: 'tunnel' });
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.problems).toHaveLength(200);
		expect(r.moreProblems).toBe(100);
		expect(r.summary).toBe("300 problems in 'many.csv'; the first 200 are listed, 100 more not shown");
		expect(r.problems[199].message).toBe("row 201, column 'CL': 'x' is not a number");
	});

	it('uses a saved profile on a file from the same facility', async () => {
		const proposal = proposeMapping(['AoA', 'FN', 'FA', 'Qinf', 'Temp'], ['deg', 'lbf', 'lbf', 'psf', 'degF'], 'tunnel');
		const { mapping } = applyProfile(toProfile(proposal), ['AoA', 'FN', 'FA', 'Qinf', 'Temp']);
		const r = await readRunFile({ name: 'us.csv', buffer: fixture('tunnel-other-facility-us.csv'), kind: 'tunnel', mapping });
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(r.warnings).toEqual([]);
		expect(r.table.units).toEqual(['deg', 'lbf', 'lbf', 'psf', 'degF']);
	});

	it('reports a mapping that points past the last column', async () => {
		const r = await readRunFile({
			name: 'clean.csv',
			buffer: fixture('tunnel-clean-polar.csv'),
			kind: 'tunnel',
			mapping: { version: 1, columns: [{ index: 0, header: 'Alpha', field: 'alpha', unit: 'deg' }, { index: 40, header: 'CL', field: 'CL', unit: '1' }, { index: 41, header: 'CD', field: 'CD', unit: '1' }] }
		});
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.problems[0].message).toBe("the mapping refers to column 41 ('CL'), but the file has 8 columns");
		expect(r.mappingProposal).toBeNull();
	});

	it('refuses legacy .xls by its signature', async () => {
		const ole = Buffer.from([0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1, 0, 0, 0, 0]);
		await expect(readRunFile({ name: 'old.xls', buffer: ole, kind: 'tunnel' })).rejects.toMatchObject({ status: 415, message: 'legacy .xls workbooks are not supported; save the file as .xlsx or CSV' });
	});

	it('reads an XLSX that arrives as a stream, in the worker', async () => {
		const buf = fixture('tunnel-two-sheets.xlsx');
		const r = await readRunFile({ name: 'two.xlsx', stream: Readable.from([buf.subarray(0, 100), buf.subarray(100)]), kind: 'tunnel', sheet: 'Run 14' });
		expect(r.ok && r.table.rowCount).toBe(8);
	});
});
