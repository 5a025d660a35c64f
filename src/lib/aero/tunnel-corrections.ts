/**
 * Wind-tunnel boundary corrections for a three-dimensional wing: solid
 * blockage, wake blockage (Thom; Maskell for separated flow), lift
 * interference with the boundary-correction factor δ, and streamline
 * curvature with τ₂. Each correction is reported separately.
 *
 * References: Barlow, Rae & Pope, *Low-Speed Wind Tunnel Testing*, 3rd ed.
 * (Wiley, 1999), ch. 10; Glauert, ARC R&M 1566 (1933); Maskell, ARC R&M 3400
 * (1963). Shape factors K₁, τ₁, τ₂ and δ come from the book's charts for the
 * facility and model; they are inputs here.
 */

const DEG = Math.PI / 180;

export type JetKind = 'closed' | 'open';
export type WakeMethod = 'thom' | 'maskell';

/** δ for a small wing in a closed circular jet, by the method of images (Barlow, Rae & Pope, ch. 10). */
export const CLOSED_CIRCULAR_JET_DELTA = 0.125;

export interface UncorrectedPoint {
	alphaDeg: number;
	CL: number;
	CD: number;
	Cm?: number;
	/** Uncorrected dynamic pressure, Pa. */
	q: number;
	/** Uncorrected speed, m/s (optional; scaled by 1 + ε). */
	velocity?: number;
}

export interface TunnelSettings {
	jet: JetKind;
	/** Test-section cross-sectional area C, m². */
	testSectionArea: number;
	/** Boundary-correction factor δ as a magnitude ≥ 0; its sign follows the jet (negative for an open jet). */
	delta: number;
	/** Streamline-curvature factor τ₂ ≥ 0 (default 0: no curvature correction). */
	tau2?: number;
	/** Solid blockage: either ε_sb directly or K₁·τ₁ and the model volume (m³). */
	solidBlockage?: { epsilon: number } | { k1Tau1: number; modelVolume: number };
	/** Wake blockage method (default thom). */
	wakeMethod?: WakeMethod;
	/** Maskell inputs: the attached-flow profile drag CD0 and either CDi or AR (and e) to estimate it as CL²/(π·AR·e). */
	maskell?: { CD0: number; CDi?: number; aspectRatio?: number; e?: number };
}

export interface ModelReference {
	/** Wing reference area S, m². */
	area: number;
	/** Wing lift-curve slope per rad, for the streamline-curvature pitching-moment term (optional). */
	liftSlopePerRad?: number;
}

export interface CorrectionContributions {
	solidBlockage: { epsilon: number };
	wakeBlockage: { epsilon: number; method: WakeMethod };
	blockage: { epsilon: number; dq: number; dCL: number; dCD: number; dCm: number };
	liftInterference: { dAlphaDeg: number; dCD: number };
	streamlineCurvature: { dAlphaDeg: number; dCm: number };
}

export interface CorrectedPoint {
	alphaDeg: number;
	CL: number;
	CD: number;
	Cm: number;
	q: number;
	velocity?: number;
	contributions: CorrectionContributions;
	notes: string[];
}

function num(name: string, v: unknown): number {
	if (typeof v !== 'number' || !Number.isFinite(v)) throw new Error(`tunnel correction: ${name} must be a finite number (got ${String(v)})`);
	return v;
}

/** Solid blockage ε_sb = K₁τ₁·V_model/C^1.5 (Barlow, Rae & Pope, 3rd ed., ch. 10). */
export function solidBlockage(k1Tau1: number, modelVolume: number, testSectionArea: number): number {
	num('K1·τ1', k1Tau1);
	num('model volume', modelVolume);
	num('test-section area', testSectionArea);
	if (testSectionArea <= 0) throw new Error(`tunnel correction: test-section area must be > 0 (got ${testSectionArea})`);
	if (modelVolume < 0 || k1Tau1 < 0) throw new Error(`tunnel correction: K1·τ1 and model volume must be ≥ 0 (got ${k1Tau1}, ${modelVolume})`);
	return (k1Tau1 * modelVolume) / Math.pow(testSectionArea, 1.5);
}

/** Wake blockage by Thom's method, ε_wb = (S/4C)·CD_u (Barlow, Rae & Pope, ch. 10). */
export function thomWakeBlockage(area: number, testSectionArea: number, CDu: number): number {
	return (area / (4 * testSectionArea)) * CDu;
}

/**
 * Wake blockage by Maskell's method for separated flow,
 * ε_wb = (S/4C)·CD0 + (5S/4C)·(CD_u − CDi − CD0) (Barlow, Rae & Pope, ch. 10,
 * from memory). A negative separated-drag term is taken as zero.
 */
export function maskellWakeBlockage(area: number, testSectionArea: number, CDu: number, CD0: number, CDi: number): number {
	const sep = Math.max(0, CDu - CDi - CD0);
	return (area / (4 * testSectionArea)) * CD0 + ((5 * area) / (4 * testSectionArea)) * sep;
}

/**
 * Correct one tunnel point for the boundaries (Barlow, Rae & Pope, 3rd ed.,
 * ch. 10). Order: blockage on q and the coefficients (CL, Cm × (1 − 2ε),
 * CD × (1 − 3ε_sb − 2ε_wb), q × (1 + ε)²), then lift interference
 * Δα = δ(S/C)CL, ΔCD = δ(S/C)CL², then streamline curvature
 * Δα_sc = τ₂δ(S/C)CL and, with a lift slope, ΔCm = 0.25·a·Δα_sc.
 */
