/**
 * A generated corpus of hostile and broken run files for the import API
 * (issue 7): truncated and bit-flipped CSV and XLSX, ZIP bombs renamed .xlsx,
 * 10,000 columns, a 1 MB header line, prototype-polluting header names,
 * mixed and foreign encodings, NUL bytes, formulas, 1,048,576-row sheet
 * references, non-numbers, junk bodies and hostile query parameters.
 *
 * Every case is built so that it cannot be a valid run: a correct importer
 * must refuse each one with a 4xx and a message. Deterministic (seeded PRNG),
 * so a failure names a case that can be rebuilt exactly.
 */
import { crc32, deflateRawSync } from 'node:zlib';
import * as XLSX from '@e965/xlsx';

export interface HostileCase {
	/** Stable id: family and index, e.g. "csv-bitflip-07". */
	id: string;
	family: string;
	/** The file name sent as ?name=. */
	fileName: string;
	body: Buffer;
	/** Extra query parameters (on top of name). */
	query?: Record<string, string>;
	headers?: Record<string, string>;
}

/** mulberry32: a tiny seeded PRNG (public domain), enough for reproducible picks. */
function prng(seed: number) {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = a;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

const HEAD = ['Run', 'Point', 'Alpha [deg]', 'q [Pa]', 'T [degC]', 'Lift [N]', 'Drag [N]', 'PM [N m]'];

/** Rows of a plausible tunnel run of our own invented scenario (a linear lift curve, a parabolic polar). */
function baseRows(n = 21): string[][] {
	const rows: string[][] = [];
	for (let i = 0; i < n; i++) {
		const a = -6 + i;
		const L = 9.18 * (a + 2);
		const D = 1.188 + 0.0003 * L * L;
		rows.push(['7', String(i + 1), a.toFixed(2), '600.0', '20.0', L.toFixed(5), D.toFixed(5), (-0.324 - 0.0015 * L).toFixed(6)]);
	}
	return rows;
}

export function baseCsv(n = 21): Buffer {
	return Buffer.from([HEAD.join(','), ...baseRows(n).map((r) => r.join(','))].join('\n') + '\n', 'utf8');
}

export function baseXlsx(n = 21): Buffer {
	const aoa: (string | number)[][] = [HEAD, ...baseRows(n).map((r) => r.map(Number))];
	const wb = XLSX.utils.book_new();
	XLSX.utils.book_append_sheet(wb, XLSX.utils.aoa_to_sheet(aoa), 'Run 7');
	return XLSX.write(wb, { type: 'buffer', bookType: 'xlsx' }) as Buffer;
}

/** Minimal ZIP writer (PKWARE APPNOTE 6.3.x, §4.3): local headers, central directory, end record. */
export function zip(entries: { name: string; data: Buffer; declared?: number; store?: boolean }[]): Buffer {
	const locals: Buffer[] = [];
	const centrals: Buffer[] = [];
	let offset = 0;
	for (const e of entries) {
		const comp = e.store ? e.data : deflateRawSync(e.data, { level: 9 });
		const name = Buffer.from(e.name);
		const size = e.declared ?? e.data.length;
		const crc = crc32(e.data);
		const method = e.store ? 0 : 8;
		const lh = Buffer.alloc(30);
		lh.writeUInt32LE(0x04034b50, 0);
		lh.writeUInt16LE(20, 4);
		lh.writeUInt16LE(method, 8);
		lh.writeUInt32LE(crc, 14);
		lh.writeUInt32LE(comp.length, 18);
		lh.writeUInt32LE(size, 22);
		lh.writeUInt16LE(name.length, 26);
		const ch = Buffer.alloc(46);
		ch.writeUInt32LE(0x02014b50, 0);
		ch.writeUInt16LE(20, 4);
		ch.writeUInt16LE(20, 6);
		ch.writeUInt16LE(method, 10);
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

const NS = 'http://schemas.openxmlformats.org/spreadsheetml/2006/main';
const REL = 'http://schemas.openxmlformats.org/officeDocument/2006/relationships';
const xml = (s: string) => Buffer.from('<?xml version="1.0" encoding="UTF-8" standalone="yes"?>' + s);

/** A hand-made one-sheet workbook around the given sheet XML. */
export function workbook(sheetXml: Buffer | string, extra: { name: string; data: Buffer; declared?: number }[] = []): Buffer {
	return zip([
		{
			name: '[Content_Types].xml',
			data: xml(
				'<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types"><Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/><Default Extension="xml" ContentType="application/xml"/><Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/><Override PartName="/xl/worksheets/sheet1.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/></Types>'
			)
		},
		{ name: '_rels/.rels', data: xml(`<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="${REL}/officeDocument" Target="xl/workbook.xml"/></Relationships>`) },
		{ name: 'xl/workbook.xml', data: xml(`<workbook xmlns="${NS}" xmlns:r="${REL}"><sheets><sheet name="Run" sheetId="1" r:id="rId1"/></sheets></workbook>`) },
		{ name: 'xl/_rels/workbook.xml.rels', data: xml(`<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="${REL}/worksheet" Target="worksheets/sheet1.xml"/></Relationships>`) },
		{ name: 'xl/worksheets/sheet1.xml', data: typeof sheetXml === 'string' ? xml(sheetXml) : sheetXml },
		...extra
	]);
}

function sheetXml(dimension: string, rows: string): string {
	return `<worksheet xmlns="${NS}"><dimension ref="${dimension}"/><sheetData>${rows}</sheetData></worksheet>`;
}

const inline = (ref: string, text: string) => `<c r="${ref}" t="inlineStr"><is><t>${text}</t></is></c>`;

function col(i: number): string {
	let s = '';
	for (let n = i + 1; n > 0; n = Math.floor((n - 1) / 26)) s = String.fromCharCode(65 + ((n - 1) % 26)) + s;
	return s;
}

/** Byte range of an entry's (compressed) data in a ZIP, from its local header (APPNOTE §4.3.7). */
function entryData(archive: Buffer, name: string): [number, number] {
	for (let at = 0; at + 30 <= archive.length && archive.readUInt32LE(at) === 0x04034b50; ) {
		const compressed = archive.readUInt32LE(at + 18);
		const nameLen = archive.readUInt16LE(at + 26);
		const extraLen = archive.readUInt16LE(at + 28);
		const start = at + 30 + nameLen + extraLen;
		if (archive.toString('utf8', at + 30, at + 30 + nameLen) === name) return [start, start + compressed];
		at = start + compressed;
	}
	throw new Error(`no entry ${name} in the archive`);
}

/** Offsets just after a separator inside a data line (so the last line is left short a column). */
function shortLineCuts(csv: Buffer, rnd: () => number, count: number): number[] {
	const text = csv.toString('latin1');
	const lines: [number, number][] = [];
	let start = 0;
	for (let i = 0; i < text.length; i++) {
		if (text[i] === '\n') {
			lines.push([start, i]);
			start = i + 1;
		}
	}
	const cuts = new Set<number>();
	while (cuts.size < count) {
		const [s, e] = lines[1 + Math.floor(rnd() * (lines.length - 1))];
		const commas: number[] = [];
		for (let i = s; i < e; i++) if (text[i] === ',') commas.push(i + 1);
		// Keep at most the first 5 of 8 columns: the cut row lacks required force columns.
		const k = Math.floor(rnd() * Math.min(5, commas.length));
		cuts.add(commas[k]);
	}
	return [...cuts];
}

/** The whole corpus (≥ 200 cases). */
export function hostileCorpus(seed = 0x5ba9): HostileCase[] {
	const rnd = prng(seed);
	const out: HostileCase[] = [];
	const add = (family: string, fileName: string, body: Buffer, more: Partial<HostileCase> = {}) => {
		const n = out.filter((c) => c.family === family).length;
		out.push({ id: `${family}-${String(n).padStart(2, '0')}`, family, fileName, body, ...more });
	};
	const csv = baseCsv();
	const xlsx = baseXlsx();
	const headerEnd = csv.indexOf(0x0a);

	// Truncated CSV: inside the header line (no data at all), and mid-row leaving the last row short.
	for (let i = 0; i < 10; i++) add('csv-truncated-header', 'run.csv', csv.subarray(0, 1 + Math.floor(rnd() * (headerEnd - 1))));
	for (const cut of shortLineCuts(csv, rnd, 20)) add('csv-truncated-row', 'run.csv', csv.subarray(0, cut));

	// Bit-flipped CSV: the top bit set on one byte gives a stray UTF-8 continuation byte.
	for (let i = 0; i < 30; i++) {
		const b = Buffer.from(csv);
		const at = Math.floor(rnd() * b.length);
		b[at] |= 0x80;
		add('csv-bitflip', 'run.csv', b);
	}
	// NUL bytes anywhere.
	for (let i = 0; i < 15; i++) {
		const b = Buffer.from(csv);
		b[Math.floor(rnd() * b.length)] = 0;
		add('csv-nul', 'run.csv', b);
	}

	// Truncated XLSX: the central directory is at the end, so any cut breaks the archive.
	for (let i = 0; i < 20; i++) add('xlsx-truncated', 'run.xlsx', xlsx.subarray(0, Math.floor(xlsx.length * (0.05 + 0.9 * rnd()))));
	// Bit-flipped XLSX: one byte inverted inside the compressed sheet data, so
	// either inflating fails or the entry no longer matches its CRC-32.
	const [from, to] = entryData(xlsx, 'xl/worksheets/sheet1.xml');
	for (let i = 0; i < 30; i++) {
		const b = Buffer.from(xlsx);
		b[from + Math.floor(rnd() * (to - from))] ^= 0xff;
		add('xlsx-bitflip', 'run.xlsx', b);
	}

	// ZIP bombs renamed .xlsx.
	const zeros = Buffer.alloc(64 * 1024 * 1024);
	add('zip-bomb', 'run.xlsx', workbook(Buffer.concat([xml(`<worksheet xmlns="${NS}"><sheetData>`), zeros]))); // 64 MiB of NUL, ~1000:1
	add('zip-bomb', 'run.xlsx', workbook(xml(sheetXml('A1:B2', `<row r="1">${inline('A1', 'alpha')}</row>`)), [{ name: 'xl/media/padding.bin', data: zeros }]));
	add('zip-bomb', 'run.xlsx', workbook(Buffer.concat([xml(`<worksheet xmlns="${NS}"><sheetData>`), Buffer.alloc(8 * 1024 * 1024, 0x20)]))); // 8 MiB of blanks
	// Declares 1,000 bytes but inflates to 16 MiB (a liar).
	add('zip-bomb', 'bomb.xlsx', zip([{ name: 'xl/worksheets/sheet1.xml', data: Buffer.alloc(16 * 1024 * 1024, 0x41), declared: 1000 }]));
	add('zip-bomb', 'run.xlsx', zip(Array.from({ length: 2000 }, (_, i) => ({ name: `xl/worksheets/sheet${i + 1}.xml`, data: Buffer.alloc(64 * 1024, 0x20) }))));

	// 10,000 columns.
	{
		const head = Array.from({ length: 10_000 }, (_, i) => `c${i}`).join(',');
		const row = Array.from({ length: 10_000 }, (_, i) => String(i % 7)).join(',');
		add('wide', 'run.csv', Buffer.from(`${head}\n${row}\n${row}\n`));
		add('wide', 'run.csv', Buffer.from(`${HEAD.join(',')},${head}\n${baseRows(3).map((r) => `${r.join(',')},${row}`).join('\n')}\n`));
		const cells = Array.from({ length: 10_000 }, (_, i) => inline(`${col(i)}1`, `c${i}`)).join('');
		add('wide', 'run.xlsx', workbook(xml(sheetXml('A1:NTP2', `<row r="1">${cells}</row>`))));
	}
	// A 1 MB header line (and a 1 MB data line).
	add('long-line', 'run.csv', Buffer.from(`${'Alpha'.padEnd(1024 * 1024, 'x')},Lift\n1,2\n`));
	add('long-line', 'run.csv', Buffer.from(`${HEAD.join(',')}\n${'1'.repeat(1024 * 1024)},2,3,4,5,6,7,8\n`));
	add('long-line', 'run.csv', Buffer.from(`${HEAD.map((h) => `"${h}${' '.repeat(200 * 1024)}"`).join(',')}\n1,2,3,4,5,6,7,8\n`));

	// Prototype-polluting header names in place of the required columns.
	for (const names of [
		['__proto__', 'constructor', 'prototype'],
		['__proto__', '__proto__', '__proto__'],
		['constructor', 'toString', 'valueOf'],
		['hasOwnProperty', '__defineGetter__', '__lookupSetter__'],
		['__proto__.polluted', 'constructor.prototype.polluted', '["__proto__"]']
	]) {
		add('proto-headers', 'run.csv', Buffer.from(`${names.join(',')}\n1,2,3\n4,5,6\n7,8,9\n`));
		const aoa = [names, [1, 2, 3], [4, 5, 6]];
		const wb = XLSX.utils.book_new();
		XLSX.utils.book_append_sheet(wb, XLSX.utils.aoa_to_sheet(aoa), 'Run');
		add('proto-headers', 'run.xlsx', XLSX.write(wb, { type: 'buffer', bookType: 'xlsx' }) as Buffer);
	}
	add('proto-headers', 'run.csv', csv, { headers: { 'x-spanline-mapping': Buffer.from('{"__proto__":{"polluted":1},"version":1,"columns":[]}').toString('base64url') } });
	add('proto-headers', 'run.csv', csv, { headers: { 'x-spanline-mapping': Buffer.from('{"version":1,"columns":[{"index":0,"header":"__proto__","field":"__proto__","unit":null}]}').toString('base64url') } });

	// Mixed and foreign encodings.
	const withHeader = (h: Buffer) => Buffer.concat([h, csv.subarray(headerEnd)]);
	add('encoding', 'run.csv', Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(csv.toString('utf8'), 'utf16le')]));
	add('encoding', 'run.csv', Buffer.from(csv.toString('utf8'), 'utf16le'));
	add('encoding', 'run.csv', Buffer.concat([Buffer.from([0xfe, 0xff]), Buffer.from(csv.toString('utf8'), 'utf16le').swap16()]));
	add('encoding', 'run.csv', Buffer.concat([Buffer.from([0xff, 0xfe, 0, 0]), Buffer.from(csv.toString('utf8').split('').flatMap((c) => [c.charCodeAt(0), 0, 0, 0]))]));
	add('encoding', 'run.csv', withHeader(Buffer.from('Run,Point,Alpha [\xb0],q [Pa],T [\xb0C],Lift [N],Drag [N],PM [N m]', 'latin1')));
	add('encoding', 'run.csv', Buffer.concat([Buffer.from('Run,Point,Alpha [°],q [Pa],T [\xb0C]', 'utf8').subarray(0, 0), Buffer.from('Run,Point,Alpha [°],', 'utf8'), Buffer.from('q [Pa],T [\xb0C],Lift [N],Drag [N],PM [N m]', 'latin1'), csv.subarray(headerEnd)]));
	add('encoding', 'run.csv', withHeader(Buffer.from([0xc3, 0x28, 0x2c, 0xa0, 0xa1, 0x2c, 0xe2, 0x28, 0xa1, 0x2c, 0xf0, 0x28, 0x8c, 0xbc])));
	add('encoding', 'run.csv', withHeader(Buffer.from([0xed, 0xa0, 0x80, 0x2c, 0xef, 0xbf, 0xbe, 0x2c, 0xc0, 0xaf]))); // surrogate half, overlong '/'
	add('encoding', 'run.csv', Buffer.concat([csv, Buffer.from('7,22,16.00,600.0,20.0,\x93quoted\x94,1,2\n', 'latin1')])); // Windows-1252 quotes at the end

	// Formulas where numbers belong.
	for (const f of ['=1+2', '=HYPERLINK("http://example.invalid","x")', '+1+1', '-1+cmd|\' /C calc\'!A0', '@SUM(1,2)', '=CMD()', '\t=1', '=A1*1E999']) {
		const rows = baseRows();
		rows[3][5] = f.includes(',') || f.includes('"') ? `"${f.replace(/"/g, '""')}"` : f;
		add('formula', 'run.csv', Buffer.from([HEAD.join(','), ...rows.map((r) => r.join(','))].join('\n') + '\n'));
	}
	{
		const rows = `<row r="1">${HEAD.map((h, i) => inline(`${col(i)}1`, h)).join('')}</row>` +
			Array.from({ length: 5 }, (_, r) => `<row r="${r + 2}">${HEAD.map((_, i) => `<c r="${col(i)}${r + 2}"><f>${i}+${r}</f></c>`).join('')}</row>`).join('');
		add('formula', 'run.xlsx', workbook(xml(sheetXml('A1:H6', rows))));
	}

	// 1,048,576-row references.
	for (const dim of ['A1:H1048576', 'A1:XFD1048576', 'A1048576', 'A1:B1048577', 'XFD1:XFD1048576']) {
		add('huge-ref', 'run.xlsx', workbook(xml(sheetXml(dim, `<row r="1">${inline('A1', 'Alpha [deg]')}${inline('B1', 'Lift [N]')}</row><row r="1048576"><c r="A1048576"><v>1</v></c><c r="B1048576"><v>2</v></c></row>`))));
	}

	// Values that are not finite numbers.
	for (const v of ['1e999', '-1e999', 'NaN', 'Infinity', '-Infinity', '1e309', '0x1A', '1_000', '١٢٣', '１２３']) {
		const rows = baseRows();
		rows[5][5] = v;
		add('not-finite', 'run.csv', Buffer.from([HEAD.join(','), ...rows.map((r) => r.join(','))].join('\n') + '\n'));
	}

	// Junk bodies.
	const junk: [string, Buffer][] = [
		['run.csv', Buffer.alloc(0)],
		['run.csv', Buffer.from('   \n\n\t\n')],
		['run.csv', Buffer.from(HEAD.join(',') + '\n')],
		['run.csv', Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13])],
		['run.csv', Buffer.from('%PDF-1.7\n%\xe2\xe3\xcf\xd3\n1 0 obj\n', 'latin1')],
		['run.csv', Buffer.from([0x1f, 0x8b, 0x08, 0, 0, 0, 0, 0, 0, 3])],
		['run.csv', Buffer.from([0x7f, 0x45, 0x4c, 0x46, 2, 1, 1, 0])],
		['run.csv', Buffer.from('<!doctype html><script>alert(1)</script>')],
		['run.csv', Buffer.from('{"Run":7,"Alpha":[1,2,3]}')],
		['run.xlsx', Buffer.from('PK\x03\x04 this is not a zip', 'latin1')],
		['run.xlsx', Buffer.alloc(0)],
		['run.xls', Buffer.from([0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1, 0, 0, 0, 0])],
		['run.csv', Buffer.from('"' + 'a,'.repeat(1000))]
	];
	for (const [name, body] of junk) add('junk', name, body);

	// A CSV whose every row is bad (problem list capped, message still clear).
	add('all-bad-rows', 'run.csv', Buffer.from([HEAD.join(','), ...Array.from({ length: 5000 }, (_, i) => `7,${i + 1},x,y,z,w,v,u`)].join('\n') + '\n'));
	// Not in the corpus, because a correct importer may accept them: a CSV body named .xlsx
	// (the content decides the format) and rows with extra cells beyond the header.

	// Hostile query parameters and headers with an otherwise valid file.
	const q: Record<string, string>[] = [
		{ kind: 'wind' },
		{ kind: "tunnel' OR '1'='1" },
		{ configurationId: '1 OR 1=1' },
		{ configurationId: '-1' },
		{ configurationId: '99999999999999999999' },
		{ configurationId: '999999999' },
		{ tareRunId: "1; DROP TABLE runs; --" },
		{ tareRunId: '999999999' },
		{ repeatOfRunId: '<script>alert(1)</script>' },
		{ exclude: '1-99999999999' },
		{ exclude: "1;DELETE FROM samples" },
		{ exclude: '5-3' },
		{ runNumber: 'x'.repeat(10_000) },
		{ sheet: 'x'.repeat(10_000) },
		{ profile: 'x'.repeat(10_000) },
		{ isTare: 'maybe' },
		{ name: 'x'.repeat(300) },
		{ name: '   ' }
	];
	for (const extra of q) add('query', 'run.csv', csv, { query: extra });
	for (const h of ['!!!not-base64!!!', Buffer.from('{"version":2,"columns":[]}').toString('base64url'), Buffer.from('[]').toString('base64url'), 'A'.repeat(200_000)]) {
		add('mapping-header', 'run.csv', csv, { headers: { 'x-spanline-mapping': h } });
	}
	return out;
}
