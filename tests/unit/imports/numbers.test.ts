import { describe, expect, it } from 'vitest';
import { parseNumberCell, parseNumberText } from '../../../src/lib/server/imports/numbers';

describe('parseNumberText', () => {
	// Expected values are the plain decimal reading of each string (no source needed).
	it.each([
		['1.25', false, 1.25],
		['+1.25', false, 1.25],
		['-0.5', false, -0.5],
		['.5', false, 0.5],
		['3.', false, 3],
		['1e3', false, 1000],
		['-2.5E-2', false, -0.025],
		['  7.0 ', false, 7],
		['1,25', true, 1.25],
		['-0,5e3', true, -500],
		['+12', true, 12],
		['1,234.5', false, 1234.5],
		['1.234.567,25', true, 1234567.25]
	])('%s (decimal comma %s) → %d', (text, dc, expected) => {
		expect(parseNumberText(text, dc)).toBe(expected);
	});

	it.each([
		['', false, 'is empty'],
		['NaN', false, 'is not a number (NaN)'],
		['n/a', false, 'is not a number (a missing-value mark)'],
		['#DIV/0!', false, 'is a spreadsheet error, not a number'],
		['Infinity', false, 'is not a finite number'],
		['1,234', false, 'is ambiguous: a thousands separator or a decimal comma? This file uses decimal points'],
		['1.234', true, 'is ambiguous: a thousands separator or a decimal point? This file uses decimal commas'],
		['1.25', true, 'uses a decimal point, but this file uses decimal commas'],
		['1,5', false, 'uses a decimal comma, but this file uses decimal points'],
		['1 234,5', true, 'has digit groups separated by spaces or apostrophes; remove them'],
		['0x10', false, 'is not a number'],
		['12abc', false, 'is not a number']
	])('%s (decimal comma %s) is refused: %s', (text, dc, message) => {
		expect(parseNumberText(text, dc)).toBe(message);
	});

	it('passes spreadsheet numbers through and refuses non-finite ones', () => {
		expect(parseNumberCell(0.125, false)).toBe(0.125);
		expect(parseNumberCell(Number.NaN, false)).toBe('is not a finite number');
		expect(parseNumberCell(null, false)).toBe('is empty');
	});
});
