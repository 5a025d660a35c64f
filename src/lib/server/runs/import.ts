/**
 * One run import, end to end, in one transaction: the request body is read
 * once as a stream — counted against the per-route limit, hashed (SHA-256)
 * and spooled to a temp file — while the CSV reader parses it and every
 * data row goes on to the samples table by COPY on the transaction's own
 * connection. Then the original bytes are stored (storage module), the
 * first reduction and its points are written and the audit event recorded.
 * Any problem rolls everything back: a bad row stores nothing.
 *
 * Samples keep the raw numbers of every column in the file's own units
 * (NULL where a cell is not a number), so a later re-reduction may change
 * the mapping or the units without touching the file.
 */
import { createHash } from 'node:crypto';
import { createWriteStream, mkdtempSync, rmSync } from 'node:fs';
import { once } from 'node:events';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { QueryTypes, type Transaction } from 'sequelize';
import { from as copyFrom } from 'pg-copy-streams';
import { getModels, getSequelize } from '../db';
import * as audit from '../audit';
import * as storage from '../storage';
import { openCsv } from '../imports/csv';
import { ImportError, type ImportProblem } from '../imports/errors';
import type { DataRow } from '../imports/layout';
import { applyProfile, proposeMapping, validateMapping, type ColumnMapping, type RunKind } from '../imports/mapping';
import { ProblemList, sniffKind, validateRows } from '../imports/validate';
import { parseSpreadsheetInWorker } from '../imports/xlsx';
import { RunError } from './errors';
import { mappingSchema, type ImportQuery } from './schemas';
import { reduce, ReferenceMissing, type ReductionOut } from './reduce';
import { loadReduceContext, writeReduction, type Actor } from './store';

export interface ImportProgress {
	phase: 'upload' | 'parse' | 'store' | 'reduce';
	done: number;
	total?: number;
}

export interface ImportInput {
	campaignId: number;
	query: ImportQuery;
	/** X-Spanline-Mapping header (base64url JSON), if sent. */
	mappingHeader: string | null;
	body: ReadableStream<Uint8Array> | AsyncIterable<Uint8Array> | null;
	contentLength: number | null;
	contentType: string | null;
}

export interface ImportResult {
	runId: number;
	reductionVersion: number;
	warnings: string[];
}

const MB = 1024 * 1024;

export function maxUploadBytes(env: NodeJS.ProcessEnv = process.env): number {
	const mb = Number(env.SPANLINE_MAX_UPLOAD_MB ?? 200);
	return (Number.isFinite(mb) && mb > 0 ? mb : 200) * MB;
}
/** XLSX must be read whole to parse. */
export const MAX_XLSX_BYTES = 50 * MB;

/**
 * The request body as chunks, counted, hashed and spooled to a temp file as
 * they pass. `rest()` reads what the parser left unread (so the hash always
 * covers the whole file).
 */
