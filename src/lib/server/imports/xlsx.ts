/**
 * XLSX reading with @e965/xlsx (SheetJS), shaped like the CSV reader's
 * output: preamble, header, unit row, rows of cells (numbers stay numbers).
 *
 * Defences, in order:
 * 1. `inspectZip` reads the archive's central directory before SheetJS sees
 *    the file: truncated archives, more than `maxUncompressedBytes` declared,
 *    suspicious compression ratios, and entries that inflate beyond their
 *    declared size (checked by actually inflating with `maxOutputLength`)
 *    are refused.
 * 2. SheetJS reads only the chosen sheet, dense, with `sheetRows` capping the
 *    rows it materialises; the declared range (`!fullref`) is checked against
 *    `maxSheetRows` and `maxColumns`.
 * 3. `parseSpreadsheetInWorker` runs step 2 in a worker thread with
 *    `resourceLimits` and a timeout, so a file that lies its way past step 1
 *    costs a worker, not the server.
 */
import { createRequire } from 'node:module';
import { Worker } from 'node:worker_threads';
import { promisify } from 'node:util';
import { crc32, inflateRaw } from 'node:zlib';
import * as XLSX from '@e965/xlsx';
import { ImportError, fmtCount, resolveLimits, type ImportLimits } from './errors';
import { detectLayout, type DataRow, type TableHead } from './layout';
import { EXTRACT_SOURCE, WORKER_SOURCE } from './xlsx-extract';

const inflateRawAsync = promisify(inflateRaw);

export interface SpreadsheetLimits extends ImportLimits {
	/** Largest sheet (declared or actual rows) read from a spreadsheet. */
	maxSheetRows: number;
}

export const DEFAULT_SHEET_ROWS = 100_000;

export interface SpreadsheetOptions {
	/** Sheet name; required when the workbook has several sheets. */
	sheet?: string | null;
	limits?: Partial<SpreadsheetLimits>;
}

export interface WorkerOptions extends SpreadsheetOptions {
	/** Wall-clock limit for the worker (default 20 s). */
	timeoutMs?: number;
	/** V8 old-generation heap limit of the worker (default 256 MB). */
	maxOldGenerationSizeMb?: number;
	maxYoungGenerationSizeMb?: number;
}

export interface MergedRange {
	ref: string;
	/** 1-based first/last row and column. */
	row: number;
	column: number;
	lastRow: number;
	lastColumn: number;
}

export interface CellRef {
	row: number;
	column: number;
}

export interface SheetTable extends TableHead {
	sheet: string;
	sheets: string[];
	/** Declared range of the sheet, e.g. "A1:L22". */
	range: string | null;
	rows: DataRow[];
	merges: MergedRange[];
	/** Cells holding a formula (their cached value was used). */
	formulaCells: CellRef[];
	/** Formula cells without a cached value (read as empty). */
	uncachedFormulaCells: (CellRef & { formula: string })[];
}

export type SpreadsheetResult = { status: 'ok'; table: SheetTable } | { status: 'needs_sheet'; sheets: string[] };

export interface ZipEntry {
	name: string;
	method: number;
	compressedSize: number;
	uncompressedSize: number;
}

function resolveSheetLimits(limits?: Partial<SpreadsheetLimits>): SpreadsheetLimits {
	const { maxSheetRows, ...rest } = limits ?? {};
	const base = resolveLimits(rest);
	return { ...base, maxSheetRows: maxSheetRows ?? Math.min(DEFAULT_SHEET_ROWS, base.maxRows) };
}

/** "PK\x03\x04" (or an empty archive's "PK\x05\x06"). */
export function isZip(buf: Uint8Array): boolean {
	return buf.length >= 4 && buf[0] === 0x50 && buf[1] === 0x4b && (buf[2] === 3 || buf[2] === 5) && (buf[3] === 4 || buf[3] === 6);
}

function invalid(message: string): ImportError {
	return new ImportError(422, 'xlsx_invalid', message, [{ message }]);
}

/**
 * Read and check the ZIP central directory (PKWARE APPNOTE 6.3.x, §4.3.12 and
 * §4.3.16) and verify each entry's real inflated size. Throws ImportError.
 */
