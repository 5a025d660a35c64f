// Demo data: an invented scenario of our own. Every name here (people, tunnel,
// flight-test unit, aircraft) is made up; no real organisation is meant.
//
// A university-size closed-section low-speed tunnel tests a 1:10 model of the
// "Tessel ET-1", a small two-seat electric trainer; a flight-test unit flies
// the aircraft itself. Runs carry metadata only: points come from the import
// pipeline. All values are demo values, not measurements.
import bcrypt from 'bcryptjs';
import type { Sequelize } from 'sequelize';
import { initModels, type Role, type WingGeometry } from './models';

export interface DemoAccount {
	email: string;
	name: string;
	role: Role;
	password: string;
}

/** The demo sign-ins, one per role. Printed by `npm run db:seed` and `npm start`. */
export const DEMO_ACCOUNTS: readonly DemoAccount[] = [
	{ email: 'admin@spanline.test', name: 'Avery Admin', role: 'admin', password: 'demo-admin-2026' },
	{ email: 'test.engineer@spanline.test', name: 'Terry Tunnelsworth', role: 'test_engineer', password: 'demo-test-2026' },
	{ email: 'aero@spanline.test', name: 'Ari Aerofoyle', role: 'aerodynamicist', password: 'demo-aero-2026' },
	{ email: 'manager@spanline.test', name: 'Morgan Milestone', role: 'program_manager', password: 'demo-manager-2026' }
];

/** bcrypt cost factor for the demo hashes (the sign-in code may choose its own). */
const BCRYPT_COST = 10;

/**
 * Straight-tapered wing (unswept, linear chord and twist) for the
 * lifting-line solver: stations at root, mid-semispan and tip.
 * a0 = 6.0 /rad and alpha_L0 = -2 deg are typical of a ~12 % thick, 2 %
 * cambered section at low Reynolds number (common practice, no source).
 */
function taperedWing(span: number, rootChord: number, taper: number, tipTwistDeg: number): WingGeometry {
	const a0 = 6.0;
	const alphaZeroLiftDeg = -2;
	const stations = [0, 0.5, 1].map((eta) => ({
		eta,
		chord: round(rootChord * (1 - (1 - taper) * eta), 5),
		twistDeg: round(tipTwistDeg * eta, 3),
		a0,
		alphaZeroLiftDeg
	}));
	return { span, stations, segments: [] };
}

/** Reference values of a straight-tapered wing: area S = b c_r (1+λ)/2, MAC = 2/3 c_r (1+λ+λ²)/(1+λ). */
function references(span: number, rootChord: number, taper: number) {
	const area = (span * rootChord * (1 + taper)) / 2;
	const mac = ((2 / 3) * rootChord * (1 + taper + taper * taper)) / (1 + taper);
	return { refArea: round(area, 6), refSpan: span, refChord: round(mac, 6), momentRef: { x: round(0.25 * mac, 6), y: 0, z: 0, datum: 'leading edge of the mean aerodynamic chord' } };
}

function round(x: number, digits: number): number {
	const f = 10 ** digits;
	return Math.round(x * f) / f;
}

export interface SeedResult {
	seeded: boolean;
	accounts: readonly DemoAccount[];
	counts?: Record<string, number>;
}

/**
 * Seed the demo scenario into an empty database (one transaction). When the
 * database already has users nothing is written and `seeded` is false.
 */