export function correctTunnelPoint(point: UncorrectedPoint, settings: TunnelSettings, model: ModelReference): CorrectedPoint {
	const alphaU = num('alphaDeg', point.alphaDeg);
	const CLu = num('CL', point.CL);
	const CDu = num('CD', point.CD);
	const Cmu = num('Cm', point.Cm ?? 0);
	const qu = num('q', point.q);
	if (qu <= 0) throw new Error(`tunnel correction: q must be > 0 (got ${qu})`);
	if (settings.jet !== 'closed' && settings.jet !== 'open') {
		throw new Error(`tunnel correction: jet must be closed or open (got ${String(settings.jet)})`);
	}
	const C = num('test-section area', settings.testSectionArea);
	if (C <= 0) throw new Error(`tunnel correction: test-section area must be > 0 (got ${C})`);
	const S = num('model area', model.area);
	if (S <= 0) throw new Error(`tunnel correction: model area must be > 0 (got ${S})`);
	const deltaMag = num('delta', settings.delta);
	if (deltaMag < 0) throw new Error(`tunnel correction: delta is a magnitude and must be ≥ 0; the jet kind sets its sign (got ${deltaMag})`);
	const tau2 = num('tau2', settings.tau2 ?? 0);
	if (tau2 < 0) throw new Error(`tunnel correction: tau2 must be ≥ 0 (got ${tau2})`);
	const sign = settings.jet === 'closed' ? 1 : -1;
	const delta = sign * deltaMag;
	const notes: string[] = [];

	let eSb = 0;
	const sb = settings.solidBlockage;
	if (sb) {
		if ('epsilon' in sb) eSb = num('solid blockage epsilon', sb.epsilon);
		else eSb = solidBlockage(sb.k1Tau1, sb.modelVolume, C);
	}
	const method: WakeMethod = settings.wakeMethod ?? 'thom';
	let eWb: number;
	if (method === 'thom') {
		eWb = thomWakeBlockage(S, C, CDu);
	} else if (method === 'maskell') {
		const mk = settings.maskell;
		if (!mk) throw new Error('tunnel correction: Maskell wake blockage needs maskell.CD0 and maskell.CDi or maskell.aspectRatio');
		const CD0 = num('maskell.CD0', mk.CD0);
		let CDi: number;
		if (mk.CDi !== undefined) CDi = num('maskell.CDi', mk.CDi);
		else if (mk.aspectRatio !== undefined) {
			const AR = num('maskell.aspectRatio', mk.aspectRatio);
			const e = num('maskell.e', mk.e ?? 1);
			if (AR <= 0 || e <= 0) throw new Error(`tunnel correction: maskell aspectRatio and e must be > 0 (got ${AR}, ${e})`);
			CDi = (CLu * CLu) / (Math.PI * AR * e);
		} else throw new Error('tunnel correction: Maskell wake blockage needs maskell.CDi or maskell.aspectRatio');
		if (CDu - CDi - CD0 < 0) notes.push('Maskell: separated-drag term CDu − CDi − CD0 < 0, taken as 0 (attached flow)');
		eWb = maskellWakeBlockage(S, C, CDu, CD0, CDi);
	} else {
		throw new Error(`tunnel correction: wake method must be thom or maskell (got ${String(method)})`);
	}
	if (settings.jet === 'open' && (eSb !== 0 || eWb !== 0)) {
		notes.push('open jet: blockage is usually small; the blockage inputs are applied as given');
	}
	const eps = eSb + eWb;
	const q = qu * (1 + eps) * (1 + eps);
	const CLb = CLu * (1 - 2 * eps);
	const CDb = CDu * (1 - 3 * eSb - 2 * eWb);
	const Cmb = Cmu * (1 - 2 * eps);

	const ratio = S / C;
	const dAlphaUp = delta * ratio * CLb; // rad
	const dCDi = delta * ratio * CLb * CLb;
	const dAlphaSc = tau2 * delta * ratio * CLb; // rad
	let dCmSc = 0;
	if (tau2 !== 0) {
		if (model.liftSlopePerRad !== undefined) dCmSc = 0.25 * num('liftSlopePerRad', model.liftSlopePerRad) * dAlphaSc;
		else notes.push('streamline curvature: no lift slope given, so no pitching-moment correction was applied');
	}
	const out: CorrectedPoint = {
		alphaDeg: alphaU + (dAlphaUp + dAlphaSc) / DEG,
		CL: CLb,
		CD: CDb + dCDi,
		Cm: Cmb + dCmSc,
		q,
		contributions: {
			solidBlockage: { epsilon: eSb },
			wakeBlockage: { epsilon: eWb, method },
			blockage: { epsilon: eps, dq: q - qu, dCL: CLb - CLu, dCD: CDb - CDu, dCm: Cmb - Cmu },
			liftInterference: { dAlphaDeg: dAlphaUp / DEG, dCD: dCDi },
			streamlineCurvature: { dAlphaDeg: dAlphaSc / DEG, dCm: dCmSc }
		},
		notes
	};
	if (point.velocity !== undefined) out.velocity = num('velocity', point.velocity) * (1 + eps);
	return out;
}
