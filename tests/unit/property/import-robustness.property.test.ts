// Property-based robustness of the import readers (fast-check): whatever the
// bytes or the text, the reader either reads or refuses with an ImportError
// (a 4xx status and a message for the user) — never another exception, which
// the API would turn into a 500 — and a cell is only ever read as a finite
// number (a value outside the double range, "1e999", is refused, not stored
// as Infinity).
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { readCsv, bufferSource } from '../../../src/lib/server/imports/csv';
import { parseNumberText } from '../../../src/lib/server/imports/numbers';

describe('import readers never fail with anything but an ImportError', () => {
	it('any bytes at all either read or fail with an import error (status 4xx and a message), never another exception', async () => {
		await fc.assert(
			fc.asyncProperty(fc.uint8Array({ maxLength: 600 }), fc.integer({ min: 1, max: 97 }), async (bytes, chunk) => {
				try {
					const r = await readCsv(bufferSource(bytes, chunk));
					expect(Array.isArray(r.headers)).toBe(true);
				} catch (err) {
					const e = err as { name?: string; status?: number; message?: string };
					expect(e.name, String(err)).toBe('ImportError');
					expect(e.status).toBeGreaterThanOrEqual(400);
					expect(e.status).toBeLessThan(500);
					expect(e.message!.length).toBeGreaterThan(10);
				}
			}),
			{ numRuns: 500 }
		);
	});

	it('a text cell is read as a finite number or refused, never as ±Infinity', () => {
		fc.assert(
			fc.property(
				fc.oneof(
					fc.string({ unit: fc.constantFrom('0', '1', '9', '.', ',', 'e', 'E', '+', '-'), maxLength: 12 }),
					fc.tuple(fc.integer({ min: 1, max: 9 }), fc.integer({ min: 300, max: 99999 }), fc.boolean()).map(([m, e, neg]) => `${neg ? '-' : ''}${m}e${e}`)
				),
				fc.boolean(),
				(s, comma) => {
					const v = parseNumberText(s, comma);
					if (typeof v === 'number') expect(Number.isFinite(v), `"${s}" read as ${v}`).toBe(true);
				}
			),
			{ numRuns: 3000 }
		);
	});
});
