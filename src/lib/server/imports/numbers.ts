/**
 * Number cells as data systems write them: decimal point or decimal comma,
 * optional leading sign, exponent. Anything else is refused with a message
 * that says why, so the user can fix the file ("'n/a' is not a number").
 *
 * Thousands separators are accepted only when unambiguous: both marks present
 * in a strict 3-digit grouping ("1,234.5" in a decimal-point file,
 * "1.234,5" in a decimal-comma file). "1,234" in a decimal-point file could be
 * 1.234 or 1234 and is refused.
 */

/** A cell as read from CSV (always text) or XLSX (number when the sheet stored one). */
export type Cell = string | number | null;

const POINT = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
const COMMA = /^[+-]?(?:\d+,?\d*|,\d+)(?:[eE][+-]?\d+)?$/;
const GROUPED_POINT = /^[+-]?\d{1,3}(?:,\d{3})+(\.\d+)?$/;
const GROUPED_COMMA = /^[+-]?\d{1,3}(?:\.\d{3})+(,\d+)?$/;
const MISSING = new Set(['n/a', 'na', 'n.a.', '-', '--', '?', 'null', 'none', 'missing']);

function trimCell(s: string): string {
	// Fast path: most cells have no surrounding blanks.
	const n = s.length;
	if (n > 0 && s.charCodeAt(0) > 32 && s.charCodeAt(n - 1) > 32) return s;
	return s.trim();
}

/**
 * Parse one text cell. Returns the number, or a string explaining why the
 * cell is not a number (phrased to follow the quoted value).
 */
export function parseNumberText(raw: string, decimalComma: boolean): number | string {
	const value = parseNumberTextUnchecked(raw, decimalComma);
	// '1e309' matches the number pattern but overflows a double.
	return typeof value === 'number' && !Number.isFinite(value) ? 'is too large to be a finite number' : value;
}

function parseNumberTextUnchecked(raw: string, decimalComma: boolean): number | string {
	const s = trimCell(raw);
	if (s === '') return 'is empty';
	if (decimalComma) {
		if (COMMA.test(s)) return Number(s.replace(',', '.'));
	} else if (POINT.test(s)) {
		return Number(s);
	}
	return explain(s, decimalComma);
}

function explain(s: string, decimalComma: boolean): number | string {
	const lower = s.toLowerCase();
	if (lower === 'nan') return 'is not a number (NaN)';
	if (/^[+-]?(inf|infinity)$/.test(lower)) return 'is not a finite number';
	if (MISSING.has(lower)) return 'is not a number (a missing-value mark)';
	if (s.startsWith('#')) return 'is a spreadsheet error, not a number';
	if (decimalComma) {
		const g = GROUPED_COMMA.exec(s);
		if (g && g[1] !== undefined) return Number(s.replace(/\./g, '').replace(',', '.'));
		if (g) return 'is ambiguous: a thousands separator or a decimal point? This file uses decimal commas';
		if (POINT.test(s)) return 'uses a decimal point, but this file uses decimal commas';
	} else {
		const g = GROUPED_POINT.exec(s);
		if (g && g[1] !== undefined) return Number(s.replace(/,/g, ''));
		if (g) return 'is ambiguous: a thousands separator or a decimal comma? This file uses decimal points';
		if (COMMA.test(s)) return 'uses a decimal comma, but this file uses decimal points';
	}
	if (/^[+-]?[\d.,]+(?:[\s\u00a0\u202f'][\d.,]+)+$/.test(s)) return 'has digit groups separated by spaces or apostrophes; remove them';
	return 'is not a number';
}

/** Parse any cell (XLSX numbers pass through; booleans and text are refused). */
export function parseNumberCell(cell: Cell, decimalComma: boolean): number | string {
	if (typeof cell === 'number') return Number.isFinite(cell) ? cell : 'is not a finite number';
	if (cell === null) return 'is empty';
	return parseNumberText(cell, decimalComma);
}

/** True when the cell reads as a number under the given decimal mark. */
export function isNumericCell(cell: Cell, decimalComma: boolean): boolean {
	return typeof parseNumberCell(cell, decimalComma) === 'number';
}

/** Does this text look like a decimal-comma number ("1,25", "-0,5e3")? */
export function looksDecimalComma(s: string): boolean {
	return /^[+-]?\d*,\d+(?:[eE][+-]?\d+)?$/.test(s.trim());
}

/** Does this text look like a decimal-point number with a fraction ("1.25")? */
export function looksDecimalPoint(s: string): boolean {
	return /^[+-]?\d*\.\d+(?:[eE][+-]?\d+)?$/.test(s.trim());
}
