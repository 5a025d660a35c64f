import { crc32, deflateRawSync, inflateRawSync } from 'node:zlib';
import * as XLSX from '@e965/xlsx';
import { describe, expect, it } from 'vitest';
import { inspectZip, listSheets, parseSpreadsheetInWorker, readSpreadsheet } from '../../../src/lib/server/imports/xlsx';
import { readRunFile } from '../../../src/lib/server/imports/validate';
import { fixture, importError } from './helpers';

function book(sheets: Record<string, XLSX.WorkSheet>): Buffer {
	const wb = XLSX.utils.book_new();
	for (const [name, ws] of Object.entries(sheets)) XLSX.utils.book_append_sheet(wb, ws, name);
	return XLSX.write(wb, { type: 'buffer', bookType: 'xlsx' }) as Buffer;
}

/** Minimal ZIP writer (PKWARE APPNOTE 6.3, §4.3): local headers, central directory, end record. */
function zip(entries: { name: string; data: Buffer; declared?: number }[]): Buffer {
	const locals: Buffer[] = [];
	const centrals: Buffer[] = [];
	let offset = 0;
	for (const e of entries) {
		const comp = deflateRawSync(e.data);
		const name = Buffer.from(e.name);
		const size = e.declared ?? e.data.length;
		const crc = crc32(e.data);
		const lh = Buffer.alloc(30);
		lh.writeUInt32LE(0x04034b50, 0);
		lh.writeUInt16LE(20, 4);
		lh.writeUInt16LE(8, 8);
		lh.writeUInt32LE(crc, 14);
		lh.writeUInt32LE(comp.length, 18);
		lh.writeUInt32LE(size, 22);
		lh.writeUInt16LE(name.length, 26);
		const ch = Buffer.alloc(46);
		ch.writeUInt32LE(0x02014b50, 0);
		ch.writeUInt16LE(20, 4);
		ch.writeUInt16LE(20, 6);
		ch.writeUInt16LE(8, 10);
		ch.writeUInt32LE(crc, 16);
		ch.writeUInt32LE(comp.length, 20);
		ch.writeUInt32LE(size, 24);
		ch.writeUInt16LE(name.length, 28);
		ch.writeUInt32LE(offset, 42);
		locals.push(lh, name, comp);
		centrals.push(ch, name);
		offset += 30 + name.length + comp.length;
	}
	const cd = Buffer.concat(centrals);
	const end = Buffer.alloc(22);
	end.writeUInt32LE(0x06054b50, 0);
	end.writeUInt16LE(entries.length, 8);
	end.writeUInt16LE(entries.length, 10);
	end.writeUInt32LE(cd.length, 12);
	end.writeUInt32LE(offset, 16);
	return Buffer.concat([...locals, cd, end]);
}

const workbookXml = Buffer.from('<?xml version="1.0"?><workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"/>');

/**
 * A hand-made workbook whose sheet declares `dimension` (writing such a sheet
 * through SheetJS would make the writer walk the whole declared range).
 */
function workbookWithDimension(dimension: string): Buffer {
	const ns = 'http://schemas.openxmlformats.org/spreadsheetml/2006/main';
	const rel = 'http://schemas.openxmlformats.org/officeDocument/2006/relationships';
	const x = (s: string) => Buffer.from('<?xml version="1.0" encoding="UTF-8" standalone="yes"?>' + s);
	return zip([
		{ name: '[Content_Types].xml', data: x('<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types"><Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/><Default Extension="xml" ContentType="application/xml"/><Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/><Override PartName="/xl/worksheets/sheet1.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/></Types>') },
		{ name: '_rels/.rels', data: x('<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="' + rel + '/officeDocument" Target="xl/workbook.xml"/></Relationships>') },
		{ name: 'xl/workbook.xml', data: x('<workbook xmlns="' + ns + '" xmlns:r="' + rel + '"><sheets><sheet name="Big" sheetId="1" r:id="rId1"/></sheets></workbook>') },
		{ name: 'xl/_rels/workbook.xml.rels', data: x('<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="' + rel + '/worksheet" Target="worksheets/sheet1.xml"/></Relationships>') },
		{ name: 'xl/worksheets/sheet1.xml', data: x('<worksheet xmlns="' + ns + '"><dimension ref="' + dimension + '"/><sheetData><row r="1"><c r="A1" t="inlineStr"><is><t>alpha</t></is></c><c r="B1" t="inlineStr"><is><t>CL</t></is></c></row><row r="2"><c r="A2"><v>1</v></c><c r="B2"><v>0.2</v></c></row></sheetData></worksheet>') }
	]);
}

