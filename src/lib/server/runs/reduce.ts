/**
 * From a run's samples (SI column arrays) and its settings to a reduction:
 * points, per-point corrections and the summary. No database access here:
 * the caller loads the facility, configuration and tare points. All the
 * aerodynamics is in src/lib/aero; this module only wires it.
 *
 * Tunnel: balance forces (body axes: normal/axial; wind axes: lift/drag) or
 * coefficients → weight tare subtracted in body axes, interpolated in α
 * (aero/axes tareAt) → wind axes → coefficients with q (measured, or ½ρV²
 * with ρ measured or from p/(R·T)) → boundary corrections of the facility
 * (aero/tunnel-corrections, each contribution kept).
 * Flight: steady segments (aero/flight-reduction detectSteadySegments), one
 * point per segment by the energy method (reduceFlightPoint).
 *
 * Results are preliminary engineering estimates; flight-test and
 * airworthiness decisions follow the organisation's approved procedures,
 * local regulations and licensed practice.
 */
import { G0, R_AIR, GAMMA, sutherlandViscosity } from '../../aero/atmosphere';
import { bodyToWind, transferMoments, tareAt, windCoefficients, windToBody, type TarePoint } from '../../aero/axes';
import { correctTunnelPoint, type TunnelSettings, type CorrectionContributions } from '../../aero/tunnel-corrections';
import { detectSteadySegments, reduceFlightPoint, type SteadySegment } from '../../aero/flight-reduction';
import type { ReductionSettingsInput } from './schemas';
import { coefficientPointUncertainty, extent, fitReduction, flightPointUncertainty, resolveUncertainty, tunnelPointUncertainty, type PointUncertainty } from './fits';
import type { PointHeadline } from '../../run-types';

const DEG = Math.PI / 180;

export type Columns = Map<string, ArrayLike<number>>;

export interface FacilityInfo {
	kind: string;
	testSection: { areaM2?: number; widthM?: number; heightM?: number } | null;
	/** Correction factors; `uncertainty` (optional) holds the balance calibration sheet's standard uncertainties. */
	corrections: { delta?: number; tau2?: number; k1tau1?: number; wakeMethod?: string; [k: string]: unknown } | null;
}

/** Aspect ratio b²/S of the reference values, or null. */
function aspectRatioOf(ref: ReferenceInfo): number | null {
	return ref.span && ref.area ? (ref.span * ref.span) / ref.area : null;
}

export interface ReferenceInfo {
	area: number | null;
	span: number | null;
	chord: number | null;
	momentRef: { x: number; y: number; z: number } | null;
}

export interface ReduceContext {
	kind: 'tunnel' | 'flight';
	/** File line / sheet row of each sample. */
	rowNumbers: ArrayLike<number>;
	facility: FacilityInfo | null;
	reference: ReferenceInfo;
	/** Wind-off tare points (body axes, N and N·m), when a tare run is used. */
	tare: TarePoint[] | null;
}

export interface PointOut extends PointHeadline {
	values: Record<string, unknown>;
	/** Expanded (k = 2) uncertainty of CL, CD, α (and Cm), or null when it cannot be estimated. */
	uncertainty: PointUncertainty | null;
}

export interface ReductionOut {
	/** The settings as applied, defaults filled in (stored with the version). */
	settings: Record<string, unknown>;
	points: PointOut[];
	corrections: Record<string, unknown>;
	fits: Record<string, unknown>;
	conditions: Record<string, number | null>;
	warnings: string[];
}

function col(cols: Columns, name: string): ArrayLike<number> | undefined {
	return cols.get(name);
}

function mean(xs: (number | null)[]): number | null {
	let s = 0;
	let n = 0;
	for (const x of xs) if (x !== null && Number.isFinite(x)) (s += x), n++;
	return n ? s / n : null;
}


function round(x: number | null, digits = 12): number | null {
	return x === null || !Number.isFinite(x) ? null : Number(x.toPrecision(digits));
}

