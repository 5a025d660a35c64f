/**
 * Row validation and the one entry point other modules call: `readRunFile`.
 *
 * readRunFile picks the reader by content (ZIP magic → XLSX, text → CSV;
 * never by file name), proposes or applies a column mapping, checks it, then
 * streams the data rows into one Float64Array per mapped field, converted to
 * SI with src/lib/aero/units.ts (angles in rad, temperatures in K, masses in
 * kg, speeds in m/s, load factor as a plain number).
 *
 * Outcomes:
 * - throws ImportError when the file cannot be read at all (415 not CSV/XLSX,
 *   400 empty, 413 over a limit, 422 encoding/syntax/damaged archive);
 * - returns `{ ok: false, problems }` when it can be read but needs the user
 *   (mapping incomplete, sheet to choose, cells that are not numbers, ragged
 *   or merged rows); each problem names file, sheet, row and column;
 * - returns `{ ok: true, table }` otherwise.
 */
import { UNITS } from '../../aero/units';
import { openCsv, type ByteSource, type CsvFormat, type Separator } from './csv';
import { ImportError, fmtCount, resolveLimits, type ImportProblem } from './errors';
import { cellText, type DataRow, type PreambleEntry } from './layout';
import { proposeMapping, validateMapping, type ColumnMapping, type RunKind } from './mapping';
import { parseNumberCell, type Cell } from './numbers';
import { isZip, parseSpreadsheetInWorker, readSpreadsheet, type SheetTable, type SpreadsheetLimits } from './xlsx';

export { parseNumberCell, parseNumberText } from './numbers';

export interface ReadRunFileInput {
	/** Original file name, used in messages only. */
	name: string;
	stream?: ByteSource;
	buffer?: Uint8Array;
	kind: RunKind;
	/** Confirmed mapping; when absent one is proposed and used if complete. */
	mapping?: ColumnMapping;
	/** Sheet to read from an XLSX workbook. */
	sheet?: string | null;
	/** 1-based line/row numbers to leave out (the user's choice). */
	excludeRows?: Iterable<number>;
	limits?: Partial<SpreadsheetLimits>;
	/** Override CSV detection. */
	csv?: { separator?: Separator; decimalComma?: boolean };
	/** XLSX worker settings; `false` reads in this thread (tests, trusted files). */
	worker?: { timeoutMs?: number; maxOldGenerationSizeMb?: number } | false;
}

export type SourceFormat = ({ type: 'csv' } & CsvFormat) | { type: 'xlsx'; sheet: string; sheets: string[] };

export interface RunTable {
	format: SourceFormat;
	preamble: PreambleEntry[];
	headers: string[];
	/** Unit id per column as mapped (null for ignored columns). */
	units: (string | null)[];
	/** Raw unit-row cells, or null when the file has no unit row. */
	unitCells: string[] | null;
	headerRow: number;
	/** One array per mapped field, in SI units. */
	columns: Map<string, Float64Array>;
	/** File line (CSV) or sheet row (XLSX) of each stored row. */
	rowNumbers: Uint32Array;
	rowCount: number;
	excludedRows: number[];
}

export type ReadRunFileResult =
	| { ok: true; table: RunTable; mapping: ColumnMapping; warnings: string[] }
	| {
			ok: false;
			problems: ImportProblem[];
			/** Problems found beyond the listed ones. */
			moreProblems: number;
			summary: string;
			mappingProposal: ColumnMapping | null;
			headers?: string[];
			sheets?: string[];
			warnings: string[];
	  };

/** Collects problems up to a cap, counting the rest. */
export class ProblemList {
	readonly items: ImportProblem[] = [];
	more = 0;
	constructor(
		readonly max: number,
		readonly file: string,
		readonly sheet?: string
	) {}
	add(row: number | null, column: number | null, header: string | null, value: string | null, message: string): void {
		if (this.items.length >= this.max) {
			this.more++;
			return;
		}
		const p: ImportProblem = { file: this.file, row, column, header, value, message };
		if (this.sheet !== undefined) p.sheet = this.sheet;
		this.items.push(p);
	}
	get total(): number {
		return this.items.length + this.more;
	}
	summary(): string {
		const n = this.total;
		if (n === 0) return 'no problems';
		const head = `${fmtCount(n)} problem${n === 1 ? '' : 's'} in '${this.file}'${this.sheet ? ` (sheet '${this.sheet}')` : ''}`;
		return this.more > 0 ? `${head}; the first ${fmtCount(this.items.length)} are listed, ${fmtCount(this.more)} more not shown` : head;
	}
}

