/**
 * The sheet-extraction code that runs inside the spreadsheet worker, kept as
 * plain JavaScript source text.
 *
 * Why a string and not a separate worker file: Vite's `new URL('./x.js',
 * import.meta.url)` asset handling applies to client builds only
 * (vite:asset-import-meta-url has `applyToEnvironment: consumer === 'client'`
 * in Vite 7), so in the SvelteKit server build a sibling worker file would not
 * be emitted and the URL would point at nothing. A source string started with
 * `new Worker(src, { eval: true })` works unchanged under vitest, tsx and the
 * production server bundle. The worker loads SheetJS by an absolute path
 * resolved in the parent with `createRequire(import.meta.url)`.
 *
 * The same text also provides the in-thread reader (through `new Function`),
 * so there is exactly one implementation.
 */

/** Defines `extractSheet(XLSX, u8, opts)`; ES2020, no imports, no template literals. */
export const EXTRACT_SOURCE = String.raw`
function extractSheet(XLSX, u8, opts) {
	var ERRORS = { 0: '#NULL!', 7: '#DIV/0!', 15: '#VALUE!', 23: '#REF!', 29: '#NAME?', 36: '#NUM!', 42: '#N/A', 43: '#GETTING_DATA' };
	var names = XLSX.read(u8, { type: 'array', bookSheets: true }).SheetNames.slice();
	var sheet = opts.sheet;
	if (sheet === null || sheet === undefined) {
		if (names.length !== 1) return { sheets: names, sheet: null };
		sheet = names[0];
	}
	if (names.indexOf(sheet) < 0) return { sheets: names, sheet: null, missing: sheet };
	var wb = XLSX.read(u8, { type: 'array', dense: true, sheets: [sheet], sheetRows: opts.sheetRows, cellFormula: true, cellHTML: false, cellText: false, cellDates: false, cellStyles: false });
	var ws = wb.Sheets[sheet];
	if (!ws) return { sheets: names, sheet: null, missing: sheet };
	var ref = ws['!ref'] || null;
	var fullref = ws['!fullref'] || ref;
	var data = ws['!data'] || [];
	var rows = [];
	var formulas = [];
	var uncached = [];
	var n = Math.min(data.length, opts.sheetRows);
	for (var r = 0; r < n; r++) {
		var row = data[r];
		if (!row) continue;
		var cells = new Array(row.length);
		var any = false;
		for (var c = 0; c < row.length; c++) {
			var cell = row[c];
			var v = null;
			if (cell) {
				if (cell.f) {
					if (cell.v === undefined) uncached.push([r + 1, c + 1, String(cell.f)]);
					else formulas.push([r + 1, c + 1]);
				}
				if (cell.t === 'n') v = cell.v;
				else if (cell.t === 's' || cell.t === 'str') v = cell.v === undefined ? null : String(cell.v);
				else if (cell.t === 'b') v = cell.v ? 'TRUE' : 'FALSE';
				else if (cell.t === 'e') v = cell.w || ERRORS[cell.v] || '#ERROR';
				else if (cell.t === 'd') v = cell.v instanceof Date ? cell.v.toISOString() : String(cell.v);
				else if (cell.v !== undefined && cell.v !== null) v = String(cell.v);
				if (v !== null) any = true;
			}
			cells[c] = v;
		}
		if (any) rows.push({ row: r + 1, cells: cells });
	}
	var merges = (ws['!merges'] || []).map(function (m) {
		return { ref: XLSX.utils.encode_range(m), r0: m.s.r + 1, c0: m.s.c + 1, r1: m.e.r + 1, c1: m.e.c + 1 };
	});
	return { sheets: names, sheet: sheet, ref: ref, fullref: fullref, rowsRead: data.length, rows: rows, merges: merges, formulas: formulas, uncached: uncached };
}
`;

/** Worker harness: load SheetJS from the absolute path, extract, post back. */
export const WORKER_SOURCE =
	EXTRACT_SOURCE +
	String.raw`
const { parentPort, workerData } = require('node:worker_threads');
try {
	const XLSX = require(workerData.xlsxPath);
	const u8 = new Uint8Array(workerData.buffer);
	parentPort.postMessage({ ok: true, result: extractSheet(XLSX, u8, workerData.options) });
} catch (err) {
	parentPort.postMessage({ ok: false, message: String((err && err.message) || err) });
}
`;
