// Property-based tests (fast-check) of the number-cell parser of the importers:
// any finite double written the way a data system writes it reads back as the
// same double, under either decimal mark, and no text ever makes the parser
// throw or misread one decimal mark as the other. Round-trip exactness rests on
// ECMAScript's Number-to-String / String-to-Number being an exact inverse for
// the shortest representation (ECMA-262, Number::toString).
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { parseNumberText, parseNumberCell } from '../../../src/lib/server/imports/numbers';

const finite = fc.double({ noNaN: true, noDefaultInfinity: true });
const blanks = fc.constantFrom('', ' ', '  ', '\t', ' \t ');
const RUNS = { numRuns: 2000 };

/** Shortest round-trip text of a double with the decimal point swapped for a comma. */
const withComma = (s: string) => s.replace('.', ',');
/** Same double; String(-0) is "0", so -0 is allowed to come back as +0. */
const same = (v: unknown, x: number) => Object.is(v, x) || (x === 0 && v === 0);

describe('number cells: round trips', () => {
	it('String(x) reads back as exactly x (decimal-point files)', () => {
		fc.assert(
			fc.property(finite, blanks, blanks, (x, pre, post) => {
				expect(same(parseNumberText(pre + String(x) + post, false), x)).toBe(true);
			}),
			RUNS
		);
	});

	it('String(x) with a decimal comma reads back as exactly x (decimal-comma files)', () => {
		fc.assert(
			fc.property(finite, blanks, (x, pad) => {
				expect(same(parseNumberText(withComma(String(x)) + pad, true), x)).toBe(true);
			}),
			RUNS
		);
	});

	it('fixed and exponent notations with any number of digits read back as Number() of the same text', () => {
		fc.assert(
			fc.property(
				fc.double({ min: -1e9, max: 1e9, noNaN: true }),
				fc.integer({ min: 0, max: 12 }),
				fc.constantFrom('fixed', 'exp', 'EXP', 'plus'),
				fc.boolean(),
				(x, digits, style, comma) => {
					let text = style === 'fixed' ? x.toFixed(digits) : x.toExponential(Math.min(digits, 16));
					if (style === 'EXP') text = text.toUpperCase();
					if (style === 'plus' && !text.startsWith('-')) text = `+${text}`;
					const expected = Number(text);
					const cell = comma ? withComma(text) : text;
					expect(parseNumberText(cell, comma)).toBe(expected);
				}
			),
			RUNS
		);
	});

	it('digit-grouped numbers with a fraction (en-US 1,234.5 / de-DE 1.234,5) read back as the ungrouped value', () => {
		fc.assert(
			fc.property(fc.double({ min: -1e12, max: 1e12, noNaN: true }), fc.integer({ min: 1, max: 6 }), fc.boolean(), (x, frac, comma) => {
				const locale = comma ? 'de-DE' : 'en-US';
				const text = x.toLocaleString(locale, { minimumFractionDigits: frac, maximumFractionDigits: frac, useGrouping: true });
				const plain = comma ? text.replace(/\./g, '').replace(',', '.') : text.replace(/,/g, '');
				expect(parseNumberText(text, comma)).toBe(Number(plain));
			}),
			RUNS
		);
	});

	it('XLSX number cells pass through unchanged; non-finite ones are refused', () => {
		fc.assert(
			fc.property(fc.double(), fc.boolean(), (x, comma) => {
				const v = parseNumberCell(x, comma);
				if (Number.isFinite(x)) expect(Object.is(v, x)).toBe(true);
				else expect(v).toBe('is not a finite number');
			}),
			RUNS
		);
	});
});

describe('number cells: refusals', () => {
	it('never throws, and always answers a number or a reason, for any text', () => {
		fc.assert(
			fc.property(fc.string({ unit: 'grapheme', maxLength: 40 }), fc.boolean(), (s, comma) => {
				const v = parseNumberText(s, comma);
				expect(typeof v === 'number' || (typeof v === 'string' && v.length > 0)).toBe(true);
				if (typeof v === 'number') expect(Number.isNaN(v)).toBe(false);
			}),
			RUNS
		);
	});

	it('a number with a fractional decimal point is never silently read in a decimal-comma file (and vice versa)', () => {
		fc.assert(
			fc.property(fc.integer({ min: -99999, max: 99999 }), fc.integer({ min: 1, max: 99999 }), fc.boolean(), (int, frac, comma) => {
				// One mark only, with 1–5 fraction digits: "12.5" in a comma file, "12,5" in a point file.
				const text = `${int}${comma ? '.' : ','}${frac}`;
				const v = parseNumberText(text, comma);
				// Either refused with a reason, or — only for a strict 3-digit group such as "1.234" — reported ambiguous.
				expect(typeof v).toBe('string');
				expect(v as string).toMatch(/decimal|ambiguous/);
			}),
			RUNS
		);
	});

	it('missing-value marks and spreadsheet errors are refused with their own reasons', () => {
		fc.assert(
			fc.property(
				fc.constantFrom('n/a', 'NA', 'N.A.', '-', '--', '?', 'null', 'NONE', 'missing', '#DIV/0!', '#VALUE!', '#N/A', 'NaN', 'inf', '-Infinity'),
				blanks,
				fc.boolean(),
				(mark, pad, comma) => {
					const v = parseNumberText(pad + mark + pad, comma);
					expect(v).toMatch(/missing-value mark|spreadsheet error|not a number \(NaN\)|not a finite number/);
				}
			)
		);
	});
});