class UploadTap {
	readonly hash = createHash('sha256');
	size = 0;
	done = false;
	readonly dir = mkdtempSync(join(tmpdir(), 'spanline-upload-'));
	readonly path = join(this.dir, 'file');
	private readonly out = createWriteStream(this.path);
	private readonly it: AsyncIterator<Uint8Array>;
	private lastReport = 0;
	private writeError: Error | null = null;
	constructor(
		body: ReadableStream<Uint8Array> | AsyncIterable<Uint8Array>,
		readonly limit: number,
		readonly total: number | null,
		readonly progress: (p: ImportProgress) => void
	) {
		this.it = (body as AsyncIterable<Uint8Array>)[Symbol.asyncIterator]();
		// A write error surfaces in finish(); cleanup() may remove the folder before the stream opened.
		this.out.on('error', (e) => (this.writeError ??= e));
		if (total !== null && total > limit) throw tooLarge(limit);
	}
	async next(): Promise<IteratorResult<Uint8Array>> {
		if (this.done) return { done: true, value: undefined };
		const r = await this.it.next();
		if (r.done) {
			this.done = true;
			this.progress({ phase: 'upload', done: this.size, total: this.size });
			return r;
		}
		const chunk = r.value;
		this.size += chunk.byteLength;
		if (this.size > this.limit) throw tooLarge(this.limit);
		this.hash.update(chunk);
		if (!this.out.write(chunk)) await once(this.out, 'drain');
		if (this.size - this.lastReport >= MB) {
			this.lastReport = this.size;
			this.progress({ phase: 'upload', done: this.size, ...(this.total !== null ? { total: this.total } : {}) });
		}
		return { done: false, value: chunk };
	}
	/** Everything, from the current position; replays `head` first. */
	source(head: Uint8Array[]): AsyncIterable<Uint8Array> {
		return {
			[Symbol.asyncIterator]: () => {
				let i = 0;
				return { next: async () => (i < head.length ? { done: false, value: head[i++] } : this.next()), return: async () => ({ done: true, value: undefined }) };
			}
		};
	}
	async finish(): Promise<{ sha256: string; size: number }> {
		while (!this.done) await this.next();
		if (this.writeError) throw this.writeError;
		this.out.end();
		await once(this.out, 'finish');
		if (this.writeError) throw this.writeError;
		return { sha256: this.hash.digest('hex'), size: this.size };
	}
	/** Read and drop what the client still sends, so an early answer does not break its upload. */
	async drain(): Promise<void> {
		try {
			while (!this.done) {
				const r = await this.it.next();
				if (r.done) this.done = true;
				else if ((this.size += r.value.byteLength) > this.limit) return;
			}
		} catch {
			// the client went away
		}
	}
	cleanup(): void {
		this.out.destroy();
		rmSync(this.dir, { recursive: true, force: true });
	}
}

function tooLarge(limit: number): RunError {
	return new RunError(413, 'file_too_large', `The file is larger than the upload limit of ${Math.round(limit / MB)} MB (SPANLINE_MAX_UPLOAD_MB).`);
}

/** Problems of a readable file → the API's 422. */
export function invalidFile(file: string, problems: ImportProblem[], more: number, summary: string, extra: Record<string, unknown> = {}): RunError {
	const details = problems.map((p) => ({
		file: p.file,
		...(p.sheet !== undefined ? { sheet: p.sheet } : {}),
		...(p.row !== null ? { row: p.row } : {}),
		...(p.header !== null ? { column: p.header } : {}),
		...(p.column !== null ? { columnNumber: p.column } : {}),
		...(p.value !== null ? { value: p.value } : {}),
		message: p.message
	}));
	const err = new RunError(422, 'invalid_file', `${summary}.${more > 0 ? '' : ''} Fix the file or the mapping, or exclude rows, and upload again.`, details);
	Object.assign(err, { extra });
	return err;
}

export function fromImportError(e: ImportError): RunError {
	const status = e.status === 400 ? 422 : e.status;
	const code = e.status === 413 ? 'file_too_large' : e.status === 415 ? 'unsupported_file' : e.code === 'empty_file' ? 'empty_file' : 'invalid_file';
	return new RunError(status, code, e.message, e.details.map((d) => ({ ...(d.row !== undefined ? { row: d.row } : {}), ...(d.header !== undefined ? { column: d.header } : {}), ...(d.byteOffset !== undefined ? { byteOffset: d.byteOffset } : {}), message: d.message })));
}

/** Decode the X-Spanline-Mapping header. */
export function decodeMappingHeader(value: string): ColumnMapping {
	let parsed: unknown;
	try {
		parsed = JSON.parse(Buffer.from(value, 'base64url').toString('utf8'));
	} catch {
		throw new RunError(400, 'bad_mapping', 'X-Spanline-Mapping is not base64url-encoded JSON.', [{ field: 'X-Spanline-Mapping', message: 'not base64url JSON' }]);
	}
	const r = mappingSchema.safeParse(parsed);
	if (!r.success) {
		throw new RunError(400, 'bad_mapping', 'X-Spanline-Mapping is not a version-1 column mapping.', r.error.issues.map((i) => ({ field: `mapping.${i.path.join('.')}`, message: i.message })));
	}
	return r.data as ColumnMapping;
}

export interface ResolvedMapping {
	mapping: ColumnMapping;
	source: string;
}