export async function inspectZip(input: Uint8Array, limits?: Partial<ImportLimits>): Promise<ZipEntry[]> {
	const lim = resolveLimits(limits);
	const buf = Buffer.from(input.buffer, input.byteOffset, input.byteLength);
	if (buf.length > lim.maxXlsxBytes) {
		throw new ImportError(413, 'too_large', `the spreadsheet is ${fmtCount(buf.length)} bytes; the limit is ${fmtCount(lim.maxXlsxBytes)} bytes`);
	}
	let eocd = -1;
	for (let i = buf.length - 22; i >= Math.max(0, buf.length - 22 - 65535); i--) {
		if (buf.readUInt32LE(i) === 0x06054b50) {
			eocd = i;
			break;
		}
	}
	if (eocd < 0) throw invalid('the XLSX file is truncated or damaged: its ZIP directory is missing (upload the complete file)');
	const count = buf.readUInt16LE(eocd + 10);
	const cdSize = buf.readUInt32LE(eocd + 12);
	const cdOffset = buf.readUInt32LE(eocd + 16);
	if (count === 0xffff || cdOffset === 0xffffffff) throw invalid('the XLSX file uses ZIP64, which Spanline does not read');
	if (cdOffset + cdSize > eocd) throw invalid('the XLSX file is truncated or damaged: its ZIP directory points outside the file');
	const entries: ZipEntry[] = [];
	let total = 0;
	let p = cdOffset;
	for (let k = 0; k < count; k++) {
		if (p + 46 > eocd || buf.readUInt32LE(p) !== 0x02014b50) throw invalid('the XLSX file is damaged: bad ZIP directory entry');
		const method = buf.readUInt16LE(p + 10);
		const crc = buf.readUInt32LE(p + 16);
		const compressedSize = buf.readUInt32LE(p + 20);
		const uncompressedSize = buf.readUInt32LE(p + 24);
		const nameLen = buf.readUInt16LE(p + 28);
		const extraLen = buf.readUInt16LE(p + 30);
		const commentLen = buf.readUInt16LE(p + 32);
		const local = buf.readUInt32LE(p + 42);
		const name = buf.toString('utf8', p + 46, p + 46 + nameLen);
		p += 46 + nameLen + extraLen + commentLen;
		total += uncompressedSize;
		if (total > lim.maxUncompressedBytes) {
			throw new ImportError(413, 'xlsx_bomb', `the XLSX file would expand to more than ${fmtCount(lim.maxUncompressedBytes)} bytes (entry '${name}' declares ${fmtCount(uncompressedSize)} bytes)`, [
				{ message: `entry '${name}'` }
			]);
		}
		if (uncompressedSize > 1024 * 1024 && uncompressedSize > lim.maxCompressionRatio * Math.max(1, compressedSize)) {
			throw new ImportError(413, 'xlsx_bomb', `the XLSX entry '${name}' is compressed ${Math.round(uncompressedSize / Math.max(1, compressedSize))}:1, more than the limit of ${lim.maxCompressionRatio}:1; this looks like a ZIP bomb`, [
				{ message: `entry '${name}'` }
			]);
		}
		if (local + 30 > buf.length || buf.readUInt32LE(local) !== 0x04034b50) throw invalid(`the XLSX file is truncated or damaged: entry '${name}' is missing`);
		const start = local + 30 + buf.readUInt16LE(local + 26) + buf.readUInt16LE(local + 28);
		if (start + compressedSize > buf.length) throw invalid(`the XLSX file is truncated: entry '${name}' is cut short`);
		if (method !== 0 && method !== 8) throw invalid(`the XLSX entry '${name}' uses ZIP method ${method}, which is not supported`);
		let data: Buffer;
		if (method === 8) {
			try {
				// Capped at the declared size, which the limits above have bounded.
				data = await inflateRawAsync(buf.subarray(start, start + compressedSize), { maxOutputLength: Math.max(1, uncompressedSize) });
			} catch (err) {
				const code = (err as { code?: string }).code;
				if (code === 'ERR_BUFFER_TOO_LARGE' || err instanceof RangeError) {
					throw new ImportError(413, 'xlsx_bomb', `the XLSX entry '${name}' inflates beyond its declared ${fmtCount(uncompressedSize)} bytes; this looks like a ZIP bomb`, [
						{ message: `entry '${name}'` }
					]);
				}
				throw invalid(`the XLSX file is damaged: entry '${name}' cannot be decompressed`);
			}
		} else if (compressedSize !== uncompressedSize) {
			throw invalid(`the XLSX file is damaged: stored entry '${name}' has inconsistent sizes`);
		} else data = buf.subarray(start, start + compressedSize);
		// The central directory's CRC-32 of the uncompressed data (APPNOTE
		// §4.4.7): a flipped bit that still inflates is caught here.
		if (data.length !== uncompressedSize || crc32(data) >>> 0 !== crc) {
			const message = `the XLSX file is damaged: entry '${name}' does not match its CRC-32 checksum (re-export or upload the file again)`;
			throw new ImportError(422, 'damaged_file', message, [{ message: `entry '${name}'` }]);
		}
		entries.push({ name, method, compressedSize, uncompressedSize });
	}
	if (!entries.some((e) => e.name === 'xl/workbook.xml' || e.name === 'xl/workbook.bin')) {
		throw new ImportError(415, 'not_tabular', 'the ZIP archive is not an XLSX workbook (no xl/workbook.xml)');
	}
	if (entries.some((e) => e.name === 'xl/workbook.bin')) {
		throw new ImportError(415, 'not_tabular', 'binary workbooks (.xlsb) are not supported; save the file as .xlsx');
	}
	return entries;
}

