import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

export const FIXTURES = fileURLToPath(new URL('../../../fixtures/', import.meta.url));
export const fixture = (name: string): Buffer => readFileSync(FIXTURES + name);

/** Feed a string in small chunks so chunk boundaries fall mid-line and mid-character. */
export function* chunked(text: string | Buffer, size = 7): Generator<Buffer> {
	const b = typeof text === 'string' ? Buffer.from(text, 'utf8') : text;
	for (let i = 0; i < b.length; i += size) yield b.subarray(i, i + size);
}

/** Await a promise that must reject with an ImportError; return the error. */
export async function importError(p: Promise<unknown>): Promise<{ status: number; code: string; message: string; details: unknown[] }> {
	try {
		await p;
	} catch (err) {
		return err as { status: number; code: string; message: string; details: unknown[] };
	}
	throw new Error('expected an ImportError, but the call succeeded');
}
