/**
 * Spanline's aerodynamic core: pure, typed functions with no I/O and no
 * framework imports. Results are plain objects; invalid input throws an Error
 * that says what is wrong and where.
 *
 * Predictions and reductions are preliminary engineering estimates;
 * flight-test and airworthiness decisions follow the organisation's approved
 * procedures, local regulations and licensed practice.
 *
 * Modules, methods and references:
 *
 * - `units` — SI and US customary units, `convert`, `toSI`, `fromSI`,
 *   `parseUnit`, `siUnitOf`. Factors: NIST SP 811 (2008), Appendix B.
 * - `atmosphere` — `standardAtmosphere` (ISO 2533:1975 / U.S. Standard
 *   Atmosphere 1976 to 32 km, ISA+ΔT), `sutherlandViscosity` (USSA 1976),
 *   `pressureAltitude`, `atmosphereFromPressureAltitude`,
 *   `atmosphereFromPressureTemperature`, `densityFromPressureTemperature`.
 * - `airspeed` — `airspeeds` (CAS/EAS/TAS/Mach by the subsonic compressible
 *   pitot relations; Anderson, *Fundamentals of Aerodynamics*, ch. 8;
 *   Kimberlin, *Flight Testing of Fixed-Wing Aircraft*, airspeed-calibration chapter),
 *   `dynamicPressure`, `dynamicPressureFromMach`, `reynoldsNumber`.
 * - `planform` — `planformGeometry`, `validateWing`, `taperedWing`,
 *   `ellipticWing` (Raymer, *Aircraft Design*, wing geometry).
 * - `lifting-line` — `solveLiftingLine`, `liftCurve` (one factorisation,
 *   superposition in α), `buildLiftingLineSystem`: Prandtl's lifting line by
 *   Glauert's Fourier series (Glauert 1926; Anderson ch. 5), Prandtl–Glauert
 *   compressibility; closed forms `ellipticLiftingLine` (Anderson ch. 5),
 *   `helmboldLiftSlope` (Anderson, *Aircraft Performance and Design*,
 *   Eq. 2.18a), `datcomLiftSlope` (USAF DATCOM §4.1.3.2),
 *   `raymerOswaldEfficiency` (Raymer, straight-wing estimate, rule of thumb).
 * - `horseshoe` — `solveHorseshoe`, `horseshoeDownwash`,
 *   `biotSavartSegment`, `biotSavartSemiInfinite`: discrete horseshoe
 *   vortices by the Biot–Savart law (Katz & Plotkin, *Low-Speed
 *   Aerodynamics*, §2.10, §10.4.5), an independent check of the Fourier solver.
 * - `nonlinear-lifting-line` — `solveNonlinearLiftingLine`, `sweepToStall`,
 *   `prepareNonlinear`, `solveNonlinearAt`: section cl(α) tables through
 *   stall, under-relaxed Newton with a Levenberg–Marquardt fallback
 *   (Anderson ch. 5; Sivells & Neely, NACA TN 1269).
 * - `axes` — `bodyToWind`, `windToBody`, `transferMoments`, `tareAt`,
 *   `subtractTare`, `windCoefficients` (Etkin & Reid, ch. 4; Barlow, Rae &
 *   Pope, *Low-Speed Wind Tunnel Testing*, 3rd ed., balance-data chapters).
 * - `tunnel-corrections` — `correctTunnelPoint` (each correction reported
 *   separately), `solidBlockage`, `thomWakeBlockage`, `maskellWakeBlockage`
 *   (Barlow, Rae & Pope, 3rd ed., ch. 10; Glauert R&M 1566; Maskell R&M 3400).
 * - `flight-reduction` — `reduceFlightPoint` (energy method, Kimberlin ch. 8),
 *   `detectSteadySegments` (O(n) sliding-window extrema on column arrays).
 * - `polar-fit` — `fitLiftCurve`, `fitParabolicPolar`, `fitOffsetPolar`
 *   (least squares by ml-regression, Student-t intervals, R-student outliers;
 *   Montgomery & Runger ch. 11–12), `studentTQuantile`, `studentTCdf`,
 *   `regularizedIncompleteBeta` (Numerical Recipes, 3rd ed., §6.4).
 * - `uncertainty` — `balanceUncertainty`, `combine`, `numericSensitivities`:
 *   first-order Taylor-series propagation, RSS, k = 2 (AIAA S-071A-1999;
 *   ASME PTC 19.1).
 * - `linalg` — `luFactor`, `luSolve`, `solveDense` (Golub & Van Loan,
 *   Gaussian elimination with partial pivoting, §3.4).
 */
export * from './units';
export * from './atmosphere';
export * from './airspeed';
export * from './planform';
export * from './lifting-line';
export * from './horseshoe';
export * from './nonlinear-lifting-line';
export * from './flap';
export * from './axes';
export * from './tunnel-corrections';
export * from './flight-reduction';
export * from './polar-fit';
export * from './uncertainty';
export * from './linalg';

/**
 * The caution shown beside predictions and reductions wherever they could
 * feed flight or structural decisions.
 */
export const SAFETY_NOTICE =
	'Predictions and reductions are preliminary engineering estimates. Flight-test and airworthiness decisions follow the organisation’s approved procedures, local regulations and licensed practice.';