/** Header mapping, else the named facility profile, else a profile that fits, else the proposal. */
export async function resolveMapping(
	facilityId: number | null,
	headers: string[],
	unitCells: string[] | null,
	kind: RunKind,
	given: ColumnMapping | null,
	profileName: string | undefined
): Promise<ResolvedMapping> {
	if (given) return { mapping: given, source: 'request' };
	const { MappingProfile } = getModels();
	const profiles = facilityId ? await MappingProfile.findAll({ where: { facilityId }, order: [['updatedAt', 'DESC']] }) : [];
	const usable = (m: unknown): m is ColumnMapping => mappingSchema.safeParse(m).success;
	if (profileName) {
		const p = profiles.find((x) => x.name === profileName);
		if (!p) throw new RunError(404, 'profile_not_found', `The facility has no mapping profile named '${profileName}'.`, [{ field: 'profile', message: 'unknown profile' }]);
		if (!usable(p.mapping)) throw new RunError(422, 'profile_invalid', `The mapping profile '${profileName}' is not a version-1 column mapping.`);
		return { mapping: applyProfile(p.mapping, headers).mapping, source: `profile:${p.name}` };
	}
	for (const p of profiles) {
		if (!usable(p.mapping)) continue;
		const a = applyProfile(p.mapping, headers);
		if (a.unmatched.length === 0 && validateMapping(a.mapping, kind).ok) return { mapping: a.mapping, source: `profile:${p.name}` };
	}
	return { mapping: proposeMapping(headers, unitCells, kind), source: 'proposed' };
}

export function mappingProblems(list: ProblemList, mapping: ColumnMapping, kind: RunKind, headers: readonly string[], headerRow: number): boolean {
	let bad = false;
	for (const c of mapping.columns) {
		if (c.field === null) continue;
		if (c.index >= headers.length) {
			list.add(headerRow, null, c.header, null, `the mapping refers to column ${c.index + 1} ('${c.header}'), but the file has ${headers.length} columns`);
			bad = true;
		}
	}
	const check = validateMapping(mapping, kind);
	for (const m of check.messages) list.add(headerRow, null, null, null, m);
	return bad || !check.ok;
}

/** Streams sample lines into COPY on the transaction's connection, with back-pressure. */
class SampleCopy {
	private buf = '';
	private closed = false;
	private error: Error | null = null;
	private readonly stream: ReturnType<typeof copyFrom>;
	private readonly ended: Promise<void>;
	count = 0;
	constructor(transaction: Transaction) {
		const client = (transaction as unknown as { connection: import('pg').PoolClient }).connection;
		this.stream = client.query(copyFrom('COPY samples (run_id, source_file_id, row_index, "values") FROM STDIN'));
		this.ended = new Promise((resolve, reject) => {
			this.stream.on('finish', () => resolve());
			this.stream.on('error', (e) => {
				this.error = e;
				reject(e);
			});
		});
		this.ended.catch(() => {});
	}
	/** A batch of COPY text lines (the validator writes about 1 MB at a time). */
	async write(text: string): Promise<void> {
		if (this.error) throw this.error;
		if (!this.stream.write(text)) await Promise.race([once(this.stream, 'drain'), this.ended]);
		if (this.error) throw this.error;
	}
	/** Stop the COPY (CopyFail), so the connection can roll back. */
	async abort(): Promise<void> {
		if (this.closed) return;
		this.closed = true;
		this.stream.destroy(new Error('import abandoned'));
		await this.ended.catch(() => {});
	}
	async end(): Promise<void> {
		this.closed = true;
		if (this.buf) this.stream.write(this.buf);
		this.buf = '';
		this.stream.end();
		await this.ended;
	}
}

interface Prepared {
	headers: string[];
	unitCells: string[] | null;
	headerRow: number;
	unitRow: number | null;
	preamble: { row: number; key: string; value: string }[];
	rows: AsyncIterable<DataRow | DataRow[]> | Iterable<DataRow | DataRow[]>;
	decimalComma: boolean;
	format: Record<string, unknown>;
	sheet: string | null;
	list: ProblemList;
	uncached?: Set<string>;
	warnings: string[];
	/** Rows expected from the Content-Length and the head's line length (sizes the column arrays once). */
	expectedRows?: number;
}

