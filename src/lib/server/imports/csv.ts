/**
 * Streaming CSV reading. Bytes come from a Node Readable or any async
 * iterable of chunks and are never held whole: they are checked for UTF-8
 * (a strict validator, with the byte offset and line of the first bad byte)
 * and NUL bytes, then tokenised: by hand while no double quote has appeared
 * (plain lines and separators; see openCsv for why), by csv-parse's streaming
 * parser from the first quote on. Only the
 * first rows are buffered, to detect the separator, the decimal mark and the
 * layout (preamble, header, unit row).
 *
 * Rows are arrays of cells, never objects keyed by header names, so headers
 * such as `__proto__` or `constructor` cannot reach any prototype.
 */
import { isUtf8 } from 'node:buffer';
import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { parse, CsvError } from 'csv-parse';
import { ImportError, fmtCount, resolveLimits, type ImportLimits } from './errors';
import { detectLayout, type DataRow, type TableHead } from './layout';
import { looksDecimalComma, looksDecimalPoint } from './numbers';

export type Separator = ',' | ';' | '\t';

export interface CsvFormat {
	separator: Separator;
	decimalComma: boolean;
	/** A UTF-8 byte-order mark was present (and stripped). */
	bom: boolean;
}

export interface CsvOptions {
	/** Force the separator instead of detecting it. */
	separator?: Separator;
	/** Force the decimal mark instead of detecting it. */
	decimalComma?: boolean;
	limits?: Partial<ImportLimits>;
	/** Number of records sampled for layout detection (default 60). */
	sampleRows?: number;
}

export interface CsvReader extends TableHead {
	format: CsvFormat;
	/** The data rows, streamed; iterate once. `row` is the 1-based line number. */
	rows: AsyncIterable<DataRow>;
	/** The same data rows in batches (iterate either `rows` or `batches`, once). */
	batches: AsyncIterable<DataRow[]>;
	/** Stop reading (when the rows are not wanted after all). */
	close(): void;
}

export type ByteSource = AsyncIterable<Uint8Array | string> | Iterable<Uint8Array | string>;

/** Wrap a whole buffer as a chunked source (64 KiB slices). */
export function bufferSource(buf: Uint8Array, chunkSize = 64 * 1024): Iterable<Uint8Array> {
	return {
		*[Symbol.iterator]() {
			for (let i = 0; i < buf.length; i += chunkSize) yield buf.subarray(i, Math.min(buf.length, i + chunkSize));
		}
	};
}

function toBuffer(chunk: Uint8Array | string): Buffer {
	if (typeof chunk === 'string') return Buffer.from(chunk, 'utf8');
	return Buffer.isBuffer(chunk) ? chunk : Buffer.from(chunk.buffer, chunk.byteOffset, chunk.byteLength);
}

/** Offset of the first byte that breaks UTF-8 (RFC 3629 §4), or -1. */
function firstInvalidUtf8(b: Uint8Array): number {
	let i = 0;
	while (i < b.length) {
		const c = b[i];
		if (c < 0x80) {
			i++;
			continue;
		}
		let need: number;
		let min: number;
		if (c >= 0xc2 && c <= 0xdf) [need, min] = [1, 0x80];
		else if (c >= 0xe0 && c <= 0xef) [need, min] = [2, 0x800];
		else if (c >= 0xf0 && c <= 0xf4) [need, min] = [3, 0x10000];
		else return i;
		if (i + need >= b.length) return i;
		let cp = c & (0x3f >> need);
		for (let k = 1; k <= need; k++) {
			const d = b[i + k];
			if (d === undefined || (d & 0xc0) !== 0x80) return i;
			cp = (cp << 6) | (d & 0x3f);
		}
		if (cp < min || cp > 0x10ffff || (cp >= 0xd800 && cp <= 0xdfff)) return i;
		i += need + 1;
	}
	return -1;
}

function countNewlines(b: Uint8Array, end = b.length): number {
	let n = 0;
	let i = -1;
	const buf = toBuffer(b);
	while ((i = buf.indexOf(10, i + 1)) !== -1 && i < end) n++;
	return n;
}

interface DecodeState {
	bom: boolean;
	/** A double quote has been seen: records may span lines. */
	quotes: boolean;
}

/**
 * Bytes → validated UTF-8 buffers, each ending on a character boundary (an
 * incomplete tail is carried into the next chunk). Buffers, not strings, go
 * on to csv-parse: it tokenises bytes, and a string round trip costs time.
 */
