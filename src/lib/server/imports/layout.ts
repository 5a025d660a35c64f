/**
 * Where the table starts: preamble lines (key/value metadata such as
 * "Facility: …", "Run;12"), the header row, an optional unit row right under
 * it, then data. Shared by the CSV and XLSX readers so both give one shape.
 *
 * Heuristic (common practice, no source): the data width is the most frequent
 * width of mostly-numeric rows; the header is the first row that is at least
 * half that wide and mostly text; the next row is a unit row when it is text
 * and at least half of its cells name a known unit.
 */
import { parseUnit } from '../../aero/units';
import { ImportError } from './errors';
import { isNumericCell, type Cell } from './numbers';

export interface PreambleEntry {
	/** 1-based line (CSV) or row (XLSX) number. */
	row: number;
	key: string;
	value: string;
}

export interface TableHead {
	preamble: PreambleEntry[];
	headers: string[];
	/** Raw unit-row cells (same length as headers), or null when there is no unit row. */
	unitCells: string[] | null;
	headerRow: number;
	unitRow: number | null;
}

/** A data row: its 1-based line/row number and its cells. */
export interface DataRow {
	row: number;
	cells: Cell[];
	/** The line as read, when the CSV separator is a comma and no quotes were involved (lets the import reuse it as COPY text). */
	line?: string;
}

export function cellText(c: Cell): string {
	if (c === null) return '';
	return typeof c === 'number' ? String(c) : c.trim();
}

function trimmedLength(cells: Cell[]): number {
	let n = cells.length;
	while (n > 0 && cellText(cells[n - 1]) === '') n--;
	return n;
}

function counts(cells: Cell[], decimalComma: boolean): { nonEmpty: number; numeric: number } {
	let nonEmpty = 0;
	let numeric = 0;
	for (const c of cells) {
		if (cellText(c) === '') continue;
		nonEmpty++;
		if (isNumericCell(c, decimalComma)) numeric++;
	}
	return { nonEmpty, numeric };
}

function isUnitRow(cells: Cell[], decimalComma: boolean): boolean {
	let nonEmpty = 0;
	let units = 0;
	for (const c of cells) {
		const t = cellText(c);
		if (t === '') continue;
		nonEmpty++;
		if (isNumericCell(c, decimalComma)) return false;
		if (parseUnit(t) !== null) units++;
	}
	return nonEmpty > 0 && units * 2 >= nonEmpty;
}

function preambleEntry(row: number, cells: Cell[]): PreambleEntry | null {
	const texts = cells.map(cellText).filter((t) => t !== '');
	if (texts.length === 0) return null;
	if (texts.length === 1) {
		const m = /^([^:=]+?)\s*[:=]\s*(.*)$/.exec(texts[0]);
		return m ? { row, key: m[1], value: m[2] } : { row, key: texts[0], value: '' };
	}
	return { row, key: texts[0].replace(/\s*[:=]$/, ''), value: texts.slice(1).join(' ') };
}

export interface Layout extends TableHead {
	/** Index into the sample rows of the first data row. */
	dataIndex: number;
}

/**
 * Find preamble, header, unit row and the start of data in the first rows of
 * a table. `rows[i].row` carries the file's own line/row number.
 */
export function detectLayout(rows: DataRow[], decimalComma: boolean): Layout {
	const widths = new Map<number, number>();
	for (const r of rows) {
		const { nonEmpty, numeric } = counts(r.cells, decimalComma);
		if (nonEmpty > 0 && numeric * 2 >= nonEmpty && numeric > 0) {
			const w = trimmedLength(r.cells);
			widths.set(w, (widths.get(w) ?? 0) + 1);
		}
	}
	let width = 0;
	let best = -1;
	for (const [w, n] of widths) if (n > best || (n === best && w > width)) [width, best] = [w, n];
	if (width === 0) for (const r of rows) width = Math.max(width, trimmedLength(r.cells));
	const minHeader = Math.max(1, Math.ceil(width / 2));
	const stats = rows.map((r) => counts(r.cells, decimalComma));
	const isData = (i: number) => stats[i].numeric >= minHeader && stats[i].numeric * 2 >= stats[i].nonEmpty;
	const isText = (i: number) => stats[i].nonEmpty > 0 && stats[i].numeric * 4 <= stats[i].nonEmpty;

	let h = -1;
	let u = -1;
	const d = rows.findIndex((_, i) => isData(i));
	if (d > 0) {
		// The header sits right above the data, or above a unit row.
		if (d >= 2 && isUnitRow(rows[d - 1].cells, decimalComma) && isText(d - 2) && stats[d - 2].nonEmpty >= minHeader) {
			h = d - 2;
			u = d - 1;
		} else if (isText(d - 1)) h = d - 1;
	} else if (d < 0) {
		// No data at all (a header-only file): take the widest text row.
		let most = 0;
		rows.forEach((_, i) => {
			if (isText(i) && stats[i].nonEmpty > most) [h, most] = [i, stats[i].nonEmpty];
		});
		if (h >= 0 && h + 1 < rows.length && isUnitRow(rows[h + 1].cells, decimalComma)) u = h + 1;
	}
	if (h < 0) {
		throw new ImportError(422, 'no_header', 'no header row found: expected a row of column names above the data', [
			{ row: rows[Math.max(0, d)]?.row, message: 'the first data row has no row of column names above it' }
		]);
	}
	const headerCells = rows[h].cells;
	const ncol = Math.max(trimmedLength(headerCells), width);
	const headers: string[] = [];
	for (let j = 0; j < ncol; j++) headers.push(cellText(headerCells[j] ?? null));

	let unitRow: number | null = null;
	let unitCells: string[] | null = null;
	let dataIndex = h + 1;
	if (u >= 0) {
		unitRow = rows[u].row;
		unitCells = headers.map((_, j) => cellText(rows[u].cells[j] ?? null));
		dataIndex = u + 1;
	}
	const preamble: PreambleEntry[] = [];
	for (let i = 0; i < h; i++) {
		const e = preambleEntry(rows[i].row, rows[i].cells);
		if (e) preamble.push(e);
	}
	return { preamble, headers, unitCells, headerRow: rows[h].row, unitRow, dataIndex };
}
