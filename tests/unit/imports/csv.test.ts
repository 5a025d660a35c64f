import { Readable } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { openCsv, readCsv } from '../../../src/lib/server/imports/csv';
import { chunked, importError } from './helpers';

describe('CSV format and layout detection', () => {
	const cases: { name: string; text: string; sep: string; dc: boolean; bom: boolean; headers: string[]; units: string[] | null; first: string[]; firstRow: number; preamble?: [string, string][] }[] = [
		{ name: 'comma, plain', text: 'a,b,c\n1,2,3\n4,5,6\n', sep: ',', dc: false, bom: false, headers: ['a', 'b', 'c'], units: null, first: ['1', '2', '3'], firstRow: 2 },
		{ name: 'semicolon, decimal comma', text: 'a;b;c\n1,5;2,25;3\n4,5;5,0;6\n', sep: ';', dc: true, bom: false, headers: ['a', 'b', 'c'], units: null, first: ['1,5', '2,25', '3'], firstRow: 2 },
		{ name: 'semicolon, decimal point', text: 'a;b;c\n1.5;2.25;3\n4.5;5.0;6\n', sep: ';', dc: false, bom: false, headers: ['a', 'b', 'c'], units: null, first: ['1.5', '2.25', '3'], firstRow: 2 },
		{ name: 'tab, decimal comma', text: 'a\tb\tc\n1,5\t2\t3\n4\t5,5\t6\n', sep: '\t', dc: true, bom: false, headers: ['a', 'b', 'c'], units: null, first: ['1,5', '2', '3'], firstRow: 2 },
		{ name: 'BOM and CRLF', text: '\ufeffa,b\r\n1,2\r\n3,4\r\n', sep: ',', dc: false, bom: true, headers: ['a', 'b'], units: null, first: ['1', '2'], firstRow: 2 },
		{ name: 'unit row', text: 'alpha,lift,q\ndeg,[N],Pa\n1,2,3\n', sep: ',', dc: false, bom: false, headers: ['alpha', 'lift', 'q'], units: ['deg', '[N]', 'Pa'], first: ['1', '2', '3'], firstRow: 3 },
		{
			name: 'preamble then header and units',
			text: 'Facility: Test hall 2\nRun;12\n\nAoA;FN;FA\ndeg;lbf;lbf\n1,0;2,0;3,0\n2,0;3,0;4,0\n',
			sep: ';',
			dc: true,
			bom: false,
			headers: ['AoA', 'FN', 'FA'],
			units: ['deg', 'lbf', 'lbf'],
			first: ['1,0', '2,0', '3,0'],
			firstRow: 6,
			preamble: [
				['Facility', 'Test hall 2'],
				['Run', '12']
			]
		},
		{ name: 'quoted fields with separators and newlines', text: 'name,v,w\n"a,b",1,2\n"x\ny",3,4\n', sep: ',', dc: false, bom: false, headers: ['name', 'v', 'w'], units: null, first: ['a,b', '1', '2'], firstRow: 2 }
	];
	it.each(cases)('$name', async (c) => {
		// Small chunks: boundaries fall inside lines and inside the BOM.
		const r = await readCsv(chunked(c.text, 3));
		expect(r.format).toEqual({ separator: c.sep, decimalComma: c.dc, bom: c.bom });
		expect(r.headers).toEqual(c.headers);
		expect(r.unitCells).toEqual(c.units);
		// Rows may also carry the raw `line` (comma files read by the hand splitter).
		expect({ row: r.rows[0].row, cells: r.rows[0].cells }).toEqual({ row: c.firstRow, cells: c.first });
		if (c.preamble) expect(r.preamble.map((p) => [p.key, p.value])).toEqual(c.preamble);
	});

	it('keeps multi-byte characters split across chunks', async () => {
		const r = await readCsv(chunked('α [°],β,T [°C]\n1,2,3\n', 1));
		expect(r.headers).toEqual(['α [°]', 'β', 'T [°C]']);
	});

	it('gives rows as arrays, so __proto__ and constructor headers pollute nothing', async () => {
		const r = await readCsv(chunked('__proto__,constructor,prototype\n1,2,3\n'));
		expect(r.headers).toEqual(['__proto__', 'constructor', 'prototype']);
		expect(Array.isArray(r.rows[0].cells)).toBe(true);
		expect(({} as Record<string, unknown>).polluted).toBeUndefined();
		expect(Object.getPrototypeOf(r.rows[0].cells)).toBe(Array.prototype);
	});
});