async function* decodeUtf8(source: ByteSource, state: DecodeState): AsyncGenerator<Buffer> {
	let carry: Buffer | null = null;
	let offset = 0; // bytes of the file before `buf` (BOM included)
	let newlines = 0;
	let first = true;
	for await (const chunk of source as AsyncIterable<Uint8Array | string>) {
		let buf = toBuffer(chunk);
		if (carry) {
			buf = Buffer.concat([carry, buf]);
			carry = null;
		}
		if (first) {
			if (buf.length < 4) {
				carry = Buffer.from(buf);
				continue;
			}
			first = false;
			if ((buf[0] === 0xff && buf[1] === 0xfe) || (buf[0] === 0xfe && buf[1] === 0xff)) {
				throw new ImportError(415, 'encoding', 'the file is UTF-16 text; save it as UTF-8 (CSV UTF-8) and upload again', [
					{ byteOffset: 0, message: 'UTF-16 byte-order mark at the start of the file' }
				]);
			}
			if (buf[0] === 0xef && buf[1] === 0xbb && buf[2] === 0xbf) {
				state.bom = true;
				buf = buf.subarray(3);
				offset = 3;
			}
		}
		let end = buf.length;
		let i = end - 1;
		let k = 0;
		while (i >= 0 && k < 3 && (buf[i] & 0xc0) === 0x80) {
			i--;
			k++;
		}
		if (i >= 0 && buf[i] >= 0xc0) {
			const len = buf[i] >= 0xf0 ? 4 : buf[i] >= 0xe0 ? 3 : 2;
			if (end - i < len) end = i;
		}
		const part = end === buf.length ? buf : buf.subarray(0, end);
		if (end !== buf.length) carry = Buffer.from(buf.subarray(end));
		check(part, offset, newlines);
		newlines += countNewlines(part);
		offset += part.length;
		if (!state.quotes && part.indexOf(0x22) !== -1) state.quotes = true;
		if (part.length > 0) yield part;
	}
	if (first && carry) {
		// Tiny file (< 4 bytes): handle BOM-only and short content here.
		let buf: Buffer = carry;
		if (buf[0] === 0xef && buf[1] === 0xbb && buf[2] === 0xbf) {
			state.bom = true;
			buf = buf.subarray(3);
			offset = 3;
		}
		check(buf, offset, newlines);
		if (buf.indexOf(0x22) !== -1) state.quotes = true;
		if (buf.length > 0) yield buf;
		return;
	}
	if (carry) check(carry, offset, newlines, true);
}

function check(part: Buffer, offset: number, newlines: number, atEnd = false): void {
	const nul = part.indexOf(0);
	const bad = isUtf8(part) && !atEnd ? -1 : Math.max(0, firstInvalidUtf8(part));
	if (nul !== -1 && (bad === -1 || nul < bad)) {
		const line = newlines + countNewlines(part, nul) + 1;
		throw new ImportError(422, 'nul_byte', `the file contains a NUL byte at byte offset ${offset + nul} (line ${line}); it is binary data, not CSV text`, [
			{ row: line, byteOffset: offset + nul, message: 'NUL byte' }
		]);
	}
	if (bad !== -1) {
		const line = newlines + countNewlines(part, bad) + 1;
		const hex = part[bad].toString(16).toUpperCase().padStart(2, '0');
		throw new ImportError(
			422,
			'encoding',
			`the file is not valid UTF-8: byte 0x${hex} at byte offset ${offset + bad} (line ${line}); save it as UTF-8 (CSV UTF-8) and upload again`,
			[{ row: line, byteOffset: offset + bad, message: `invalid UTF-8 byte 0x${hex}` }]
		);
	}
}

/** Count separator characters outside double quotes. */
function countOutsideQuotes(line: string, sep: string): number {
	let n = 0;
	let quoted = false;
	for (let i = 0; i < line.length; i++) {
		const ch = line[i];
		if (ch === '"') quoted = !quoted;
		else if (ch === sep && !quoted) n++;
	}
	return n;
}

/**
 * Separator from the sample lines: the candidate that splits the lower half
 * of the sample (where the data is) the same way on at least 80 % of lines.
 * Tab and semicolon win over comma when consistent, because a decimal-comma
 * file also has a steady comma count (common practice, no source).
 */
