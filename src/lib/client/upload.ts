/**
 * Upload one run file with XMLHttpRequest, because fetch has no upload
 * progress: `upload.onprogress` drives the upload bar, and the NDJSON lines
 * of the response (phases parse / store / reduce) drive the processing bar.
 */
import { ApiError, errorFromBody } from './api';
import { NdjsonReader } from './ndjson';
import type { ImportResult, Mapping } from './types';

export interface ProgressLine {
	phase: 'upload' | 'parse' | 'store' | 'reduce' | string;
	done: number;
	total?: number;
}

export interface UploadCallbacks {
	onUpload?: (sent: number, total: number) => void;
	onPhase?: (line: ProgressLine) => void;
}

export interface UploadHandle {
	promise: Promise<ImportResult>;
	abort: () => void;
}

/** base64url of the UTF-8 JSON, as the X-Spanline-Mapping header expects. */
export function encodeMapping(mapping: Mapping): string {
	const bytes = new TextEncoder().encode(JSON.stringify(mapping));
	let bin = '';
	for (const b of bytes) bin += String.fromCharCode(b);
	return btoa(bin).replace(/\+/g, '-').replace(/\//g, '_').replace(/=+$/, '');
}

export function uploadRun(url: string, body: Blob, mapping: Mapping | null, cb: UploadCallbacks = {}): UploadHandle {
	const xhr = new XMLHttpRequest();
	const promise = new Promise<ImportResult>((resolve, reject) => {
		let outcome: { result?: ImportResult; error?: ApiError } = {};
		const reader = new NdjsonReader<Record<string, unknown>>((line) => {
			if ('result' in line) outcome = { result: line.result as ImportResult };
			// The final line carries the status the plain answer would have had.
			else if ('error' in line) outcome = { error: errorFromBody(typeof line.status === 'number' ? line.status : 422, JSON.stringify({ error: line.error })) };
			else if (typeof line.phase === 'string') cb.onPhase?.(line as unknown as ProgressLine);
		});
		xhr.open('POST', url);
		xhr.setRequestHeader('Accept', 'application/x-ndjson');
		xhr.setRequestHeader('Content-Type', body.type || 'application/octet-stream');
		if (mapping) xhr.setRequestHeader('X-Spanline-Mapping', encodeMapping(mapping));
		xhr.upload.onprogress = (e) => cb.onUpload?.(e.loaded, e.lengthComputable ? e.total : body.size);
		xhr.upload.onload = () => cb.onUpload?.(body.size, body.size);
		const streaming = () => (xhr.getResponseHeader('Content-Type') ?? '').includes('ndjson');
		xhr.onprogress = () => {
			if (xhr.status >= 200 && xhr.status < 300 && streaming()) {
				try {
					reader.pushWhole(xhr.responseText);
				} catch {
					// a half-written line: read again on the next event
				}
			}
		};
		xhr.onerror = () => reject(new TypeError('network error'));
		xhr.onabort = () => reject(new ApiError(0, { code: 'aborted', message: 'Upload cancelled.' }));
		xhr.onload = () => {
			if (xhr.status >= 200 && xhr.status < 300 && streaming()) {
				try {
					reader.pushWhole(xhr.responseText);
					reader.end();
				} catch {
					return reject(new ApiError(xhr.status, { code: 'bad_stream', message: 'The server sent an unreadable progress stream.' }));
				}
				if (outcome.result) return resolve(outcome.result);
				if (outcome.error) {
					const e = outcome.error;
					return reject(e);
				}
				return reject(new ApiError(xhr.status, { code: 'no_result', message: 'The import ended without a result.' }));
			}
			if (xhr.status >= 200 && xhr.status < 300) {
				try {
					return resolve(JSON.parse(xhr.responseText) as ImportResult);
				} catch {
					return reject(new ApiError(xhr.status, { code: 'bad_body', message: 'The server answered with an unreadable body.' }));
				}
			}
			reject(errorFromBody(xhr.status, xhr.responseText));
		};
		xhr.send(body);
	});
	return { promise, abort: () => xhr.abort() };
}

/** The first part of a CSV (or a whole XLSX) for the preview route. */
export function previewSlice(file: File): Blob {
	const isXlsx = /\.xlsx$/i.test(file.name);
	return isXlsx ? file : file.slice(0, 256 * 1024);
}

export function isXlsx(name: string): boolean {
	return /\.xlsx$/i.test(name);
}