/** Resolve the tunnel boundary-correction settings from the facility and the reduction settings. */
export function tunnelCorrectionSettings(
	facility: FacilityInfo | null,
	s: ReductionSettingsInput['corrections'] | undefined
): { enabled: boolean; settings: TunnelSettings | null; reason: string | null; maskellCD0?: number; oswald?: number } {
	const f = facility?.corrections ?? {};
	const jet = s?.jet ?? (facility?.kind === 'open_jet' ? 'open' : 'closed');
	const area = s?.testSectionArea ?? facility?.testSection?.areaM2 ?? (facility?.testSection?.widthM && facility.testSection.heightM ? facility.testSection.widthM * facility.testSection.heightM : undefined);
	const delta = s?.delta ?? (typeof f.delta === 'number' ? f.delta : undefined);
	const wanted = s?.enabled ?? (facility !== null && facility.kind !== 'flight' && delta !== undefined);
	if (!wanted) return { enabled: false, settings: null, reason: s?.enabled === false ? 'switched off in the reduction settings' : 'the facility defines no boundary corrections' };
	if (!area || delta === undefined) return { enabled: false, settings: null, reason: 'the test-section area or the lift-interference factor δ is not known' };
	const tau2 = s?.tau2 ?? (typeof f.tau2 === 'number' ? f.tau2 : 0);
	const wakeMethod = (s?.wakeMethod ?? (f.wakeMethod === 'maskell' ? 'maskell' : 'thom')) as 'thom' | 'maskell';
	let solidBlockage: TunnelSettings['solidBlockage'];
	if (s?.solidBlockageEpsilon !== undefined) solidBlockage = { epsilon: s.solidBlockageEpsilon };
	else if (s?.modelVolume !== undefined) solidBlockage = { k1Tau1: s.k1tau1 ?? (typeof f.k1tau1 === 'number' ? f.k1tau1 : 0), modelVolume: s.modelVolume };
	return {
		enabled: true,
		settings: { jet, testSectionArea: area, delta, tau2, wakeMethod, ...(solidBlockage ? { solidBlockage } : {}) },
		reason: null,
		maskellCD0: s?.maskellCD0,
		oswald: s?.oswald
	};
}