describe('XLSX sheets', () => {
	it('lists sheets and requires a choice when there are several', async () => {
		const buf = fixture('tunnel-two-sheets.xlsx');
		expect(await listSheets(buf)).toEqual(['Run 14', 'Notes']);
		expect(await readSpreadsheet(buf)).toEqual({ status: 'needs_sheet', sheets: ['Run 14', 'Notes'] });
	});

	it('names the available sheets when the requested one is missing', async () => {
		const e = await importError(readSpreadsheet(fixture('tunnel-two-sheets.xlsx'), { sheet: 'Run 15' }));
		expect(e.status).toBe(422);
		expect(e.message).toBe("the workbook has no sheet 'Run 15'; its sheets are 'Run 14', 'Notes'");
	});

	it('reads a single sheet without being told its name; numbers stay numbers', async () => {
		const r = await readSpreadsheet(book({ Only: XLSX.utils.aoa_to_sheet([['alpha', 'CL'], [1, 0.255], [2, 0.34]]) }));
		expect(r.status).toBe('ok');
		if (r.status !== 'ok') return;
		expect(r.table.headers).toEqual(['alpha', 'CL']);
		expect(r.table.rows).toEqual([
			{ row: 2, cells: [1, 0.255] },
			{ row: 3, cells: [2, 0.34] }
		]);
	});

	it('reads error cells as their text so validation names them', async () => {
		const ws = XLSX.utils.aoa_to_sheet([['alpha [deg]', 'CL', 'CD'], [1, 0.2, 0.013], [2, 0.3, 0.015]]);
		ws['C3'] = { t: 'e', v: 7 };
		const r = await readRunFile({ name: 'err.xlsx', buffer: book({ S: ws }), kind: 'tunnel', worker: false });
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.problems[0]).toMatchObject({ sheet: 'S', row: 3, column: 3, value: '#DIV/0!', message: "row 3, column 'CD': '#DIV/0!' is a spreadsheet error, not a number" });
	});
});

describe('XLSX limits and hostile archives', () => {
	it('refuses a sheet declaring 1,048,576 rows', async () => {
		const e = await importError(parseSpreadsheetInWorker(workbookWithDimension('A1:L1048576')));
		expect(e.status).toBe(413);
		expect(e.message).toBe("sheet 'Big' declares the range A1:L1048576 (1,048,576 rows); the limit for spreadsheets is 100,000 rows (send long time histories as CSV)");
	});

	it('refuses a sheet declaring 16,384 columns', async () => {
		const e = await importError(readSpreadsheet(workbookWithDimension('A1:XFD20')));
		expect(e.message).toBe("sheet 'Big' declares the range A1:XFD20 (16,384 columns); the limit is 500 columns");
	});

	it('reads the hand-made workbook when its dimension is honest', async () => {
		const r = await readSpreadsheet(workbookWithDimension('A1:B2'));
		expect(r.status === 'ok' && r.table.rows).toEqual([{ row: 2, cells: [1, 0.2] }]);
	});

	it('refuses a truncated XLSX', async () => {
		const buf = fixture('tunnel-two-sheets.xlsx');
		const e = await importError(readRunFile({ name: 'cut.xlsx', buffer: buf.subarray(0, Math.floor(buf.length / 2)), kind: 'tunnel' }));
		expect(e.status).toBe(422);
		expect(e.message).toBe('the XLSX file is truncated or damaged: its ZIP directory is missing (upload the complete file)');
	});

	it('refuses an entry with an extreme compression ratio (zip-bomb-like)', async () => {
		const bomb = zip([
			{ name: 'xl/workbook.xml', data: workbookXml },
			{ name: 'xl/worksheets/sheet1.xml', data: Buffer.alloc(20 * 1024 * 1024, 0x20) }
		]);
		const e = await importError(inspectZip(bomb));
		expect(e.status).toBe(413);
		expect(e.code).toBe('xlsx_bomb');
		expect(e.message).toMatch(/^the XLSX entry 'xl\/worksheets\/sheet1\.xml' is compressed \d+:1, more than the limit of 200:1; this looks like a ZIP bomb$/);
	});

	it('refuses an entry that inflates beyond its declared size', async () => {
		const liar = zip([
			{ name: 'xl/workbook.xml', data: workbookXml },
			{ name: 'xl/worksheets/sheet1.xml', data: Buffer.alloc(4 * 1024 * 1024, 0x41), declared: 1000 }
		]);
		const e = await importError(readRunFile({ name: 'liar.xlsx', buffer: liar, kind: 'tunnel' }));
		expect(e.status).toBe(413);
		expect(e.message).toBe("the XLSX entry 'xl/worksheets/sheet1.xml' inflates beyond its declared 1,000 bytes; this looks like a ZIP bomb");
	});

	it('refuses archives declaring more than the total uncompressed limit', async () => {
		const big = zip([
			{ name: 'xl/workbook.xml', data: workbookXml },
			{ name: 'xl/worksheets/sheet1.xml', data: Buffer.alloc(2 * 1024 * 1024, 0x41) }
		]);
		const e = await importError(inspectZip(big, { maxUncompressedBytes: 1024 * 1024, maxCompressionRatio: 1e6 }));
		expect(e.message).toBe("the XLSX file would expand to more than 1,048,576 bytes (entry 'xl/worksheets/sheet1.xml' declares 2,097,152 bytes)");
	});

	it('refuses a ZIP that is not a workbook', async () => {
		const e = await importError(inspectZip(zip([{ name: 'readme.txt', data: Buffer.from('hello') }])));
		expect(e.status).toBe(415);
		expect(e.message).toBe('the ZIP archive is not an XLSX workbook (no xl/workbook.xml)');
	});
});