const ALNUM_PREVIEW = 80;
function preview(v: string): string {
	return v.length > ALNUM_PREVIEW ? `${v.slice(0, ALNUM_PREVIEW)}…` : v;
}

/** "row 57, column 'alpha': 'n/a' is not a number" */
export function cellMessage(row: number, header: string, value: string, reason: string): string {
	return value === '' && reason === 'is empty' ? `row ${row}, column '${header}': the cell is empty` : `row ${row}, column '${header}': '${preview(value)}' ${reason}`;
}

class Growable {
	data: Float64Array;
	constructor(cap: number) {
		this.data = new Float64Array(cap);
	}
	grow(n: number): void {
		if (n <= this.data.length) return;
		const next = new Float64Array(Math.max(n, this.data.length * 2));
		next.set(this.data);
		this.data = next;
	}
}

interface Mapped {
	index: number;
	field: string;
	header: string;
	toSI: (v: number) => number;
	out: Growable;
}

const POINT_NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

/**
 * Where validated rows go as PostgreSQL COPY text (import of a run): each
 * stored row becomes `<prefix><row>\t{v,v,NULL,…}\n` with every column's raw
 * number in the file's units (NULL where a cell is not a number), written in
 * batches of about `batchChars` characters.
 */
export interface CopySink {
	prefix: string;
	write: (text: string) => Promise<void> | void;
	batchChars?: number;
}

/**
 * Validate data rows against a mapping, filling SI column arrays. Rows listed
 * in `exclude` are skipped before validation. `rows` may yield rows or
 * arrays of rows (batches, one await per batch). With `copy`, the COPY text
 * of the samples is produced in the same pass (each cell is read once); it
 * stops at the first problem, since the import then stores nothing.
 */