/** Reduce a tunnel run. */
export function reduceTunnel(cols: Columns, ctx: ReduceContext, s: ReductionSettingsInput): ReductionOut {
	const warnings: string[] = [];
	const n = ctx.rowNumbers.length;
	const alpha = col(cols, 'alpha');
	if (!alpha) throw new Error('tunnel reduction: no angle-of-attack column');
	const has = (k: string) => cols.has(k);
	const coeffs = has('CL') && has('CD');
	const coeffsBody = !coeffs && has('CN') && has('CA');
	const wind = has('lift') && has('drag');
	const body = has('normal_force') && has('axial_force');
	const ref: ReferenceInfo = {
		area: s.reference?.area ?? ctx.reference.area,
		span: s.reference?.span ?? ctx.reference.span,
		chord: s.reference?.chord ?? ctx.reference.chord,
		momentRef: s.reference?.momentRef ?? ctx.reference.momentRef
	};
	const corr = tunnelCorrectionSettings(ctx.facility, s.corrections);
	const excluded = new Set(s.excludedPoints ?? []);

	const q = col(cols, 'q');
	const V = col(cols, 'velocity');
	const rho = col(cols, 'density');
	const pS = col(cols, 'static_pressure');
	const pT = col(cols, 'total_pressure');
	const T = col(cols, 'temperature');

	type Raw = { i: number; alphaDeg: number; q: number | null; rho: number | null; V: number | null; T: number | null; p: number | null; CL: number | null; CD: number | null; Cm: number | null; forces: Record<string, number> | null; flags: string[] };
	const raws: Raw[] = [];
	for (let i = 0; i < n; i++) {
		const alphaDeg = alpha[i] / DEG;
		const Ti = T ? T[i] : null;
		const pi = pS ? pS[i] : null;
		let rhoi = rho ? rho[i] : pi !== null && Ti !== null && Ti > 0 ? pi / (R_AIR * Ti) : null;
		let qi: number | null = q ? q[i] : null;
		let Vi: number | null = V ? V[i] : null;
		if (qi === null && Vi !== null && rhoi !== null) qi = 0.5 * rhoi * Vi * Vi;
		if (qi === null && pT && pi !== null) qi = pT[i] - pi; // incompressible Pitot: q = p_t − p
		if (Vi === null && qi !== null && rhoi !== null && qi > 0) Vi = Math.sqrt((2 * qi) / rhoi);
		if (rhoi === null && qi !== null && Vi !== null && Vi > 0) rhoi = (2 * qi) / (Vi * Vi);
		const flags: string[] = [];
		let CL: number | null = null, CD: number | null = null, Cm: number | null = null;
		let forces: Record<string, number> | null = null;
		if (coeffs) {
			CL = col(cols, 'CL')![i];
			CD = col(cols, 'CD')![i];
			Cm = has('Cm') ? col(cols, 'Cm')![i] : null;
		} else if (coeffsBody) {
			const w = bodyToWind({ normal: col(cols, 'CN')![i], axial: col(cols, 'CA')![i] }, alphaDeg);
			CL = w.lift;
			CD = w.drag;
			Cm = has('Cm') ? col(cols, 'Cm')![i] : null;
		} else if (wind || body) {
			const M = has('pitching_moment') ? col(cols, 'pitching_moment')![i] : 0;
			let b = body
				? { normal: col(cols, 'normal_force')![i], axial: col(cols, 'axial_force')![i], pitching: M }
				: { ...windToBody({ lift: col(cols, 'lift')![i], drag: col(cols, 'drag')![i] }, alphaDeg), pitching: M };
			if (s.balanceOffset) b = { ...b, ...transferMoments(b, s.balanceOffset) } as typeof b;
			if (ctx.tare) {
				const t = tareAt(ctx.tare, alphaDeg);
				b = { normal: b.normal - t.normal, axial: b.axial - t.axial, pitching: (b.pitching ?? 0) - t.pitching };
				flags.push('tare');
			}
			const w = bodyToWind(b, alphaDeg);
			forces = { normal: b.normal, axial: b.axial, pitching: b.pitching ?? 0, lift: w.lift, drag: w.drag };
			if (qi !== null && qi > 0) {
				if (!ref.area) throw new ReferenceMissing('the reference area is not known: choose a configuration with a reference area, or give settings.reference.area');
				const chord = ref.chord ?? Math.sqrt(ref.area);
				const span = ref.span ?? ref.area / chord;
				const c = windCoefficients(w, { q: qi, area: ref.area, chord, span });
				CL = c.CL;
				CD = c.CD;
				Cm = has('pitching_moment') ? c.Cm : null;
			} else flags.push('wind_off');
		}
		raws.push({ i, alphaDeg, q: qi, rho: rhoi, V: Vi, T: Ti, p: pi, CL, CD, Cm, forces, flags });
	}

	// Maskell needs the attached-flow CD0: by default the run's least uncorrected CD (our choice, common practice, no source).
	let maskell: TunnelSettings['maskell'];
	if (corr.enabled && corr.settings?.wakeMethod === 'maskell') {
		const cds = raws.map((r) => r.CD).filter((x): x is number => x !== null);
		const CD0 = corr.maskellCD0 ?? (cds.length ? extent(cds)[0] : 0);
		const AR = ref.span && ref.area ? (ref.span * ref.span) / ref.area : undefined;
		if (AR) maskell = { CD0, aspectRatio: AR, e: corr.oswald ?? 1 };
		else {
			warnings.push('Maskell wake blockage needs the aspect ratio (reference span and area); Thom’s method was used instead');
			corr.settings!.wakeMethod = 'thom';
		}
	}
	const tsettings: TunnelSettings | null = corr.settings ? { ...corr.settings, ...(maskell ? { maskell } : {}) } : null;

	// Standard uncertainties; the run's largest load of each balance component stands in for full scale.
	const unc = resolveUncertainty(s.uncertainty, ctx.facility?.corrections ?? null);
	const maxLoads = { normal: 0, axial: 0, pitching: 0 };
	for (const r of raws) {
		if (!r.forces) continue;
		maxLoads.normal = Math.max(maxLoads.normal, Math.abs(r.forces.normal));
		maxLoads.axial = Math.max(maxLoads.axial, Math.abs(r.forces.axial));
		maxLoads.pitching = Math.max(maxLoads.pitching, Math.abs(r.forces.pitching));
	}
	const uncertaintyOf = (r: Raw): PointUncertainty | null => {
		try {
			if (r.forces && r.q !== null && r.q > 0 && ref.area) {
				return tunnelPointUncertainty(
					{ normal: r.forces.normal, axial: r.forces.axial, ...(has('pitching_moment') && ref.chord ? { pitching: r.forces.pitching, chord: ref.chord } : {}), q: r.q, area: ref.area, alphaDeg: r.alphaDeg },
					unc,
					maxLoads
				);
			}
			if ((coeffs || coeffsBody) && r.CL !== null) return coefficientPointUncertainty(unc);
		} catch {
			// an input outside the propagation's domain: no estimate for this point
		}
		return null;
	};

	const points: PointOut[] = [];
	const sums = { dAlpha: 0, dCD: 0, eps: 0, n: 0 };
	for (const r of raws) {
		const idx = r.i + 1;
		let alphaDeg = r.alphaDeg, CL = r.CL, CD = r.CD, Cm = r.Cm, qc = r.q, Vc = r.V;
		let contributions: CorrectionContributions | null = null;
		if (tsettings && CL !== null && CD !== null && r.q !== null && r.q > 0) {
			const c = correctTunnelPoint({ alphaDeg, CL, CD, Cm: Cm ?? 0, q: r.q, ...(r.V !== null ? { velocity: r.V } : {}) }, tsettings, { area: ref.area ?? 1 });
			contributions = c.contributions;
			alphaDeg = c.alphaDeg;
			CL = c.CL;
			CD = c.CD;
			Cm = Cm === null ? null : c.Cm;
			qc = c.q;
			Vc = c.velocity ?? Vc;
			sums.dAlpha += contributions.liftInterference.dAlphaDeg + contributions.streamlineCurvature.dAlphaDeg;
			sums.dCD += c.CD - r.CD!;
			sums.eps += contributions.blockage.epsilon;
			sums.n++;
		}
		const Tk = r.T;
		const reynolds = Vc !== null && r.rho !== null && Tk !== null && ref.chord ? (r.rho * Vc * ref.chord) / sutherlandViscosity(Tk) : null;
		const mach = Vc !== null && Tk !== null && Tk > 0 ? Vc / Math.sqrt(GAMMA * R_AIR * Tk) : null;
		points.push({
			idx,
			alphaDeg: round(alphaDeg),
			CL: round(CL),
			CD: round(CD),
			Cm: round(Cm),
			qPa: round(qc),
			velocity: round(Vc),
			reynolds: round(reynolds),
			mach: round(mach),
			values: {
				row: ctx.rowNumbers[r.i],
				uncorrected: { alphaDeg: round(r.alphaDeg), CL: round(r.CL), CD: round(r.CD), Cm: round(r.Cm), qPa: round(r.q) },
				...(r.forces ? { forces: r.forces } : {}),
				...(contributions ? { corrections: contributions } : {}),
				density: round(r.rho),
				temperatureK: round(r.T),
				pressurePa: round(r.p)
			},
			uncertainty: uncertaintyOf(r),
			flags: r.flags,
			excluded: excluded.has(idx)
		});
	}
	const corrections: Record<string, unknown> = corr.enabled
		? {
				applied: true,
				method: 'Barlow, Rae & Pope, Low-Speed Wind Tunnel Testing, 3rd ed., ch. 10',
				settings: tsettings,
				mean: sums.n ? { deltaAlphaDeg: sums.dAlpha / sums.n, deltaCD: sums.dCD / sums.n, blockage: sums.eps / sums.n } : null
			}
		: { applied: false, reason: corr.reason };
	const applied = {
		...s,
		tareRunId: s.tareRunId ?? null,
		reference: ref,
		corrections: corr.enabled ? { enabled: true, ...tsettings } : { enabled: false },
		inputs: coeffs ? 'coefficients' : coeffsBody ? 'body-axis coefficients' : body ? 'body-axis forces' : 'wind-axis forces',
		uncertaintyApplied: unc
	};
	const fits = fitReduction(points, aspectRatioOf(ref));
	return { settings: applied, points, corrections, fits, conditions: conditionsOf(points), warnings: [...warnings, ...fits.warnings.filter((w) => !w.startsWith('the aspect ratio'))] };
}

