import { describe, it, expect } from 'vitest';
import { incrementData, incrementSeries, interpolate } from '$lib/components/compare/increment';

// Linear interpolation is exact for straight lines (any numerical-analysis text); cases are by construction.
describe('increment between two runs', () => {
	it('interpolates linearly inside the data and refuses to extrapolate', () => {
		expect(interpolate([0, 2, 4], [1, 3, 9], 1)).toBe(2);
		expect(interpolate([0, 2, 4], [1, 3, 9], 3)).toBe(6);
		expect(interpolate([0, 2, 4], [1, 3, 9], 4)).toBe(9);
		expect(interpolate([0, 2, 4], [1, 3, 9], 0)).toBe(1);
		expect(interpolate([0, 2, 4], [1, 3, 9], -0.1)).toBeNull();
		expect(interpolate([0, 2, 4], [1, 3, 9], 4.1)).toBeNull();
		expect(interpolate([], [], 1)).toBeNull();
	});

	it('measured ΔCL at run a’s α from run b interpolated; predicted ΔCL on the shared grid', () => {
		// b = a + 0.3 + 0.01·α on straight lines: the increment is exact at every common α.
		const a = { label: 'A', points: [-2, 0, 2, 4, 6].map((x) => ({ alphaDeg: x, CL: 0.1 * x + 0.2 })), curve: [-1, 0, 1, 2].map((x) => ({ alphaDeg: x, CL: 0.09 * x })) };
		const b = { label: 'B', points: [-1, 1.5, 3, 5].map((x) => ({ alphaDeg: x, CL: 0.11 * x + 0.5 })), curve: [0, 1, 2, 3].map((x) => ({ alphaDeg: x, CL: 0.09 * x + 0.25 })) };
		const d = incrementData(a, b);
		expect(d.measured.map((p) => p.x)).toEqual([0, 2, 4]); // −2 and 6 are outside run b's range
		d.measured.forEach((p) => expect(p.y).toBeCloseTo(0.3 + 0.01 * p.x, 12));
		expect(d.predicted.map((p) => p.x)).toEqual([0, 1, 2]);
		d.predicted.forEach((p) => expect(p.y).toBeCloseTo(0.25, 12));
		const s = incrementSeries(a, b, '#6a4c93', 0.02);
		expect(s.map((x) => x.kind)).toEqual(['band', 'line', 'points']);
		expect(s[2].label).toBe('measured ΔCL (run B − run A)');
		const band = s[0];
		if (band.kind !== 'band') throw new Error('expected a band');
		expect(band.data[0].hi - band.data[0].lo).toBeCloseTo(0.04, 12);
		// Without predictions only the measured increment is drawn.
		expect(incrementSeries({ ...a, curve: null }, b, '#000000', 0.02).map((x) => x.kind)).toEqual(['points']);
	});
});