export async function validateRows(
	rows: AsyncIterable<DataRow | DataRow[]> | Iterable<DataRow | DataRow[]>,
	headers: readonly string[],
	mapping: ColumnMapping,
	opts: { decimalComma: boolean; exclude: Set<number>; problems: ProblemList; uncached?: Set<string>; maxRows: number; copy?: CopySink; expectedRows?: number }
): Promise<{ columns: Map<string, Float64Array>; rowNumbers: Uint32Array; rowCount: number; excluded: number[] }> {
	const cap0 = Math.max(1024, Math.min(opts.expectedRows ?? 0, opts.maxRows));
	const mapped: Mapped[] = [];
	for (const c of mapping.columns) {
		if (c.field === null || c.unit === null) continue;
		const def = UNITS[c.unit];
		mapped.push({ index: c.index, field: c.field, header: c.header, toSI: def.toSI, out: new Growable(cap0) });
	}
	const { decimalComma, exclude, problems } = opts;
	let rowNumbers = new Uint32Array(cap0);
	let n = 0;
	const excluded: number[] = [];
	const width = headers.length;
	// Per column: its mapping (or none), so each cell is looked at once.
	const byColumn: (Mapped | undefined)[] = new Array(width);
	for (const m of mapped) if (m.index < width) byColumn[m.index] = m;
	const extra = mapped.filter((m) => m.index >= width); // refused by the mapping check; kept for safety
	const copy = opts.copy;
	const batchChars = copy?.batchChars ?? 1 << 20;
	let text = '';
	const values = new Float64Array(width);
	const one = (r: DataRow): void => {
		if (exclude.has(r.row)) {
			excluded.push(r.row);
			return;
		}
		const cells: Cell[] = r.cells;
		if (cells.length !== width) {
			let k = cells.length;
			while (k > width && cellText(cells[k - 1]) === '') k--;
			if (k !== width) {
				problems.add(r.row, null, null, null, `row ${r.row} has ${k} cell${k === 1 ? '' : 's'}, the header has ${width}`);
				return;
			}
		}
		const writing = copy !== undefined && problems.total === 0;
		// A comma line whose cells are all plain numbers is its own array literal body.
		const reuse = writing && r.line !== undefined && cells.length === width;
		let allRaw = true;
		let line = writing && !reuse ? `${copy.prefix}${r.row}\t{` : '';
		let good = true;
		for (let j = 0; j < width; j++) {
			const cell = cells[j] ?? null;
			const m = byColumn[j];
			let v: number | string;
			let raw = false;
			if (typeof cell === 'string' && !decimalComma && POINT_NUMBER.test(cell)) {
				v = Number(cell);
				raw = Number.isFinite(v);
				if (!raw) v = 'is too large to be a finite number';
			} else if (m || writing) v = parseNumberCell(cell, decimalComma);
			else continue;
			if (!raw) allRaw = false;
			if (writing && !reuse) {
				if (j) line += ',';
				line += raw ? (cell as string) : typeof v === 'number' ? String(v) : 'NULL';
			}
			if (!m) continue;
			if (typeof v === 'number') values[j] = m.toSI(v);
			else {
				good = false;
				const reason = opts.uncached?.has(`${r.row}:${m.index + 1}`) ? 'is a formula without a saved value; open the file in a spreadsheet program, save it and upload again' : v;
				problems.add(r.row, m.index + 1, m.header, cellText(cell), cellMessage(r.row, m.header, cellText(cell), reason));
			}
		}
		for (const m of extra) {
			good = false;
			problems.add(r.row, m.index + 1, m.header, '', cellMessage(r.row, m.header, '', 'is empty'));
		}
		if (reuse && allRaw) line = `${copy.prefix}${r.row}\t{${r.line}`;
		else if (reuse) {
			line = `${copy.prefix}${r.row}\t{`;
			for (let j = 0; j < width; j++) {
				const cell = cells[j];
				const v = parseNumberCell(cell, decimalComma);
				line += (j ? ',' : '') + (typeof cell === 'string' && !decimalComma && POINT_NUMBER.test(cell) && typeof v === 'number' ? cell : typeof v === 'number' ? String(v) : 'NULL');
			}
		}
		if (writing && problems.total === 0) text += line + '}\n';
		if (!good) return;
		if (n >= rowNumbers.length) {
			const next = new Uint32Array(rowNumbers.length * 2);
			next.set(rowNumbers);
			rowNumbers = next;
		}
		for (const m of mapped) {
			if (n >= m.out.data.length) m.out.grow(n + 1);
			m.out.data[n] = values[m.index];
		}
		rowNumbers[n++] = r.row;
	};
	for await (const item of rows as AsyncIterable<DataRow | DataRow[]>) {
		if (Array.isArray(item)) for (const r of item) one(r);
		else one(item);
		if (copy && text.length >= batchChars) {
			const t = text;
			text = '';
			if (problems.total === 0) await copy.write(t);
		}
	}
	if (copy && text && problems.total === 0) await copy.write(text);
	const columns = new Map<string, Float64Array>();
	for (const m of mapped) columns.set(m.field, m.out.data.subarray(0, n));
	return { columns, rowNumbers: rowNumbers.subarray(0, n), rowCount: n, excluded };
}

/** Prefix of the file for sniffing, plus a source that replays it. */
async function sniff(input: ReadRunFileInput): Promise<{ head: Uint8Array; rest: () => AsyncIterable<Uint8Array | string> }> {
	if (input.buffer) {
		const buf = input.buffer;
		return {
			head: buf.subarray(0, 4096),
			rest: async function* () {
				for (let i = 0; i < buf.length; i += 65536) yield buf.subarray(i, Math.min(buf.length, i + 65536));
			}
		};
	}
	if (!input.stream) throw new TypeError('readRunFile needs a stream or a buffer');
	const it = (input.stream as AsyncIterable<Uint8Array | string>)[Symbol.asyncIterator]
		? (input.stream as AsyncIterable<Uint8Array | string>)[Symbol.asyncIterator]()
		: ((input.stream as Iterable<Uint8Array | string>)[Symbol.iterator]() as unknown as AsyncIterator<Uint8Array | string>);
	const first: Buffer[] = [];
	let size = 0;
	let done = false;
	while (size < 4096) {
		const r = await it.next();
		if (r.done) {
			done = true;
			break;
		}
		const b = typeof r.value === 'string' ? Buffer.from(r.value) : Buffer.from(r.value.buffer, r.value.byteOffset, r.value.byteLength);
		first.push(b);
		size += b.length;
	}
	const head = Buffer.concat(first);
	return {
		head: head.subarray(0, 4096),
		rest: async function* () {
			yield head;
			if (done) return;
			for (;;) {
				const r = await it.next();
				if (r.done) return;
				yield r.value;
			}
		}
	};
}