function conditionsOf(points: PointOut[]): Record<string, number | null> {
	const pick = (f: (p: PointOut) => unknown) => mean(points.map((p) => (typeof f(p) === 'number' ? (f(p) as number) : null)));
	return {
		qPa: pick((p) => p.qPa),
		velocity: pick((p) => p.velocity),
		density: pick((p) => (p.values as { density?: number }).density),
		temperatureK: pick((p) => (p.values as { temperatureK?: number }).temperatureK),
		pressurePa: pick((p) => (p.values as { pressurePa?: number }).pressurePa),
		reynolds: pick((p) => p.reynolds),
		mach: pick((p) => p.mach)
	};
}

export class ReferenceMissing extends Error {}

const AIRSPEEDS = [
	['airspeed_cas', 'CAS'],
	['airspeed_eas', 'EAS'],
	['airspeed_tas', 'TAS']
] as const;

/** Default steady-segment thresholds, SI: 10 s, airspeed within 1.5 m/s (≈ 3 kt), altitude within 15 m (≈ 50 ft). Common practice, no source. */
export const DEFAULT_SEGMENT_THRESHOLDS = { minDuration: 10, airspeedBand: 1.5, altitudeBand: 15 };

/** Reduce a flight run: steady segments, then one energy-method point each. */
export function reduceFlight(cols: Columns, ctx: ReduceContext, s: ReductionSettingsInput): ReductionOut {
	const warnings: string[] = [];
	const air = AIRSPEEDS.find(([k]) => cols.has(k));
	if (!air) throw new Error('flight reduction: no airspeed column');
	const [airField, airKind] = air;
	const bands: Record<string, number> = s.segments?.bands ?? { [airField]: DEFAULT_SEGMENT_THRESHOLDS.airspeedBand, pressure_altitude: DEFAULT_SEGMENT_THRESHOLDS.altitudeBand };
	const minDuration = s.segments?.minDuration ?? DEFAULT_SEGMENT_THRESHOLDS.minDuration;
	const channels: Record<string, ArrayLike<number>> = {};
	for (const k of ['time', airField, 'pressure_altitude', 'oat', 'weight', 'load_factor', 'alpha', 'climb_rate', 'longitudinal_accel', 'thrust', 'pitch', 'flap']) {
		const c = cols.get(k);
		if (c) channels[k] = c;
	}
	for (const k of Object.keys(bands)) if (!channels[k]) throw new Error(`steady segments: band given for '${k}' but the run has no such column`);
	const segments: SteadySegment[] = detectSteadySegments(channels, { minDuration, bands, timeChannel: 'time' });
	const ref = {
		area: s.reference?.area ?? ctx.reference.area,
		span: s.reference?.span ?? ctx.reference.span,
		chord: s.reference?.chord ?? ctx.reference.chord,
		momentRef: s.reference?.momentRef ?? ctx.reference.momentRef
	};
	if (!ref.area || !ref.chord) {
		throw new ReferenceMissing('the wing reference area and chord are not known: choose a configuration with reference values, or give settings.reference');
	}
	const excluded = new Set(s.excludedPoints ?? []);
	const unc = resolveUncertainty(s.uncertainty, null);
	const points: PointOut[] = segments.map((seg, k) => {
		const m = (name: string) => seg.stats[name]?.mean;
		const oat = m('oat');
		const r = reduceFlightPoint({
			weight: (m('weight') as number) * G0,
			loadFactor: m('load_factor') ?? 1,
			airspeed: m(airField) as number,
			airspeedKind: airKind,
			pressureAltitude: m('pressure_altitude') as number,
			// Without OAT the ISA temperature at the pressure altitude (troposphere lapse, ISO 2533).
			outsideAirTemperature: oat ?? 288.15 - 0.0065 * (m('pressure_altitude') as number),
			alphaDeg: m('alpha') !== undefined ? (m('alpha') as number) / DEG : 0,
			climbRate: m('climb_rate') ?? 0,
			acceleration: m('longitudinal_accel') ?? 0,
			thrust: m('thrust') ?? 0,
			thrustIncidenceDeg: s.thrustIncidenceDeg ?? 0,
			wingArea: ref.area as number,
			referenceChord: ref.chord as number
		});
		const flags: string[] = [];
		if (r.powerOff) flags.push('power_off');
		if (oat === undefined) flags.push('isa_temperature');
		const idx = k + 1;
		const thrust = m('thrust') ?? 0;
		const thrustCoefficient = r.q > 0 ? (thrust * Math.cos((m('alpha') ?? 0) + (s.thrustIncidenceDeg ?? 0) * DEG)) / (r.q * (ref.area as number)) : 0;
		let uncertainty: PointUncertainty | null = null;
		if (Number.isFinite(r.CL) && Number.isFinite(r.CD)) {
			try {
				uncertainty = flightPointUncertainty({ CL: r.CL, CD: r.CD, loadFactor: m('load_factor') ?? 1, thrustCoefficient }, unc);
			} catch {
				uncertainty = null;
			}
		}
		return {
			idx,
			alphaDeg: m('alpha') !== undefined ? round((m('alpha') as number) / DEG) : null,
			CL: round(r.CL),
			CD: round(r.CD),
			Cm: null,
			qPa: round(r.q),
			velocity: round(r.tas),
			reynolds: round(r.reynolds),
			mach: round(r.mach),
			values: {
				segment: { start: seg.start, end: seg.end, startTime: seg.startTime, endTime: seg.endTime, count: seg.count, firstRow: ctx.rowNumbers[seg.start], lastRow: ctx.rowNumbers[seg.end] },
				stats: seg.stats,
				density: round(r.density),
				temperatureK: round(oat ?? null),
				eas: round(r.eas),
				cas: round(r.cas),
				specificExcessPower: round(r.specificExcessPower),
				flightPathAngleDeg: round(r.flightPathAngleDeg)
			},
			uncertainty,
			flags,
			excluded: excluded.has(idx)
		};
	});
	if (points.length === 0) warnings.push('no steady segment was found with these thresholds; widen the bands or shorten the minimum duration');
	// Flight: the polar fits on the segment points; the lift curve too when the run records α.
	const fits = fitReduction(points, aspectRatioOf(ref), { liftCurve: cols.has('alpha') });
	if (points.length > 0) warnings.push(...fits.warnings.filter((w) => !w.startsWith('the aspect ratio')));
	return {
		settings: { ...s, reference: ref, segments: { minDuration, bands }, airspeed: airField, method: 'energy method (Kimberlin, Flight Testing of Fixed-Wing Aircraft, ch. 8)', uncertaintyApplied: unc },
		points,
		corrections: { applied: false, reason: 'flight run' },
		fits,
		conditions: conditionsOf(points),
		warnings
	};
}

export function reduce(cols: Columns, ctx: ReduceContext, s: ReductionSettingsInput): ReductionOut {
	return ctx.kind === 'tunnel' ? reduceTunnel(cols, ctx, s) : reduceFlight(cols, ctx, s);
}
