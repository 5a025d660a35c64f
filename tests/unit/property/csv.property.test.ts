// Property-based tests (fast-check) of the streaming CSV reader: a generated
// table of numbers written with any of the three separators, either decimal
// mark (comma only where the separator is not a comma), CRLF or LF, with or
// without a byte-order mark and a unit row, fed in chunks of any size, reads
// back with the same separator, decimal mark, headers, units and values.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { readCsv, bufferSource, type Separator } from '../../../src/lib/server/imports/csv';
import { parseNumberText } from '../../../src/lib/server/imports/numbers';

interface Table {
	sep: Separator;
	decimalComma: boolean;
	eol: '\n' | '\r\n';
	bom: boolean;
	headers: string[];
	units: string[] | null;
	rows: string[][]; // numbers as written with '.'; converted to the file's mark when written
	chunk: number;
}

// Our own column vocabulary (invented headers of the demo scenario's style).
const HEADER = fc.stringMatching(/^[A-Z][a-z]{2,8}(_[a-z0-9]{1,4})?$/);
const UNIT = fc.constantFrom('deg', 'N', 'lbf', 'Pa', 'psf', 'm/s', 'kt', 'K', 'degC', 'N·m', 's');

/** A number as a data system prints it: fixed with 1–6 fraction digits, or exponent. */
const NUMBER = fc
	.tuple(fc.double({ min: -1e6, max: 1e6, noNaN: true }), fc.integer({ min: 1, max: 6 }), fc.boolean())
	.map(([x, d, exp]) => (exp ? x.toExponential(d) : x.toFixed(d)));

const TABLE: fc.Arbitrary<Table> = fc
	.record({
		sep: fc.constantFrom<Separator>(',', ';', '\t'),
		comma: fc.boolean(),
		eol: fc.constantFrom<'\n' | '\r\n'>('\n', '\r\n'),
		bom: fc.boolean(),
		width: fc.integer({ min: 2, max: 8 }),
		height: fc.integer({ min: 3, max: 40 }),
		withUnits: fc.boolean(),
		chunk: fc.integer({ min: 1, max: 4096 })
	})
	.chain((p) =>
		fc.record({
			sep: fc.constant(p.sep),
			decimalComma: fc.constant(p.comma && p.sep !== ','),
			eol: fc.constant(p.eol),
			bom: fc.constant(p.bom),
			headers: fc.uniqueArray(HEADER, { minLength: p.width, maxLength: p.width, selector: (h) => h.toLowerCase() }),
			units: p.withUnits ? fc.array(UNIT, { minLength: p.width, maxLength: p.width }) : fc.constant(null),
			rows: fc.array(fc.array(NUMBER, { minLength: p.width, maxLength: p.width }), { minLength: p.height, maxLength: p.height }),
			chunk: fc.constant(p.chunk)
		})
	);

function write(t: Table): Buffer {
	const mark = (s: string) => (t.decimalComma ? s.replace('.', ',') : s);
	const lines = [t.headers.join(t.sep)];
	if (t.units) lines.push(t.units.join(t.sep));
	for (const r of t.rows) lines.push(r.map(mark).join(t.sep));
	const text = lines.join(t.eol) + t.eol;
	return Buffer.concat([t.bom ? Buffer.from([0xef, 0xbb, 0xbf]) : Buffer.alloc(0), Buffer.from(text, 'utf8')]);
}

describe('CSV reader: generated tables read back', () => {
	it('same format, headers, units and values for any separator, decimal mark, line end, BOM and chunking', async () => {
		await fc.assert(
			fc.asyncProperty(TABLE, async (t) => {
				const r = await readCsv(bufferSource(write(t), t.chunk));
				expect(r.format).toEqual({ separator: t.sep, decimalComma: t.decimalComma, bom: t.bom });
				expect(r.headers).toEqual(t.headers);
				expect(r.unitCells).toEqual(t.units);
				expect(r.rows).toHaveLength(t.rows.length);
				const firstDataLine = t.units ? 3 : 2;
				r.rows.forEach((row, i) => {
					expect(row.row).toBe(firstDataLine + i);
					const values = row.cells.map((c) => parseNumberText(String(c), r.format.decimalComma));
					expect(values).toEqual(t.rows[i].map(Number));
				});
			}),
			{ numRuns: 300 }
		);
	});

	it('quoted text cells holding separators, quotes and line breaks come back verbatim', async () => {
		const TEXT = fc.string({ unit: fc.constantFrom('a', 'b', ' ', ',', ';', '\t', '"', '\n', 'é', '°'), minLength: 0, maxLength: 12 });
		await fc.assert(
			fc.asyncProperty(
				fc.constantFrom<Separator>(',', ';', '\t'),
				fc.array(fc.tuple(TEXT, NUMBER), { minLength: 3, maxLength: 20 }),
				fc.integer({ min: 1, max: 64 }),
				async (sep, rows, chunk) => {
					const quote = (s: string) => `"${s.replace(/"/g, '""')}"`;
					const text = [`Note${sep}Alpha`, ...rows.map(([s, n]) => `${quote(s)}${sep}${n}`)].join('\n') + '\n';
					const r = await readCsv(bufferSource(Buffer.from(text, 'utf8'), chunk), { separator: sep, decimalComma: false });
					expect(r.headers).toEqual(['Note', 'Alpha']);
					expect(r.rows.map((x) => x.cells[0])).toEqual(rows.map(([s]) => s));
					expect(r.rows.map((x) => Number(x.cells[1]))).toEqual(rows.map(([, n]) => Number(n)));
				}
			),
			{ numRuns: 200 }
		);
	});
});
