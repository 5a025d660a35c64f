import { describe, expect, it } from 'vitest';
import * as aero from '$lib/aero';

// The public surface other modules rely on (issue 3); a missing re-export fails here.
describe('aero index re-exports the core', () => {
	it.each([
		'convert', 'toSI', 'fromSI', 'parseUnit', 'siUnitOf',
		'standardAtmosphere', 'sutherlandViscosity', 'pressureAltitude', 'atmosphereFromPressureAltitude',
		'airspeeds', 'dynamicPressure', 'reynoldsNumber',
		'planformGeometry', 'validateWing', 'taperedWing', 'ellipticWing',
		'solveLiftingLine', 'liftCurve', 'ellipticLiftingLine', 'helmboldLiftSlope', 'datcomLiftSlope',
		'solveHorseshoe', 'horseshoeDownwash', 'biotSavartSegment',
		'solveNonlinearLiftingLine', 'sweepToStall',
		'bodyToWind', 'transferMoments', 'tareAt', 'subtractTare', 'windCoefficients',
		'correctTunnelPoint', 'reduceFlightPoint', 'detectSteadySegments',
		'fitLiftCurve', 'fitParabolicPolar', 'fitOffsetPolar', 'studentTQuantile',
		'balanceUncertainty', 'combine', 'luFactor', 'luSolve'
	])('%s', (name) => {
		expect(typeof (aero as Record<string, unknown>)[name]).toBe('function');
	});
	it('carries the safety notice', () => {
		expect(aero.SAFETY_NOTICE).toMatch(/preliminary engineering estimates/);
		expect(Object.keys(aero.UNITS)).toContain('lbf');
	});
});