/** Open the file (sniff, then CSV stream or XLSX in the worker) up to its data rows. */
async function openFile(tap: UploadTap, name: string, sheet: string | undefined): Promise<Prepared> {
	const head: Uint8Array[] = [];
	let size = 0;
	while (size < 4096) {
		const r = await tap.next();
		if (r.done) break;
		head.push(r.value);
		size += r.value.byteLength;
	}
	const first = Buffer.concat(head.map((h) => Buffer.from(h.buffer, h.byteOffset, h.byteLength)));
	if (first.length === 0) throw new RunError(422, 'empty_file', `'${name}' is empty: there is nothing to import.`, [{ file: name, message: 'the file has no bytes' }]);
	const kind = sniffKind(first.subarray(0, 4096));
	const warnings: string[] = [];
	if (kind === 'xlsx') {
		const parts: Buffer[] = [first];
		let total = first.length;
		for (;;) {
			const r = await tap.next();
			if (r.done) break;
			total += r.value.byteLength;
			if (total > MAX_XLSX_BYTES) throw new RunError(413, 'file_too_large', `The spreadsheet is larger than ${MAX_XLSX_BYTES / MB} MB; spreadsheets are read whole, so save large data as CSV.`);
			parts.push(Buffer.from(r.value.buffer, r.value.byteOffset, r.value.byteLength));
		}
		const res = await parseSpreadsheetInWorker(Buffer.concat(parts), { sheet: sheet ?? null });
		if (res.status === 'needs_sheet') {
			const list = new ProblemList(200, name);
			list.add(null, null, null, null, `the workbook has ${res.sheets.length} sheets (${res.sheets.map((s) => `'${s}'`).join(', ')}); choose the sheet to import (?sheet=)`);
			throw invalidFile(name, list.items, 0, list.summary(), { sheets: res.sheets });
		}
		const t = res.table;
		const list = new ProblemList(200, name, t.sheet);
		for (const m of t.merges) {
			if (m.lastRow < t.headerRow) continue;
			const header = t.headers[m.column - 1] ?? null;
			list.add(m.row, m.column, header, m.ref, `row ${m.row}, column '${header ?? m.column}': cells ${m.ref} are merged; unmerge them so that every row and column has its own value`);
		}
		if (t.formulaCells.length > 0) warnings.push(`${t.formulaCells.length} cell(s) hold formulas; their saved values were used`);
		return {
			headers: t.headers,
			unitCells: t.unitCells,
			headerRow: t.headerRow,
			unitRow: t.unitRow,
			preamble: t.preamble,
			rows: t.rows,
			decimalComma: false,
			format: { type: 'xlsx', sheet: t.sheet, sheets: t.sheets },
			sheet: t.sheet,
			list,
			uncached: new Set(t.uncachedFormulaCells.map((c) => `${c.row}:${c.column}`)),
			warnings
		};
	}
	const reader = await openCsv(tap.source([first]));
	let newlines = 0;
	for (let i = first.indexOf(10); i !== -1; i = first.indexOf(10, i + 1)) newlines++;
	// 10 % over the estimate: data lines are rarely longer than the head's average.
	const expectedRows = tap.total !== null && newlines > 1 ? Math.ceil((1.1 * tap.total * newlines) / first.length) : undefined;
	return {
		expectedRows,
		headers: reader.headers,
		unitCells: reader.unitCells,
		headerRow: reader.headerRow,
		unitRow: reader.unitRow,
		preamble: reader.preamble,
		rows: reader.batches,
		decimalComma: reader.format.decimalComma,
		format: { type: 'csv', ...reader.format },
		sheet: null,
		list: new ProblemList(200, name),
		warnings
	};
}