/** Refuse what is plainly not text: known binary signatures and control bytes. */
export function sniffKind(head: Uint8Array): 'xlsx' | 'csv' {
	if (head.length === 0) return 'csv';
	if (isZip(head)) return 'xlsx';
	if (head[0] === 0xd0 && head[1] === 0xcf && head[2] === 0x11 && head[3] === 0xe0) {
		throw new ImportError(415, 'legacy_xls', 'legacy .xls workbooks are not supported; save the file as .xlsx or CSV');
	}
	if ((head[0] === 0xff && head[1] === 0xfe) || (head[0] === 0xfe && head[1] === 0xff)) return 'csv'; // the CSV reader names UTF-16
	let control = 0;
	for (let i = 0; i < head.length; i++) {
		const b = head[i];
		if (b === 0 || (b < 0x20 && b !== 9 && b !== 10 && b !== 13 && b !== 12) || b === 0x7f) control++;
	}
	if (control > 2 || (control > 0 && head.length < 64)) {
		throw new ImportError(415, 'not_tabular', 'this is not a CSV or XLSX file: its first bytes are binary data', [
			{ byteOffset: 0, message: `${control} control bytes in the first ${head.length} bytes` }
		]);
	}
	return 'csv';
}

async function collect(source: AsyncIterable<Uint8Array | string>, max: number): Promise<Buffer> {
	const parts: Buffer[] = [];
	let size = 0;
	for await (const c of source) {
		const b = typeof c === 'string' ? Buffer.from(c) : Buffer.from(c.buffer, c.byteOffset, c.byteLength);
		size += b.length;
		if (size > max) throw new ImportError(413, 'too_large', `the spreadsheet is larger than the limit of ${fmtCount(max)} bytes`);
		parts.push(b);
	}
	return Buffer.concat(parts);
}

function mappingProblems(list: ProblemList, mapping: ColumnMapping, kind: RunKind, headers: readonly string[], headerRow: number): boolean {
	let bad = false;
	for (const c of mapping.columns) {
		if (c.field === null) continue;
		if (!Number.isInteger(c.index) || c.index < 0 || c.index >= headers.length) {
			list.add(headerRow, null, c.header, null, `the mapping refers to column ${c.index + 1} ('${c.header}'), but the file has ${headers.length} columns`);
			bad = true;
		}
	}
	const check = validateMapping(mapping, kind);
	for (const m of check.messages) list.add(headerRow, null, null, null, m);
	return bad || !check.ok;
}

/** Read, map and validate one run file. See the module comment for outcomes. */
export async function readRunFile(input: ReadRunFileInput): Promise<ReadRunFileResult> {
	const limits = resolveLimits(input.limits);
	const exclude = new Set<number>(input.excludeRows ?? []);
	const { head, rest } = await sniff(input);
	const kind = sniffKind(head);
	const warnings: string[] = [];

	if (kind === 'xlsx') {
		const buffer = input.buffer ?? (await collect(rest(), limits.maxXlsxBytes));
		const res =
			input.worker === false
				? await readSpreadsheet(buffer, { sheet: input.sheet, limits: input.limits })
				: await parseSpreadsheetInWorker(buffer, { sheet: input.sheet, limits: input.limits, ...(input.worker ?? {}) });
		if (res.status === 'needs_sheet') {
			const list = new ProblemList(limits.maxProblems, input.name);
			list.add(null, null, null, null, `the workbook has ${res.sheets.length} sheets (${res.sheets.map((s) => `'${s}'`).join(', ')}); choose the sheet to import`);
			return { ok: false, problems: list.items, moreProblems: 0, summary: list.summary(), mappingProposal: null, sheets: res.sheets, warnings };
		}
		return finishTable(input, res.table, limits.maxProblems, exclude, warnings);
	}

	const reader = await openCsv(rest(), { ...input.csv, limits: input.limits });
	const list = new ProblemList(limits.maxProblems, input.name);
	const mapping = input.mapping ?? proposeMapping(reader.headers, reader.unitCells, input.kind);
	if (mappingProblems(list, mapping, input.kind, reader.headers, reader.headerRow)) {
		reader.close();
		return { ok: false, problems: list.items, moreProblems: list.more, summary: list.summary(), mappingProposal: input.mapping ? null : mapping, headers: reader.headers, warnings };
	}
	const result = await validateRows(reader.batches, reader.headers, mapping, { decimalComma: reader.format.decimalComma, exclude, problems: list, maxRows: limits.maxRows });
	const format: SourceFormat = { type: 'csv', ...reader.format };
	return conclude(input, list, mapping, warnings, format, reader, result);
}