describe('XLSX worker', () => {
	it('reads the same table in the worker as in this thread', async () => {
		const buf = fixture('tunnel-two-sheets.xlsx');
		expect(await parseSpreadsheetInWorker(buf, { sheet: 'Run 14' })).toEqual(await readSpreadsheet(buf, { sheet: 'Run 14' }));
	});

	it('terminates the worker on timeout with a clear ImportError', async () => {
		// 1 ms cannot cover starting a worker and loading SheetJS.
		const e = await importError(parseSpreadsheetInWorker(fixture('tunnel-two-sheets.xlsx'), { sheet: 'Run 14', timeoutMs: 1 }));
		expect(e.status).toBe(413);
		expect(e.code).toBe('worker_timeout');
		expect(e.message).toBe('the spreadsheet took longer than 0.001 s to read; it is too large or too complex (send long data as CSV)');
	});

	it('terminates the worker when it exceeds its heap limit', async () => {
		const rows: number[][] = [];
		for (let i = 0; i < 30_000; i++) rows.push(Array.from({ length: 12 }, (_, j) => i + j / 16));
		const buf = book({ Long: XLSX.utils.aoa_to_sheet([Array.from({ length: 12 }, (_, j) => `c${j}`), ...rows]) });
		const e = await importError(parseSpreadsheetInWorker(buf, { maxOldGenerationSizeMb: 16, maxYoungGenerationSizeMb: 4, timeoutMs: 60_000 }));
		expect(e.status).toBe(413);
		expect(e.code).toBe('worker_memory');
		expect(e.message).toBe('reading the spreadsheet needed more than the 16 MB memory limit; it is too large (send long data as CSV)');
	}, 60_000);
});