export function detectSeparator(lines: string[]): Separator {
	const body = lines.filter((l) => l.trim() !== '');
	const tail = body.slice(Math.floor(body.length / 2));
	if (tail.length === 0) return ',';
	const consistent = (sep: string): boolean => {
		const freq = new Map<number, number>();
		for (const l of tail) {
			const c = countOutsideQuotes(l, sep);
			freq.set(c, (freq.get(c) ?? 0) + 1);
		}
		let mode = 0;
		let n = 0;
		for (const [c, k] of freq) if (k > n) [mode, n] = [c, k];
		return mode >= 1 && n >= 0.8 * tail.length;
	};
	if (consistent('\t')) return '\t';
	if (consistent(';')) return ';';
	if (consistent(',')) return ',';
	// Fall back to whichever appears most.
	const total = (sep: string) => tail.reduce((s, l) => s + countOutsideQuotes(l, sep), 0);
	const cands: Separator[] = ['\t', ';', ','];
	return cands.reduce((a, b) => (total(b) > total(a) ? b : a), ',');
}

/** Decimal comma when the separator is not a comma and number-like cells use "1,25". */
export function detectDecimalComma(lines: string[], sep: Separator): boolean {
	if (sep === ',') return false;
	let comma = 0;
	let point = 0;
	for (const l of lines) {
		for (const cell of l.split(sep)) {
			const c = cell.replace(/^"|"$/g, '');
			if (looksDecimalComma(c)) comma++;
			else if (looksDecimalPoint(c)) point++;
		}
	}
	return comma > point;
}

function mapParseError(err: unknown, limits: ImportLimits, lineOffset = 0): unknown {
	if (err instanceof ImportError) return err;
	const e = err as { code?: string; lines?: number; message?: string };
	// csv-parse's codes mostly start with CSV_, but not all (INVALID_OPENING_QUOTE).
	if (err instanceof CsvError || (e && typeof e.code === 'string' && (e.code.startsWith('CSV_') || e.code === 'INVALID_OPENING_QUOTE'))) {
		const line = typeof e.lines === 'number' ? e.lines + lineOffset : undefined;
		if (e.code === 'CSV_MAX_RECORD_SIZE') {
			return new ImportError(413, 'line_too_long', `line ${line ?? '?'} is longer than the limit of ${fmtCount(limits.maxLineLength)} characters`, [
				{ row: line, message: 'line too long' }
			]);
		}
		const what =
			e.code === 'CSV_QUOTE_NOT_CLOSED'
				? 'a quoted field is never closed'
				: e.code === 'CSV_INVALID_CLOSING_QUOTE'
					? 'a closing quote is followed by other characters'
					: e.code === 'CSV_NON_TRIMABLE_CHAR_AFTER_CLOSING_QUOTE'
						? 'a closing quote is followed by other characters'
						: e.code === 'INVALID_OPENING_QUOTE'
							? 'a quote appears in the middle of an unquoted field'
							: 'the text cannot be split into fields';
		return new ImportError(422, 'csv_syntax', `CSV syntax error at line ${line ?? '?'}: ${what}`, [{ row: line, message: what }]);
	}
	return err;
}

/**
 * Open a CSV stream: detect format and layout from the first rows, then hand
 * back the data rows as an async iterable. Throws ImportError for files that
 * cannot be read (encoding, NUL bytes, limits, syntax, no header).
 */
