/**
 * CSV export for tables and chart data. Cells that begin with = + - @ (or a
 * tab / carriage return) are prefixed with ' when they are text, so a
 * spreadsheet does not run them as formulas (OWASP "CSV Injection"
 * guidance). Numbers are written as numbers: a negative CL stays -0.12.
 */
export type Cell = string | number | boolean | null | undefined;

const RISKY = /^[=+\-@\t\r]/;

export function neutralise(cell: Cell): string {
	if (cell === null || cell === undefined) return '';
	if (typeof cell === 'number') return Number.isFinite(cell) ? String(cell) : '';
	if (typeof cell === 'boolean') return cell ? 'true' : 'false';
	return RISKY.test(cell) ? `'${cell}` : cell;
}

function quote(text: string): string {
	return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/** RFC 4180 text: comma separated, CRLF line ends, quoted where needed. */
export function toCsv(header: readonly string[], rows: readonly (readonly Cell[])[]): string {
	const lines = [header.map((h) => quote(neutralise(h))).join(',')];
	for (const row of rows) lines.push(row.map((c) => quote(neutralise(c))).join(','));
	return lines.join('\r\n') + '\r\n';
}

/** Safe file name from user text. */
export function fileName(base: string, ext: string): string {
	const clean = base.replace(/[^A-Za-z0-9._-]+/g, '-').replace(/^-+|-+$/g, '') || 'spanline';
	return `${clean}.${ext}`;
}

/** Offer a download of `href` (object or data URL) under `name`. */
export function downloadHref(href: string, name: string): void {
	const a = document.createElement('a');
	a.href = href;
	a.download = name;
	a.rel = 'noopener';
	document.body.appendChild(a);
	a.click();
	a.remove();
}

export function downloadCsv(name: string, header: readonly string[], rows: readonly (readonly Cell[])[]): void {
	// A BOM so spreadsheet programs read UTF-8 (α, ρ) correctly.
	const blob = new Blob(['\ufeff', toCsv(header, rows)], { type: 'text/csv;charset=utf-8' });
	const url = URL.createObjectURL(blob);
	downloadHref(url, fileName(name, 'csv'));
	setTimeout(() => URL.revokeObjectURL(url), 1000);
}