async function finishTable(input: ReadRunFileInput, t: SheetTable, maxProblems: number, exclude: Set<number>, warnings: string[]): Promise<ReadRunFileResult> {
	const list = new ProblemList(maxProblems, input.name, t.sheet);
	const mapping = input.mapping ?? proposeMapping(t.headers, t.unitCells, input.kind);
	for (const m of t.merges) {
		if (m.lastRow < t.headerRow) continue; // a merged title above the table is harmless
		const header = t.headers[m.column - 1] ?? null;
		list.add(m.row, m.column, header, m.ref, `row ${m.row}, column '${header ?? m.column}': cells ${m.ref} are merged; unmerge them so that every row and column has its own value`);
	}
	if (t.formulaCells.length > 0) {
		const first = t.formulaCells.slice(0, 5).map((c) => `row ${c.row} column ${c.column}`);
		warnings.push(`${fmtCount(t.formulaCells.length)} cell${t.formulaCells.length === 1 ? ' holds a formula' : 's hold formulas'}; their saved values were used (${first.join(', ')}${t.formulaCells.length > 5 ? ', …' : ''})`);
	}
	const badMapping = mappingProblems(list, mapping, input.kind, t.headers, t.headerRow);
	if (badMapping) {
		return { ok: false, problems: list.items, moreProblems: list.more, summary: list.summary(), mappingProposal: input.mapping ? null : mapping, headers: t.headers, sheets: t.sheets, warnings };
	}
	const uncached = new Set(t.uncachedFormulaCells.map((c) => `${c.row}:${c.column}`));
	const result = await validateRows(t.rows, t.headers, mapping, { decimalComma: false, exclude, problems: list, uncached, maxRows: Number.MAX_SAFE_INTEGER });
	return conclude(input, list, mapping, warnings, { type: 'xlsx', sheet: t.sheet, sheets: t.sheets }, t, result);
}

function conclude(
	input: ReadRunFileInput,
	list: ProblemList,
	mapping: ColumnMapping,
	warnings: string[],
	format: SourceFormat,
	head: { preamble: PreambleEntry[]; headers: string[]; unitCells: string[] | null; headerRow: number },
	result: Awaited<ReturnType<typeof validateRows>>
): ReadRunFileResult {
	if (result.rowCount === 0 && list.total === 0) {
		list.add(null, null, null, null, result.excluded.length > 0 ? 'every data row was excluded' : `the file has a header (line ${head.headerRow}) but no data rows`);
	}
	if (list.total > 0) {
		return { ok: false, problems: list.items, moreProblems: list.more, summary: list.summary(), mappingProposal: input.mapping ? null : mapping, headers: head.headers, warnings, ...(format.type === 'xlsx' ? { sheets: format.sheets } : {}) };
	}
	if (!input.mapping) warnings.push('the column mapping was proposed automatically; check it before accepting the run');
	const units = head.headers.map((_, i) => mapping.columns.find((c) => c.index === i && c.field !== null)?.unit ?? null);
	return {
		ok: true,
		mapping,
		warnings,
		table: {
			format,
			preamble: head.preamble,
			headers: head.headers,
			units,
			unitCells: head.unitCells,
			headerRow: head.headerRow,
			columns: result.columns,
			rowNumbers: result.rowNumbers,
			rowCount: result.rowCount,
			excludedRows: result.excluded
		}
	};
}