function runNumberFor(q: ImportQuery, f: Prepared, firstRunCell: string | null): string {
	if (q.runNumber) return q.runNumber;
	const pre = f.preamble.find((p) => /^run(\s*(no|number|nr))?\.?$/i.test(p.key.trim()));
	if (pre && pre.value.trim()) return pre.value.trim().slice(0, 64);
	if (firstRunCell) return firstRunCell.slice(0, 64);
	return q.name.replace(/\.(csv|xlsx|txt)$/i, '').slice(0, 64);
}

/**
 * Import one file as a new run. Throws RunError (status and details for the
 * API) when nothing was stored.
 */
/**
 * Read and drop a request body nobody will use, up to `limit` bytes, so that
 * a refusal sent before the upload ends reaches the client: a server that
 * answers and closes mid-upload makes Node's fetch (undici) report a network
 * error instead of the answer. Past the limit (or when Content-Length already
 * says so) the body is cancelled and the connection may close.
 */
export async function discardBody(body: ReadableStream<Uint8Array> | null | undefined, contentLength: number | null = null, limit = maxUploadBytes()): Promise<void> {
	if (!body || body.locked) return;
	const reader = body.getReader();
	try {
		if (contentLength !== null && contentLength > limit) return;
		let size = 0;
		for (;;) {
			const r = await reader.read();
			if (r.done) return;
			if ((size += r.value.byteLength) > limit) return;
		}
	} catch {
		// the client went away
	} finally {
		reader.cancel().catch(() => {});
	}
}

export async function importRun(actor: Actor, input: ImportInput, onProgress: (p: ImportProgress) => void = () => {}): Promise<ImportResult> {
	let campaign: CampaignRow;
	try {
		campaign = await checkReferences(input);
	} catch (e) {
		if (input.body instanceof ReadableStream) await discardBody(input.body, input.contentLength);
		throw e;
	}
	return importChecked(actor, input, campaign, onProgress);
}

/** The campaign, configuration and referenced runs of an import exist and belong together; throws RunError. */
/** What the import needs of the campaign row. */
type CampaignRow = { id: number | string; kind: RunKind; facilityId: number | string | null };

async function checkReferences(input: ImportInput): Promise<CampaignRow> {
	const { Run, Campaign, Configuration } = getModels();
	const q = input.query;
	const campaign = await Campaign.findByPk(input.campaignId);
	if (!campaign) throw new RunError(404, 'not_found', 'No such campaign.');
	const kind: RunKind = q.kind ?? campaign.kind;
	if (q.configurationId) {
		const c = await Configuration.findByPk(q.configurationId);
		if (!c || (c.campaignId !== null && Number(c.campaignId) !== Number(campaign.id))) {
			throw new RunError(422, 'invalid_reference', 'The configuration does not belong to this campaign.', [{ field: 'configurationId', message: 'not in this campaign' }]);
		}
	}
	for (const [field, runId] of [['tareRunId', q.tareRunId], ['repeatOfRunId', q.repeatOfRunId]] as const) {
		if (!runId) continue;
		const r = await Run.findByPk(runId);
		if (!r || Number(r.campaignId) !== Number(campaign.id)) throw new RunError(422, 'invalid_reference', `Run ${runId} is not a run of this campaign.`, [{ field, message: 'not in this campaign' }]);
		if (field === 'tareRunId' && !r.isTare) throw new RunError(422, 'invalid_reference', `Run ${r.runNumber} is not a tare run.`, [{ field, message: 'not a tare run' }]);
	}
	return campaign;
}