/** List the sheet names of a workbook (after the ZIP checks). */
export async function listSheets(buffer: Uint8Array, limits?: Partial<ImportLimits>): Promise<string[]> {
	await inspectZip(buffer, limits);
	try {
		return XLSX.read(buffer, { type: 'array', bookSheets: true }).SheetNames.slice();
	} catch {
		throw invalid('the XLSX workbook cannot be read');
	}
}

interface Extracted {
	sheets: string[];
	sheet: string | null;
	missing?: string;
	ref?: string | null;
	fullref?: string | null;
	rowsRead?: number;
	rows?: DataRow[];
	merges?: { ref: string; r0: number; c0: number; r1: number; c1: number }[];
	formulas?: [number, number][];
	uncached?: [number, number, string][];
}

type ExtractFn = (xlsx: typeof XLSX, u8: Uint8Array, opts: { sheet: string | null; sheetRows: number }) => Extracted;
let extractInThread: ExtractFn | null = null;

function rangeSize(ref: string): { rows: number; cols: number } {
	const r = XLSX.utils.decode_range(ref);
	return { rows: r.e.r - r.s.r + 1, cols: r.e.c - r.s.c + 1 };
}

/** Turn the extracted sheet into a SheetTable, with the range checks. */
function finish(x: Extracted, lim: SpreadsheetLimits): SpreadsheetResult {
	if (x.missing !== undefined) {
		throw new ImportError(422, 'sheet_missing', `the workbook has no sheet '${x.missing}'; its sheets are ${x.sheets.map((s) => `'${s}'`).join(', ')}`, x.sheets.map((s) => ({ message: s })));
	}
	if (x.sheet === null) return { status: 'needs_sheet', sheets: x.sheets };
	const sheet = x.sheet;
	const declared = x.fullref ?? x.ref ?? null;
	if (declared) {
		const { rows, cols } = rangeSize(declared);
		if (rows > lim.maxSheetRows + 100) {
			throw new ImportError(413, 'xlsx_range', `sheet '${sheet}' declares the range ${declared} (${fmtCount(rows)} rows); the limit for spreadsheets is ${fmtCount(lim.maxSheetRows)} rows (send long time histories as CSV)`, [
				{ message: `range ${declared}` }
			]);
		}
		if (cols > lim.maxColumns) {
			throw new ImportError(413, 'xlsx_range', `sheet '${sheet}' declares the range ${declared} (${fmtCount(cols)} columns); the limit is ${fmtCount(lim.maxColumns)} columns`, [
				{ message: `range ${declared}` }
			]);
		}
	}
	const rows = x.rows ?? [];
	if ((x.rowsRead ?? 0) >= lim.maxSheetRows + 100) {
		throw new ImportError(413, 'too_many_rows', `sheet '${sheet}' has more than ${fmtCount(lim.maxSheetRows)} rows, the limit for spreadsheets`);
	}
	if (rows.length === 0) throw new ImportError(400, 'empty_file', `sheet '${sheet}' is empty`, [{ message: `sheet '${sheet}'` }]);
	for (const r of rows) {
		if (r.cells.length > lim.maxColumns) {
			throw new ImportError(413, 'too_many_columns', `sheet '${sheet}' row ${r.row} has ${fmtCount(r.cells.length)} columns; the limit is ${fmtCount(lim.maxColumns)}`);
		}
	}
	const sample = rows.slice(0, 60);
	const layout = detectLayout(sample, false);
	const { dataIndex, ...head } = layout;
	return {
		status: 'ok',
		table: {
			...head,
			sheet,
			sheets: x.sheets,
			range: x.fullref ?? x.ref ?? null,
			rows: rows.slice(dataIndex),
			merges: (x.merges ?? []).map((m) => ({ ref: m.ref, row: m.r0, column: m.c0, lastRow: m.r1, lastColumn: m.c1 })),
			formulaCells: (x.formulas ?? []).map(([row, column]) => ({ row, column })),
			uncachedFormulaCells: (x.uncached ?? []).map(([row, column, formula]) => ({ row, column, formula }))
		}
	};
}

