/**
 * Errors and problem records shared by the import modules.
 *
 * Two levels, on purpose:
 * - `ImportError` (thrown) rejects a file as a whole: it cannot be read at all
 *   (not CSV/XLSX, bad encoding, over a size limit, truncated archive). Its
 *   `status` is what the HTTP route should answer (400/413/415/422).
 * - `ImportProblem` (returned in a list) points at one place in a readable
 *   file (row and column) so the user can fix the file or the mapping.
 */

export type ImportStatus = 400 | 413 | 415 | 422;

/** One place in a file that needs the user's attention. */
export interface ImportProblem {
	file: string;
	sheet?: string;
	/** 1-based line number in the CSV file or row number in the sheet; null for file-level problems. */
	row: number | null;
	/** 1-based column number; null when the problem is not about one column. */
	column: number | null;
	header: string | null;
	value: string | null;
	message: string;
}

export interface ImportErrorDetail {
	row?: number;
	column?: number;
	header?: string;
	byteOffset?: number;
	message: string;
}

export type ImportErrorCode =
	| 'empty_file'
	| 'not_tabular'
	| 'legacy_xls'
	| 'encoding'
	| 'nul_byte'
	| 'too_many_columns'
	| 'line_too_long'
	| 'too_many_rows'
	| 'too_large'
	| 'csv_syntax'
	| 'xlsx_invalid'
	| 'damaged_file'
	| 'xlsx_bomb'
	| 'xlsx_range'
	| 'sheet_missing'
	| 'worker_timeout'
	| 'worker_memory'
	| 'worker_failed'
	| 'no_header';

export class ImportError extends Error {
	readonly status: ImportStatus;
	readonly code: ImportErrorCode;
	readonly details: ImportErrorDetail[];

	constructor(status: ImportStatus, code: ImportErrorCode, message: string, details: ImportErrorDetail[] = []) {
		super(message);
		this.name = 'ImportError';
		this.status = status;
		this.code = code;
		this.details = details;
	}

	/** Plain body for the API's `{ error: { code, message, details } }` envelope. */
	toJSON(): { code: string; message: string; details: ImportErrorDetail[] } {
		return { code: this.code, message: this.message, details: this.details };
	}
}

/** Limits applied while reading; every one has a clear error when exceeded. */
export interface ImportLimits {
	/** Maximum number of columns in any row. */
	maxColumns: number;
	/** Maximum characters in one CSV line (record), header included. */
	maxLineLength: number;
	/** Maximum number of data rows. */
	maxRows: number;
	/** Maximum size of an XLSX file (compressed bytes, read whole). */
	maxXlsxBytes: number;
	/** Maximum total uncompressed size of all entries of an XLSX archive. */
	maxUncompressedBytes: number;
	/** Largest compression ratio accepted for an archive entry bigger than 1 MB. */
	maxCompressionRatio: number;
	/** Maximum number of problems listed (the rest are counted). */
	maxProblems: number;
}

export const DEFAULT_LIMITS: Readonly<ImportLimits> = Object.freeze({
	maxColumns: 500,
	maxLineLength: 64 * 1024,
	maxRows: 2_000_000,
	maxXlsxBytes: 50 * 1024 * 1024,
	maxUncompressedBytes: 200 * 1024 * 1024,
	maxCompressionRatio: 200,
	maxProblems: 200
});

export function resolveLimits(limits?: Partial<ImportLimits>): ImportLimits {
	const out: ImportLimits = { ...DEFAULT_LIMITS };
	if (limits) {
		for (const key of Object.keys(DEFAULT_LIMITS) as (keyof ImportLimits)[]) {
			const v = limits[key];
			if (v !== undefined) {
				if (!Number.isFinite(v) || v <= 0) throw new TypeError(`limit '${key}' must be a positive number`);
				out[key] = v;
			}
		}
	}
	return out;
}

/** "1,048,576" — thousands grouped for messages. */
export function fmtCount(n: number): string {
	return n.toLocaleString('en-US');
}