async function importChecked(actor: Actor, input: ImportInput, campaign: CampaignRow, onProgress: (p: ImportProgress) => void): Promise<ImportResult> {
	const { Run, SourceFile } = getModels();
	const q = input.query;
	const kind: RunKind = q.kind ?? campaign.kind;
	if (!input.body) throw new RunError(422, 'empty_file', `'${q.name}' is empty: there is nothing to import.`, [{ file: q.name, message: 'the request has no body (the file has no bytes)' }]);
	const given = input.mappingHeader ? decodeMappingHeader(input.mappingHeader) : null;

	const tap = new UploadTap(input.body, maxUploadBytes(), input.contentLength, onProgress);
	let transaction: Transaction | null = null;
	let stored: storage.StoredFile | null = null;
	let copy: SampleCopy | null = null;
	try {
		let f: Prepared;
		try {
			f = await openFile(tap, q.name, q.sheet);
		} catch (e) {
			if (e instanceof ImportError) throw fromImportError(e);
			throw e;
		}
		const resolved = await resolveMapping(campaign.facilityId ? Number(campaign.facilityId) : null, f.headers, f.unitCells, kind, given, q.profile);
		const mapping = { ...resolved.mapping, kind };
		if (mappingProblems(f.list, mapping, kind, f.headers, f.headerRow)) {
			throw invalidFile(q.name, f.list.items, f.list.more, f.list.summary(), { mappingProposal: mapping, headers: f.headers });
		}
		const warnings = [...f.warnings];
		if (resolved.source === 'proposed') warnings.push('the column mapping was proposed automatically; check it before accepting the run');

		const sequelize = getSequelize();
		transaction = await sequelize.transaction();
		const t = transaction;
		const runColumn = mapping.columns.find((c) => c.field === 'run');
		let firstRunCell: string | null = null;
		// The run row is created with a provisional number and renamed once the first row is known.
		const run = await Run.create(
			{
				campaignId: Number(campaign.id),
				configurationId: q.configurationId ?? null,
				runNumber: `__import_${tap.dir.slice(-8)}`,
				kind,
				isTare: q.isTare ?? false,
				tareRunId: q.tareRunId ?? null,
				repeatOfRunId: q.repeatOfRunId ?? null,
				createdBy: actor.id
			},
			{ transaction: t }
		);
		const sf = await SourceFile.create(
			{ runId: run.id, name: q.name, size: 0, sha256: 'pending', contentType: input.contentType, sheet: f.sheet, columnMapping: mapping as unknown as Record<string, unknown> },
			{ transaction: t }
		);
		copy = new SampleCopy(t);
		const sampleCopy = copy;
		const exclude = new Set(q.exclude ?? []);
		const prefix = `${run.id}\t${sf.id}\t`;
		let seen = 0;
		// One pass over the rows: validation, SI columns and the samples' COPY text together.
		const batches = (async function* () {
			for await (const item of f.rows as AsyncIterable<DataRow | DataRow[]>) {
				const b = Array.isArray(item) ? item : [item];
				if (runColumn && firstRunCell === null) {
					const r = b.find((x) => !exclude.has(x.row));
					if (r) {
						const c = r.cells[runColumn.index];
						firstRunCell = c === null || c === undefined ? null : String(c).trim() || null;
					}
				}
				const before = seen;
				seen += b.length;
				if (Math.floor(seen / 50_000) > Math.floor(before / 50_000)) onProgress({ phase: 'parse', done: seen });
				yield b;
			}
		})();
		let result: Awaited<ReturnType<typeof validateRows>>;
		try {
			result = await validateRows(batches, f.headers, mapping, {
				decimalComma: f.decimalComma,
				exclude,
				problems: f.list,
				uncached: f.uncached,
				maxRows: 2_000_000,
				copy: { prefix, write: (text) => sampleCopy.write(text) },
				...(f.expectedRows ? { expectedRows: f.expectedRows } : {})
			});
		} catch (e) {
			if (e instanceof ImportError) throw fromImportError(e);
			throw e;
		}
		onProgress({ phase: 'parse', done: seen, total: seen });
		if (result.rowCount === 0 && f.list.total === 0) {
			f.list.add(null, null, null, null, result.excluded.length > 0 ? 'every data row was excluded' : `the file has a header (line ${f.headerRow}) but no data rows`);
		}
		if (f.list.total > 0) throw invalidFile(q.name, f.list.items, f.list.more, f.list.summary(), { headers: f.headers });
		await sampleCopy.end();

		const { sha256, size } = await tap.finish();
		onProgress({ phase: 'store', done: 0, total: size });
		// Two uploads of the same bytes at once: the second waits here and then sees the first.
		await sequelize.query('SELECT pg_advisory_xact_lock(hashtext(:sha))', { replacements: { sha: sha256 }, transaction: t });
		const dup = await sequelize.query<{ run_id: string; run_number: string }>(
			`SELECT s.run_id, r.run_number FROM source_files s JOIN runs r ON r.id = s.run_id WHERE s.sha256 = :sha AND s.id <> :id LIMIT 1`,
			{ replacements: { sha: sha256, id: sf.id }, type: QueryTypes.SELECT, transaction: t }
		);
		if (dup.length > 0) {
			throw new RunError(409, 'duplicate_file', `This file was imported before as run ${dup[0].run_number}.`, [{ runId: Number(dup[0].run_id), message: `same SHA-256 as run ${dup[0].run_number}` }]);
		}
		const runNumber = runNumberFor(q, f, firstRunCell);
		const taken = await Run.findOne({ where: { campaignId: Number(campaign.id), runNumber }, transaction: t });
		if (taken) {
			throw new RunError(409, 'run_number_taken', `The campaign already has a run ${runNumber}; give another run number (?runNumber=).`, [{ field: 'runNumber', runId: Number(taken.id), message: 'already used in this campaign' }]);
		}
		stored = await storage.putFile({ sourceFileId: Number(sf.id), sha256, path: tap.path, size, contentType: input.contentType, transaction: t });
		await sequelize.query(
			`UPDATE source_files SET sha256 = :sha, size = :size, row_count = :rows, layout = CAST(:layout AS jsonb) WHERE id = :id`,
			{
				replacements: {
					sha: sha256,
					size,
					rows: result.rowCount,
					id: sf.id,
					layout: JSON.stringify({ format: f.format, headers: f.headers, unitCells: f.unitCells, headerRow: f.headerRow, unitRow: f.unitRow, preamble: f.preamble, excludedRows: result.excluded })
				},
				transaction: t
			}
		);
		onProgress({ phase: 'store', done: size, total: size });

		onProgress({ phase: 'reduce', done: 0, total: 1 });
		// Tunnel files taken wind-off (q = 0 throughout) are tare runs.
		const qCol = result.columns.get('q');
		const windOff = kind === 'tunnel' && qCol !== undefined && qCol.length > 0 && Array.prototype.every.call(qCol, (v: number) => Math.abs(v) < 1e-9);
		const isTare = (q.isTare ?? false) || windOff;
		await run.update({ runNumber, isTare }, { transaction: t });
		const ctx = await loadReduceContext({ ...run.get({ plain: true }), isTare }, q.tareRunId ?? null, result.rowNumbers, t);
		let out: ReductionOut;
		try {
			out = reduce(result.columns, ctx, { mapping, tareRunId: q.tareRunId ?? null });
		} catch (e) {
			if (e instanceof ReferenceMissing) throw new RunError(422, 'reference_missing', e.message, [{ field: 'configurationId', message: e.message }]);
			if (e instanceof Error) throw new RunError(422, 'reduction_failed', `The run could not be reduced: ${e.message}`);
			throw e;
		}
		const version = await writeReduction(Number(run.id), out, actor, t);
		await audit.record(
			{
				actor: { id: actor.id, email: actor.email },
				action: 'run.imported',
				entityType: 'run',
				entityId: Number(run.id),
				details: { campaignId: Number(campaign.id), runNumber, kind, file: q.name, size, sha256, rows: result.rowCount, storage: stored.storage, mapping: resolved.source, reductionVersion: version },
				requestId: actor.requestId ?? null,
				ip: actor.ip ?? null
			},
			{ transaction: t }
		);
		await t.commit();
		transaction = null;
		onProgress({ phase: 'reduce', done: 1, total: 1 });
		return { runId: Number(run.id), reductionVersion: version, warnings: [...warnings, ...out.warnings] };
	} catch (e) {
		if (copy) await copy.abort();
		if (transaction) await transaction.rollback().catch(() => {});
		if (stored) await stored.discard();
		// Any refusal (a 413 for a long header line included) waits for the
		// rest of the body, up to the upload limit, so the client reads the
		// answer; only an upload over the limit is cut off.
		await tap.drain();
		if (e instanceof ImportError) throw fromImportError(e);
		throw e;
	} finally {
		tap.cleanup();
	}
}