function sheetOpts(options: SpreadsheetOptions, lim: SpreadsheetLimits) {
	// Read a little past the limit so "too many rows" can be told apart from "exactly at the limit".
	return { sheet: options.sheet ?? null, sheetRows: lim.maxSheetRows + 101 };
}

/** Read a spreadsheet in this thread (small, trusted inputs and tests). */
export async function readSpreadsheet(buffer: Uint8Array, options: SpreadsheetOptions = {}): Promise<SpreadsheetResult> {
	const lim = resolveSheetLimits(options.limits);
	await inspectZip(buffer, lim);
	extractInThread ??= new Function(`${EXTRACT_SOURCE}; return extractSheet;`)() as ExtractFn;
	let x: Extracted;
	try {
		x = extractInThread(XLSX, buffer, sheetOpts(options, lim));
	} catch (err) {
		throw invalid(`the XLSX workbook cannot be read: ${(err as Error).message}`);
	}
	return finish(x, lim);
}

let xlsxPath: string | null = null;

/**
 * Read a spreadsheet in a worker thread with a heap limit and a timeout.
 * Exceeding either terminates the worker and throws ImportError (413).
 */
export async function parseSpreadsheetInWorker(buffer: Uint8Array, options: WorkerOptions = {}): Promise<SpreadsheetResult> {
	const lim = resolveSheetLimits(options.limits);
	await inspectZip(buffer, lim);
	xlsxPath ??= createRequire(import.meta.url).resolve('@e965/xlsx');
	const timeoutMs = options.timeoutMs ?? 20_000;
	const copy = new Uint8Array(buffer.byteLength);
	copy.set(buffer);
	const x = await new Promise<Extracted>((resolve, reject) => {
		const worker = new Worker(WORKER_SOURCE, {
			eval: true,
			workerData: { xlsxPath, buffer: copy.buffer, options: sheetOpts(options, lim) },
			transferList: [copy.buffer],
			resourceLimits: {
				maxOldGenerationSizeMb: options.maxOldGenerationSizeMb ?? 256,
				maxYoungGenerationSizeMb: options.maxYoungGenerationSizeMb ?? 32,
				stackSizeMb: 4
			}
		});
		let settled = false;
		const settle = (fn: () => void) => {
			if (settled) return;
			settled = true;
			clearTimeout(timer);
			fn();
			void worker.terminate();
		};
		const timer = setTimeout(() => {
			settle(() =>
				reject(new ImportError(413, 'worker_timeout', `the spreadsheet took longer than ${timeoutMs / 1000} s to read; it is too large or too complex (send long data as CSV)`))
			);
		}, timeoutMs);
		worker.on('message', (m: { ok: boolean; result?: Extracted; message?: string }) => {
			settle(() => (m.ok ? resolve(m.result as Extracted) : reject(invalid(`the XLSX workbook cannot be read: ${m.message}`))));
		});
		worker.on('error', (err: Error & { code?: string }) => {
			settle(() =>
				reject(
					err.code === 'ERR_WORKER_OUT_OF_MEMORY'
						? new ImportError(413, 'worker_memory', `reading the spreadsheet needed more than the ${options.maxOldGenerationSizeMb ?? 256} MB memory limit; it is too large (send long data as CSV)`)
						: new ImportError(422, 'worker_failed', `the XLSX workbook cannot be read: ${err.message}`)
				)
			);
		});
		worker.on('exit', (code) => {
			settle(() => reject(new ImportError(422, 'worker_failed', `the spreadsheet reader stopped unexpectedly (exit code ${code})`)));
		});
	});
	return finish(x, lim);
}
