// Property-based tests (fast-check) of the unit conversions in src/lib/aero/units.ts:
// every unit converts to SI and back to the same value, conversions between
// two units of one quantity invert each other and compose through SI, and
// every conversion is strictly increasing (all factors are positive, and the
// temperature scales are affine with positive slope — NIST SP 811 (2008),
// App. B.8/B.9). Tolerances are relative, a few units in the last place of a
// double, because a conversion is one multiplication and one division.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { UNITS, convert, fromSI, quantityOf, siUnitOf, toSI } from '../../../src/lib/aero/units';

const IDS = Object.keys(UNITS);
const unit = fc.constantFrom(...IDS);
/** Values across the range met in test data, including exact zero and tiny magnitudes. */
const value = fc.oneof(fc.double({ min: -1e9, max: 1e9, noNaN: true }), fc.constant(0), fc.double({ min: -1e-6, max: 1e-6, noNaN: true }));
const RUNS = { numRuns: 3000 };

/** Close within `rel` of the larger magnitude, or `abs` near zero (affine scales shift zero). */
function close(a: number, b: number, rel = 1e-12, abs = 1e-9) {
	return Math.abs(a - b) <= Math.max(abs, rel * Math.max(Math.abs(a), Math.abs(b)));
}

/** Pairs of units measuring the same quantity. */
const samePair = unit.chain((a) => fc.tuple(fc.constant(a), fc.constantFrom(...IDS.filter((b) => quantityOf(b) === quantityOf(a)))));

describe('unit conversions', () => {
	it('the table is not empty and every unit has a quantity with an SI unit of factor 1', () => {
		expect(IDS.length).toBeGreaterThan(40);
		for (const id of IDS) {
			const si = siUnitOf(quantityOf(id));
			expect(toSI(1, si)).toBe(1);
			expect(fromSI(1, si)).toBe(1);
		}
	});

	it('fromSI(toSI(x)) = x for every unit', () => {
		fc.assert(
			fc.property(unit, value, (u, x) => {
				expect(close(fromSI(toSI(x, u), u), x), `${x} ${u}`).toBe(true);
			}),
			RUNS
		);
	});

	it('convert(convert(x, a, b), b, a) = x for any two units of one quantity', () => {
		fc.assert(
			fc.property(samePair, value, ([a, b], x) => {
				expect(close(convert(convert(x, a, b), b, a), x, 1e-11), `${x} ${a}→${b}→${a}`).toBe(true);
			}),
			RUNS
		);
	});

	it('convert(x, a, b) = fromSI(toSI(x, a), b) and a → b → c equals a → c', () => {
		fc.assert(
			fc.property(samePair, value, ([a, b], x) => {
				expect(close(convert(x, a, b), fromSI(toSI(x, a), b))).toBe(true);
				const c = siUnitOf(quantityOf(a));
				expect(close(convert(convert(x, a, b), b, c), convert(x, a, c), 1e-11)).toBe(true);
			}),
			RUNS
		);
	});

	it('every conversion is strictly increasing: x < y ⇒ convert(x) < convert(y)', () => {
		fc.assert(
			fc.property(samePair, value, fc.double({ min: 1e-3, max: 1e6, noNaN: true }), ([a, b], x, step) => {
				const y = x + step * Math.max(1, Math.abs(x)) * 1e-3;
				fc.pre(y > x);
				expect(convert(y, a, b)).toBeGreaterThan(convert(x, a, b));
				expect(toSI(y, a)).toBeGreaterThan(toSI(x, a));
			}),
			RUNS
		);
	});

	it('linear units scale: convert(k·x) = k·convert(x) except for the affine temperature scales', () => {
		const affine = new Set(IDS.filter((id) => quantityOf(id) === 'temperature' && Math.abs(toSI(0, id)) > 0));
		fc.assert(
			fc.property(samePair, value, fc.double({ min: -1e3, max: 1e3, noNaN: true }), ([a, b], x, k) => {
				fc.pre(!affine.has(a) && !affine.has(b));
				expect(close(convert(k * x, a, b), k * convert(x, a, b), 1e-11, 1e-300)).toBe(true);
			}),
			RUNS
		);
	});

	it('units of different quantities refuse to convert, naming both', () => {
		fc.assert(
			fc.property(unit, unit, (a, b) => {
				const qa = quantityOf(a);
				const qb = quantityOf(b);
				fc.pre(qa !== qb && !(new Set([qa, qb]).has('rate') && new Set([qa, qb]).has('velocity')));
				expect(() => convert(1, a, b)).toThrow(new RegExp(`cannot convert from '${a.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}'`));
			}),
			{ numRuns: 500 }
		);
	});
});