describe('CSV errors and limits', () => {
	it('refuses invalid UTF-8 naming byte offset and line', async () => {
		const bytes = Buffer.concat([Buffer.from('a,b\n1,2\n3,'), Buffer.from([0xe9]), Buffer.from('\n')]);
		const e = await importError(readCsv(chunked(bytes, 4)));
		expect(e.status).toBe(422);
		expect(e.message).toBe('the file is not valid UTF-8: byte 0xE9 at byte offset 10 (line 3); save it as UTF-8 (CSV UTF-8) and upload again');
	});

	it('refuses a truncated multi-byte character at the end', async () => {
		const e = await importError(readCsv([Buffer.concat([Buffer.from('a,b\n1,2\n'), Buffer.from([0xce])])]));
		expect(e.code).toBe('encoding');
		expect(e.message).toContain('byte offset 8 (line 3)');
	});

	it('refuses NUL bytes naming offset and line', async () => {
		const e = await importError(readCsv([Buffer.from('a,b\n1,2\n3,\u00004\n')]));
		expect(e.status).toBe(422);
		expect(e.message).toBe('the file contains a NUL byte at byte offset 10 (line 3); it is binary data, not CSV text');
	});

	it('refuses UTF-16', async () => {
		const e = await importError(readCsv([Buffer.from('\ufeffa,b\n', 'utf16le')]));
		expect(e.status).toBe(415);
		expect(e.message).toContain('UTF-16');
	});

	it('refuses 10,000 columns', async () => {
		const header = Array.from({ length: 10_000 }, (_, i) => `c${i}`).join(',');
		const e = await importError(readCsv(chunked(`${header}\n`, 4096), { limits: { maxLineLength: 1_000_000 } }));
		expect(e.status).toBe(413);
		expect(e.message).toBe('line 1 has 10,000 columns; the limit is 500');
	});

	it('refuses a 1 MB header line', async () => {
		const e = await importError(readCsv(chunked(`${'x'.repeat(1024 * 1024)},b\n1,2\n`, 65536)));
		expect(e.status).toBe(413);
		expect(e.message).toBe('line 1 is longer than the limit of 65,536 characters');
	});

	it('refuses a long line further down', async () => {
		const e = await importError(readCsv(chunked(`a,b\n1,2\n3,${'9'.repeat(70_000)}\n`, 65536)));
		expect(e.code).toBe('line_too_long');
		expect(e.message).toContain('line 3');
	});

	it('refuses more rows than the limit', async () => {
		const text = 'a,b\n' + '1,2\n'.repeat(11);
		const e = await importError(readCsv(chunked(text, 16), { limits: { maxRows: 10 } }));
		expect(e.status).toBe(413);
		expect(e.message).toBe('the file has more than 10 data rows (the limit), at line 12');
	});

	it('reports an unclosed quote with its line', async () => {
		const e = await importError(readCsv(chunked('a,b\n1,2\n"3,4\n')));
		expect(e.code).toBe('csv_syntax');
		expect(e.message).toMatch(/^CSV syntax error at line \d+: a quoted field is never closed$/);
	});

	it('refuses an empty file and a blank one', async () => {
		expect((await importError(readCsv([]))).message).toBe('the file is empty');
		expect((await importError(readCsv([Buffer.from('\n\n  \n')]))).status).toBe(400);
	});
});

describe('CSV streaming', () => {
	it('streams 200,000 generated rows from a Readable without holding them', async () => {
		const N = 200_000;
		function* gen() {
			yield 'time [s];v [m/s];h [m]\n';
			let chunk = '';
			for (let i = 0; i < N; i++) {
				chunk += `${(i / 20).toFixed(2).replace('.', ',')};${(50 + (i % 7)).toString()},5;${1000 + i}\n`;
				if (chunk.length > 60_000) {
					yield chunk;
					chunk = '';
				}
			}
			yield chunk;
		}
		const reader = await openCsv(Readable.from(gen(), { objectMode: false }));
		expect(reader.format.decimalComma).toBe(true);
		let n = 0;
		let sumH = 0;
		let lastRow = 0;
		for await (const r of reader.rows) {
			n++;
			sumH += Number(r.cells[2]);
			lastRow = r.row;
		}
		expect(n).toBe(N);
		expect(lastRow).toBe(N + 1);
		// Σ(1000 + i) for i < N
		expect(sumH).toBe(1000 * N + (N * (N - 1)) / 2);
	});
});
