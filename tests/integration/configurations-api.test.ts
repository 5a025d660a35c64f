/**
 * Configurations over the real API and database: who may do what (the role
 * table), validation that names the station and field, versions that never
 * overwrite, and duplicate-as-variant.
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { randomBytes } from 'node:crypto';
import { signedInAs, Client, type Client as C } from '../support/session';
import { planformGeometry } from '../../src/lib/aero/planform';

const tag = randomBytes(3).toString('hex');
const body = (over: Record<string, unknown> = {}) => ({
	name: `API wing ${tag}`,
	span: 2,
	stations: [
		{ eta: 0, chord: 0.3, twistDeg: 0, a0: 6, alphaZeroLiftDeg: -2 },
		{ eta: 0.5, chord: 0.25, twistDeg: -1, a0: 6, alphaZeroLiftDeg: -2 },
		{ eta: 1, chord: 0.15, twistDeg: -2, a0: 6, alphaZeroLiftDeg: -2 }
	],
	segments: [{ name: 'outer aileron', kind: 'aileron', etaStart: 0.7, etaEnd: 0.95, deflectionDeg: 0, deltaAlphaZeroLiftDeg: 0 }],
	refArea: 0.5,
	...over
});

let aero: C, manager: C, engineer: C;
beforeAll(async () => {
	[aero, manager, engineer] = await Promise.all([signedInAs('aerodynamicist'), signedInAs('program_manager'), signedInAs('test_engineer')]);
});

describe('configurations API', () => {
	it('answers anonymous requests with 401 and refuses writes to roles without editModels (403)', async () => {
		expect((await new Client().json('GET', '/api/v1/configurations')).status).toBe(401);
		for (const c of [manager, engineer]) {
			const res = await c.json('POST', '/api/v1/configurations', body());
			expect(res.status).toBe(403);
			expect((await res.json()).error.code).toBe('forbidden');
		}
		expect((await manager.json('GET', '/api/v1/configurations')).status).toBe(200);
	});

	it('names the station and field of a validation error', async () => {
		const bad = body();
		(bad.stations as { chord: number }[])[1].chord = -0.2;
		const res = await aero.json('POST', '/api/v1/configurations', bad);
		expect(res.status).toBe(400);
		const err = (await res.json()).error;
		expect(err.message).toMatch(/station 1: chord must be > 0/);
		expect(err.details[0]).toMatchObject({ field: 'stations[1].chord', row: 1 });
		const notNumber = body();
		(notNumber.stations as unknown as { a0: unknown }[])[2].a0 = 'six';
		const res2 = await aero.json('POST', '/api/v1/configurations', notNumber);
		expect(res2.status).toBe(400);
		expect((await res2.json()).error.details[0]).toMatchObject({ field: 'stations[2].a0', row: 2 });
		const order = body();
		(order.stations as { eta: number }[])[1].eta = 1.2;
		expect((await (await aero.json('POST', '/api/v1/configurations', order)).json()).error.message).toMatch(/station 1: eta must be within \[0, 1\]/);
	});

	it('creates version 1 with derived planform values from the aero core, then saves versions without overwriting', async () => {
		const res = await aero.json('POST', '/api/v1/configurations', body());
		expect(res.status).toBe(201);
		const v1 = await res.json();
		expect(v1.version).toBe(1);
		const expected = planformGeometry({ span: 2, stations: body().stations as never });
		expect(v1.planform.area).toBe(expected.area);
		expect(v1.planform.aspectRatio).toBe(expected.aspectRatio);
		// The name is taken now.
		expect((await aero.json('POST', '/api/v1/configurations', body())).status).toBe(409);

		const edit = body({ span: 2.2 });
		const r2 = await aero.json('POST', `/api/v1/configurations/${v1.id}/versions`, edit);
		expect(r2.status).toBe(201);
		const v2 = await r2.json();
		expect(v2).toMatchObject({ version: 2, parentId: v1.id });
		// v1 is unchanged and no longer the newest; editing it again is a conflict.
		const again = await (await aero.json('GET', `/api/v1/configurations/${v1.id}`)).json();
		expect(again.geometry.span).toBe(2);
		expect(again.isLatest).toBe(false);
		expect(again.versions.map((v: { version: number }) => v.version)).toEqual([2, 1]);
		const stale = await aero.json('POST', `/api/v1/configurations/${v1.id}/versions`, edit);
		expect(stale.status).toBe(409);
		expect((await stale.json()).error.message).toMatch(/not the newest/);
		// Renaming is not a version.
		const renamed = await aero.json('POST', `/api/v1/configurations/${v2.id}/versions`, body({ name: 'other' }));
		expect(renamed.status).toBe(400);
		expect((await renamed.json()).error.details[0].field).toBe('name');
	});

	it('duplicates a configuration as a variant with changes, the source as parent', async () => {
		const list = await (await aero.json('GET', '/api/v1/configurations')).json();
		const src = list.items.find((c: { name: string }) => c.name === `API wing ${tag}`);
		const res = await aero.json('POST', `/api/v1/configurations/${src.id}/duplicate`, {
			name: `API wing ${tag} flap 20`,
			changes: { segments: [{ name: 'inboard flap', kind: 'flap', etaStart: 0.1, etaEnd: 0.6, deflectionDeg: 20, deltaAlphaZeroLiftDeg: -9 }] }
		});
		expect(res.status).toBe(201);
		const v = await res.json();
		expect(v).toMatchObject({ version: 1, parentId: src.id });
		expect(v.geometry.span).toBe(2.2);
		expect(v.geometry.segments[0]).toMatchObject({ name: 'inboard flap', deltaAlphaZeroLiftDeg: -9 });
		expect((await aero.json('POST', `/api/v1/configurations/${src.id}/duplicate`, {})).status).toBe(400);
		expect((await aero.json('GET', '/api/v1/configurations/999999999')).status).toBe(404);
	});
});