export async function openCsv(source: ByteSource, options: CsvOptions = {}): Promise<CsvReader> {
	const limits = resolveLimits(options.limits);
	const state: DecodeState = { bom: false, quotes: false };
	const text = decodeUtf8(source, state);

	// Gather the head: enough lines to detect format and layout.
	const sampleRows = options.sampleRows ?? 60;
	const headCap = Math.max(256 * 1024, limits.maxLineLength * 2);
	const headParts: Buffer[] = [];
	let headBytes = 0;
	let headLines = 0;
	let ended = false;
	for (;;) {
		const next = await text.next();
		if (next.done) {
			ended = true;
			break;
		}
		headParts.push(next.value);
		headBytes += next.value.length;
		headLines += countNewlines(next.value);
		if (headLines > sampleRows || headBytes >= headCap) break;
	}
	const headBuf = Buffer.concat(headParts);
	const head = headBuf.toString('utf8');
	if (head.trim() === '') {
		throw new ImportError(400, 'empty_file', 'the file is empty', [{ message: 'no text found' }]);
	}
	const lines = head.split(/\r?\n/);
	if (!ended) lines.pop(); // the last line may be cut short
	if (lines.length === 0 || (lines.length === 1 && lines[0].length > limits.maxLineLength)) {
		throw new ImportError(413, 'line_too_long', `line 1 is longer than the limit of ${fmtCount(limits.maxLineLength)} characters`, [
			{ row: 1, message: 'line too long' }
		]);
	}
	const separator = options.separator ?? detectSeparator(lines);
	const decimalComma = options.decimalComma ?? detectDecimalComma(lines.slice(Math.floor(lines.length / 3)), separator);

	// Two tokenisers. csv-parse handles every file or remainder of a file that
	// holds a double quote (quoted fields, separators and line breaks inside
	// quotes, quote errors). Before the first quote, lines are split here by
	// hand: without quotes CSV is just lines and separators, and the hand split
	// reads a 1,000,000-row file several times faster than the general
	// tokeniser (the import benchmark, scripts/bench-import.ts). The switch
	// happens at a chunk boundary, where no record is open. Bare CR line ends
	// (no LF) also go to csv-parse, which detects them.
	const maxLine = limits.maxLineLength;
	let line = 0; // file lines handed out so far
	let fastCarry = ''; // the unfinished last line of the previous chunk
	let fastDone = false;
	let parser: ReturnType<typeof parse> | null = null;
	let parserLineOffset = 0;
	let done: Promise<void> = Promise.resolve();
	let finished = false;
	let failure: unknown = null;
	const queue: string[][] = [];
	const rawLines: (string | undefined)[] = []; // the raw line of each queued record (fast path, comma files)
	const keepLines = separator === ',';
	let qi = 0;
	const chunks = (async function* (): AsyncGenerator<Buffer> {
		yield headBuf;
		if (!ended) yield* text;
	})();

	const startParser = (first: string, rest: AsyncGenerator<Buffer> | null): void => {
		// No `info: true`: building an info object per record costs about as much
		// as tokenising. Line numbers are counted here instead: one per record plus
		// the line breaks inside quoted cells (looked for only once a quote was seen).
		parserLineOffset = line;
		const p = parse({ delimiter: separator, relax_column_count: true, skip_empty_lines: false, max_record_size: maxLine });
		async function* feed(): AsyncGenerator<Buffer> {
			if (first) yield Buffer.from(first, 'utf8');
			if (rest) yield* rest;
		}
		done = pipeline(Readable.from(feed(), { objectMode: false }), p);
		done.catch(() => undefined); // surfaced through the iterator below
		p.on('end', () => (finished = true));
		p.on('close', () => (finished = true));
		p.on('error', (err) => (failure = err));
		parser = p;
	};

	const tooLong = (at: number) =>
		new ImportError(413, 'line_too_long', `line ${at} is longer than the limit of ${fmtCount(maxLine)} characters`, [{ row: at, message: 'line too long' }]);

	/** Split whole lines of `text` (quote-free) into the queue; returns the unfinished tail. */
	const splitLines = (chunk: string, final: boolean): string => {
		let a = 0;
		for (;;) {
			const b = chunk.indexOf('\n', a);
			if (b < 0) break;
			let e = b;
			if (e > a && chunk.charCodeAt(e - 1) === 13) e--;
			if (e - a > maxLine) throw tooLong(line + queue.length - qi + 1);
			const l = chunk.slice(a, e);
			queue.push(l.split(separator));
			if (keepLines) rawLines[queue.length - 1] = l;
			a = b + 1;
		}
		let tail = chunk.slice(a);
		if (final && tail !== '') {
			if (tail.charCodeAt(tail.length - 1) === 13) tail = tail.slice(0, -1);
			if (tail.length > maxLine) throw tooLong(line + queue.length - qi + 1);
			queue.push(tail.split(separator));
			tail = '';
		} else if (tail.length > maxLine) throw tooLong(line + queue.length - qi + 1);
		return tail;
	};

	/** A bare CR (not followed by LF) somewhere in the chunk. */
	const bareCr = (chunk: string): boolean => {
		for (let i = chunk.indexOf('\r'); i !== -1; i = chunk.indexOf('\r', i + 1)) if (i + 1 < chunk.length && chunk.charCodeAt(i + 1) !== 10) return true;
		return false;
	};

	const refill = async (): Promise<void> => {
		queue.length = 0;
		rawLines.length = 0;
		qi = 0;
		if (!parser && !fastDone) {
			for (;;) {
				const next = await chunks.next();
				if (next.done) {
					fastDone = true;
					fastCarry = splitLines(fastCarry, true);
					return;
				}
				const chunk = fastCarry + next.value.toString('utf8');
				if (chunk.indexOf('"') !== -1 || bareCr(chunk)) {
					fastCarry = '';
					startParser(chunk, chunks);
					break;
				}
				fastCarry = splitLines(chunk, false);
				if (queue.length > 0) return;
			}
		}
		const p = parser;
		if (!p) return;
		for (;;) {
			let rec: string[] | null;
			while ((rec = p.read() as string[] | null) !== null) queue.push(rec);
			if (queue.length > 0 || finished || failure || p.destroyed) return;
			await new Promise<void>((resolve) => {
				const wake = () => {
					p.off('readable', wake);
					p.off('end', wake);
					p.off('error', wake);
					p.off('close', wake);
					resolve();
				};
				p.on('readable', wake);
				p.on('end', wake);
				p.on('error', wake);
				p.on('close', wake);
			});
		}
	};
	const stop = () => {
		fastDone = true;
		if (parser && !parser.destroyed) parser.destroy();
		void chunks.return(undefined);
	};

	/** The next record from the queue, or undefined when the queue is empty (refill first). */
	const take = (): DataRow | undefined => {
		while (qi < queue.length) {
			const raw = rawLines[qi];
			const record = queue[qi++];
			const start = ++line;
			if (parser && state.quotes) {
				for (const cell of record) for (let i = cell.indexOf('\n'); i !== -1; i = cell.indexOf('\n', i + 1)) line++;
			}
			if (record.length === 1 && record[0] === '') continue; // blank line
			if (record.length > limits.maxColumns) {
				stop();
				throw new ImportError(
					413,
					'too_many_columns',
					`line ${start} has ${fmtCount(record.length)} columns; the limit is ${fmtCount(limits.maxColumns)}`,
					[{ row: start, message: 'too many columns' }]
				);
			}
			return raw !== undefined ? { row: start, cells: record, line: raw } : { row: start, cells: record };
		}
		return undefined;
	};
	/** Refill the queue; false at the end of the file. */
	const more = async (): Promise<boolean> => {
		await refill();
		if (failure) throw mapParseError(failure, limits, parserLineOffset);
		if (queue.length === 0) {
			await done.catch((err) => {
				throw mapParseError(err, limits, parserLineOffset);
			});
			return false;
		}
		return true;
	};
	const nextRecord = async (): Promise<DataRow | null> => {
		for (;;) {
			const r = take();
			if (r) return r;
			if (!(await more())) return null;
		}
	};

	const sample: DataRow[] = [];
	while (sample.length < sampleRows) {
		const r = await nextRecord();
		if (!r) break;
		sample.push(r);
	}
	let layout;
	try {
		layout = detectLayout(sample, decimalComma);
	} catch (err) {
		stop();
		throw err;
	}
	const { dataIndex, ...tableHead } = layout;

	/** Data rows in batches (one await per queue refill, not per row). */
	async function* batches(): AsyncGenerator<DataRow[]> {
		let count = 0;
		const tooMany = (row: number) => {
			stop();
			return new ImportError(413, 'too_many_rows', `the file has more than ${fmtCount(limits.maxRows)} data rows (the limit), at line ${row}`, [
				{ row, message: 'too many rows' }
			]);
		};
		try {
			const first: DataRow[] = [];
			for (let i = dataIndex; i < sample.length; i++) {
				if (isBlank(sample[i].cells)) continue;
				if (++count > limits.maxRows) throw tooMany(sample[i].row);
				first.push(sample[i]);
			}
			if (first.length) yield first;
			for (;;) {
				const batch: DataRow[] = [];
				let r: DataRow | undefined;
				while ((r = take()) !== undefined) {
					if (isBlank(r.cells)) continue;
					if (++count > limits.maxRows) throw tooMany(r.row);
					batch.push(r);
				}
				if (batch.length) yield batch;
				if (!(await more())) break;
			}
		} finally {
			if (parser && !parser.destroyed && !parser.readableEnded) parser.destroy();
			fastDone = true;
		}
	}
	const batchIterator = batches();
	async function* rows(): AsyncGenerator<DataRow> {
		for await (const b of batchIterator) yield* b;
	}

	return {
		...tableHead,
		format: { separator, decimalComma, bom: state.bom },
		rows: rows(),
		batches: batchIterator,
		close: stop
	};
}

function isBlank(cells: (string | number | null)[]): boolean {
	for (const c of cells) {
		// Most rows start with a cell that is plainly not blank.
		if (typeof c === 'string' && c.length > 0 && c.charCodeAt(0) > 32) return false;
		if (c !== null && String(c).trim() !== '') return false;
	}
	return true;
}

/** Read a whole (small) CSV into memory: head plus all data rows. */
export async function readCsv(source: ByteSource, options: CsvOptions = {}): Promise<Omit<CsvReader, 'rows' | 'close' | 'batches'> & { rows: DataRow[] }> {
	const { close: _close, batches: _batches, ...reader } = await openCsv(source, options);
	const rows: DataRow[] = [];
	for await (const r of reader.rows) rows.push(r);
	return { ...reader, rows };
}