describe('XLSX entry checksums', () => {
	/** [start, end) of an entry's compressed data, from its central-directory record (APPNOTE §4.3.12). */
	function entryData(buf: Buffer, wanted: string): [number, number] {
		let eocd = buf.length - 22;
		while (buf.readUInt32LE(eocd) !== 0x06054b50) eocd--;
		let p = buf.readUInt32LE(eocd + 16);
		for (let k = 0; k < buf.readUInt16LE(eocd + 10); k++) {
			const nameLen = buf.readUInt16LE(p + 28);
			const name = buf.toString('utf8', p + 46, p + 46 + nameLen);
			if (name === wanted) {
				const local = buf.readUInt32LE(p + 42);
				const start = local + 30 + buf.readUInt16LE(local + 26) + buf.readUInt16LE(local + 28);
				return [start, start + buf.readUInt32LE(p + 20)];
			}
			p += 46 + nameLen + buf.readUInt16LE(p + 30) + buf.readUInt16LE(p + 32);
		}
		throw new Error(`no entry ${wanted}`);
	}

	it('refuses a bit-flipped copy of tunnel-two-sheets.xlsx: 422 damaged_file naming the entry', async () => {
		// The fixture stores its entries uncompressed (ZIP method 0), so only the CRC-32 can notice the flip.
		const good = fixture('tunnel-two-sheets.xlsx');
		const name = 'xl/worksheets/sheet1.xml';
		const [from, to] = entryData(good, name);
		const bad = Buffer.from(good);
		bad[(from + to) >> 1] ^= 0xff;
		const e = await importError(inspectZip(bad));
		expect(e.status).toBe(422);
		expect(e.code).toBe('damaged_file');
		expect(e.message).toContain(`'${name}'`);
		expect(e.message).toContain('CRC-32');
		await expect(inspectZip(good)).resolves.toBeInstanceOf(Array);
		await expect(readRunFile({ name: 'run.xlsx', buffer: bad, kind: 'tunnel', sheet: 'Run 14', worker: false })).rejects.toMatchObject({ status: 422, code: 'damaged_file' });
	});

	it('refuses a deflated entry whose flipped byte still inflates', async () => {
		const ws = XLSX.utils.aoa_to_sheet([['alpha', 'CL'], ...Array.from({ length: 200 }, (_, i) => [i / 10, 0.1 * (i / 10) + 0.2])]);
		const good = (() => {
			const wb = XLSX.utils.book_new();
			XLSX.utils.book_append_sheet(wb, ws, 'Run');
			return XLSX.write(wb, { type: 'buffer', bookType: 'xlsx', compression: true }) as Buffer;
		})();
		const name = 'xl/worksheets/sheet1.xml';
		const [from, to] = entryData(good, name);
		const size = inflateRawSync(good.subarray(from, to)).length;
		// The first byte whose inversion still inflates to the same size: inflating alone cannot catch it.
		let bad: Buffer | null = null;
		for (let at = from + 8; at < to && !bad; at++) {
			const b = Buffer.from(good);
			b[at] ^= 0xff;
			try {
				if (inflateRawSync(b.subarray(from, to)).length === size) bad = b;
			} catch {
				/* this flip breaks the deflate stream; try the next byte */
			}
		}
		expect(bad).not.toBeNull();
		const e = await importError(inspectZip(bad!));
		expect(e.code).toBe('damaged_file');
		expect(e.message).toContain(`'${name}'`);
	});

	it('refuses a stored (uncompressed) entry whose bytes changed', async () => {
		const data = Buffer.from('<workbook/>');
		const name = Buffer.from('xl/workbook.xml');
		const crc = crc32(data);
		const lh = Buffer.alloc(30);
		lh.writeUInt32LE(0x04034b50, 0);
		lh.writeUInt32LE(crc, 14);
		lh.writeUInt32LE(data.length, 18);
		lh.writeUInt32LE(data.length, 22);
		lh.writeUInt16LE(name.length, 26);
		const ch = Buffer.alloc(46);
		ch.writeUInt32LE(0x02014b50, 0);
		ch.writeUInt32LE(crc, 16);
		ch.writeUInt32LE(data.length, 20);
		ch.writeUInt32LE(data.length, 24);
		ch.writeUInt16LE(name.length, 28);
		const cd = Buffer.concat([ch, name]);
		const end = Buffer.alloc(22);
		end.writeUInt32LE(0x06054b50, 0);
		end.writeUInt16LE(1, 8);
		end.writeUInt16LE(1, 10);
		end.writeUInt32LE(cd.length, 12);
		end.writeUInt32LE(30 + name.length + data.length, 16);
		const ok = Buffer.concat([lh, name, data, cd, end]);
		await expect(inspectZip(ok)).resolves.toHaveLength(1);
		const bad = Buffer.from(ok);
		bad[30 + name.length + 1] ^= 0x01;
		const e = await importError(inspectZip(bad));
		expect(e.code).toBe('damaged_file');
		expect(e.message).toContain("'xl/workbook.xml'");
	});
});