export async function seedDemo(sequelize: Sequelize): Promise<SeedResult> {
	const m = initModels(sequelize);
	const hashes = await Promise.all(DEMO_ACCOUNTS.map((a) => bcrypt.hash(a.password, BCRYPT_COST)));

	return sequelize.transaction(async (transaction) => {
		// Two seeders started at once must not both see an empty table.
		await sequelize.query('LOCK TABLE users IN SHARE ROW EXCLUSIVE MODE', { transaction });
		if ((await m.User.count({ transaction })) > 0) return { seeded: false, accounts: DEMO_ACCOUNTS };
		const t = { transaction };

		const users = await m.User.bulkCreate(
			DEMO_ACCOUNTS.map((a, i) => ({ email: a.email, name: a.name, role: a.role, passwordHash: hashes[i], emailVerified: new Date() })),
			t
		);
		const byRole = (role: Role) => users.find((u) => u.role === role)!.id;
		const engineer = byRole('test_engineer');
		const aero = byRole('aerodynamicist');

		const tunnel = await m.Facility.create(
			{
				name: 'Northfield Low-Speed Tunnel',
				code: 'NLST',
				kind: 'closed_jet',
				testSection: { shape: 'rectangular', widthM: 1.2, heightM: 0.9, areaM2: 1.08 },
				corrections: {
					// δ ≈ 0.12: chart reading for a 4:3 (width:height) rectangular closed jet with
					// a wing of span about 0.8 of the width, Barlow, Rae & Pope, Low-Speed Wind
					// Tunnel Testing, 3rd ed., ch. 10 — from memory. τ2 and K1·τ1 likewise from
					// memory of the same chapter's charts. Demo values: a real facility uses its
					// own calibration.
					delta: 0.12,
					tau2: 0.11,
					k1tau1: 0.86,
					wakeMethod: 'maskell'
				},
				notes: 'Closed-return, closed test section, 1.2 m × 0.9 m, up to about 45 m/s. Invented for the demo.'
			},
			t
		);
		const flightUnit = await m.Facility.create(
			{
				name: 'Harrowby Flight Test Unit',
				code: 'HFTU',
				kind: 'flight',
				testSection: null,
				corrections: null,
				notes: 'Flight-test data from the instrumented trainer (air-data boom, inertial unit). Invented for the demo.'
			},
			t
		);
		await m.MappingProfile.create(
			{
				facilityId: tunnel.id,
				name: 'NLST balance export',
				// The import issue defines the mapping format; this is a placeholder of column → quantity.
				mapping: { columns: { ALPHA: 'alpha_deg', LIFT_N: 'lift', DRAG_N: 'drag', PITCH_NM: 'pitching_moment', QINF: 'q_pa' } },
				createdBy: engineer
			},
			t
		);

		const tunnelCampaign = await m.Campaign.create(
			{
				code: 'ET1-WT-01',
				name: 'Tessel ET-1 1:10 model, low-speed polars',
				description: 'Lift, drag and pitching moment of the full-span 1:10 model, clean and with 15° flap, at 30 m/s.',
				kind: 'tunnel',
				facilityId: tunnel.id,
				plannedRuns: 24,
				// Demo tolerance bands on measured minus predicted values (dimensionless coefficients).
				tolerances: { cl: 0.03, cd: 0.002, cm: 0.01, alphaZeroLiftDeg: 0.5 },
				status: 'active',
				startDate: '2026-11-09',
				createdBy: engineer
			},
			t
		);
		const flightCampaign = await m.Campaign.create(
			{
				code: 'ET1-FT-01',
				name: 'Tessel ET-1 flight test, cruise and approach lift curve',
				description: 'Steady-level points at several speeds to compare the aircraft lift curve with the model and the prediction.',
				kind: 'flight',
				facilityId: flightUnit.id,
				plannedRuns: 8,
				tolerances: { cl: 0.05, cd: 0.004 },
				status: 'active',
				startDate: '2026-11-23',
				createdBy: engineer
			},
			t
		);

		// 1:10 model of a 9.6 m span aircraft: model span 0.96 m keeps span/width at 0.8 in the 1.2 m tunnel.
		// Root chords chosen so the reference areas match the demo files in fixtures/
		// (model S = 0.18 m², aircraft S = 16.2 m²; fixtures/scenario.ts).
		const model = { span: 0.96, rootChord: 0.25, taper: 0.5 };
		const aircraft = { span: 9.6, rootChord: 2.25, taper: 0.5 };
		const cleanV1 = await m.Configuration.create(
			{
				campaignId: tunnelCampaign.id,
				name: 'ET-1 model clean wing',
				version: 1,
				geometry: taperedWing(model.span, model.rootChord, model.taper, -2),
				...references(model.span, model.rootChord, model.taper),
				notes: 'Rectangular-tapered wing, taper 0.5, 2° linear washout, no winglets.',
				createdBy: aero
			},
			t
		);
		const cleanV2 = await m.Configuration.create(
			{
				campaignId: tunnelCampaign.id,
				name: 'ET-1 model clean wing',
				version: 2,
				parentId: cleanV1.id,
				geometry: taperedWing(model.span, model.rootChord, model.taper, -3),
				...references(model.span, model.rootChord, model.taper),
				notes: 'Tip re-set after inspection: washout 3° instead of 2°.',
				createdBy: aero
			},
			t
		);
		const flapGeometry = taperedWing(model.span, model.rootChord, model.taper, -2);
		flapGeometry.segments.push({ name: 'inboard plain flap', kind: 'flap', etaStart: 0.1, etaEnd: 0.6, deflectionDeg: 15, chordFraction: 0.25 });
		const flap15 = await m.Configuration.create(
			{
				campaignId: tunnelCampaign.id,
				name: 'ET-1 model flap 15',
				version: 1,
				parentId: cleanV1.id,
				geometry: flapGeometry,
				...references(model.span, model.rootChord, model.taper),
				notes: 'Clean wing v1 with the inboard plain flap (25 % chord) at 15°.',
				createdBy: aero
			},
			t
		);
		const fullScale = await m.Configuration.create(
			{
				campaignId: flightCampaign.id,
				name: 'ET-1 aircraft clean',
				version: 1,
				geometry: taperedWing(aircraft.span, aircraft.rootChord, aircraft.taper, -2),
				...references(aircraft.span, aircraft.rootChord, aircraft.taper),
				notes: 'Full-scale wing, 9.6 m span, 11.52 m², aspect ratio 8.',
				createdBy: aero
			},
			t
		);

		// Tunnel conditions: 30 m/s, ρ ≈ 1.20 kg/m³ → q ≈ 540 Pa; Re on the 0.124 m MAC ≈ 2.5e5; M ≈ 0.09.
		const tunnelConditions = { velocityMps: 30, qPa: 540, staticPressurePa: 100_800, temperatureK: 291.2, reynolds: 2.5e5, mach: 0.088, alphaRangeDeg: [-4, 14] as [number, number] };
		const tunnelRun = (runNumber: string, extra: Record<string, unknown>) => ({
			campaignId: tunnelCampaign.id,
			runNumber,
			kind: 'tunnel' as const,
			conditions: tunnelConditions,
			createdBy: engineer,
			...extra
		});
		const tare = await m.Run.create(tunnelRun('R001', { configurationId: cleanV1.id, isTare: true, state: 'reduced', testDate: '2026-11-10', notes: 'Support tare, model off.' }), t);
		const sweep = await m.Run.create(tunnelRun('R002', { configurationId: cleanV1.id, tareRunId: tare.id, state: 'accepted', testDate: '2026-11-10', notes: 'Alpha sweep, clean.' }), t);
		await m.Run.create(tunnelRun('R003', { configurationId: cleanV1.id, tareRunId: tare.id, repeatOfRunId: sweep.id, state: 'reviewed', testDate: '2026-11-11', notes: 'Repeat of R002.' }), t);
		await m.Run.create(tunnelRun('R004', { configurationId: flap15.id, tareRunId: tare.id, state: 'reduced', testDate: '2026-11-12', notes: 'Alpha sweep, flap 15°.' }), t);
		await m.Run.create(tunnelRun('R005', { configurationId: cleanV2.id, tareRunId: tare.id, state: 'imported', testDate: '2026-11-16', notes: 'Alpha sweep after the tip re-set.' }), t);

		const flightRun = (runNumber: string, extra: Record<string, unknown>) => ({
			campaignId: flightCampaign.id,
			configurationId: fullScale.id,
			runNumber,
			kind: 'flight' as const,
			createdBy: engineer,
			...extra
		});
		await m.Run.create(flightRun('F001', { state: 'reviewed', testDate: '2026-11-24', conditions: { altitudeM: 1200, velocityMps: 42, mach: 0.126 }, notes: 'Steady-level points, cruise speeds.' }), t);
		await m.Run.create(flightRun('F002', { state: 'imported', testDate: '2026-11-26', conditions: { altitudeM: 900, velocityMps: 30, mach: 0.09 }, notes: 'Approach speeds, flap up.' }), t);

		await m.AuditEvent.create(
			{ actorLabel: 'seed', action: 'seed.demo', entityType: 'database', entityId: null, details: { users: users.length } },
			t
		);

		const counts: Record<string, number> = {
			users: users.length,
			facilities: await m.Facility.count(t),
			campaigns: await m.Campaign.count(t),
			configurations: await m.Configuration.count(t),
			runs: await m.Run.count(t)
		};
		return { seeded: true, accounts: DEMO_ACCOUNTS, counts };
	});
}
