/**
 * API tokens over real HTTP: Bearer acts with the owner's role, last use is
 * recorded, revoked and expired tokens get 401, and the clear token exists
 * only in the one answer that created it (never in the database or the log).
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import pg from 'pg';
import { Client, signedInAs, testAddress, freshPerson } from '../support/session';

let db: pg.Client;
beforeAll(async () => {
	db = new pg.Client({ connectionString: process.env.DATABASE_URL });
	await db.connect();
});
afterAll(async () => {
	await db?.end();
});

/** Every text value of every row of a table, to search for a clear secret. */
async function tableText(table: string): Promise<string> {
	const { rows } = await db.query(`SELECT * FROM ${table}`);
	return JSON.stringify(rows);
}

describe('API tokens', () => {
	it('act with the owner role, record last use, and are stored only as a digest', async () => {
		const engineer = await signedInAs('test_engineer');
		const res = await engineer.json('POST', '/api/v1/tokens', { name: 'tunnel data system' });
		expect(res.status).toBe(201);
		expect(res.headers.get('cache-control')).toBe('no-store');
		const { token, info } = await res.json();
		expect(token).toMatch(/^spl_[A-Za-z0-9_-]{43}$/);
		expect(info).toMatchObject({ name: 'tunnel data system', state: 'active', lastUsedAt: null });
		expect(token.startsWith(info.prefix)).toBe(true);

		const script = new Client(testAddress(), token);
		const me = await script.json('GET', '/api/v1/me');
		expect(me.status).toBe(200);
		expect((await me.json()).user).toMatchObject({ email: 'test.engineer@spanline.test', role: 'test_engineer', authenticatedBy: 'token' });
		// The token carries the role, not more: the people list is admin-only.
		expect((await script.json('GET', '/api/v1/people')).status).toBe(403);

		const listed = (await (await engineer.json('GET', '/api/v1/tokens')).json()).tokens;
		const mine = listed.find((t: { id: number }) => t.id === info.id);
		expect(mine.lastUsedAt).not.toBeNull();
		expect(JSON.stringify(listed)).not.toContain(token);

		const { rows } = await db.query(`SELECT token_hash FROM api_tokens WHERE id = $1`, [info.id]);
		expect(rows[0].token_hash).toMatch(/^[0-9a-f]{64}$/);
		for (const table of ['api_tokens', 'audit_events', 'mail_outbox', 'sign_in_attempts']) {
			expect(await tableText(table)).not.toContain(token.slice(4));
		}
		// `npm test` keeps the server's output in test-results/server.log.
		const log = join(process.cwd(), 'test-results', 'server.log');
		if (existsSync(log)) expect(readFileSync(log, 'utf8')).not.toContain(token.slice(4));
	});

	it('get 401 once revoked, and revocation is audited', async () => {
		const aero = await signedInAs('aerodynamicist');
		const { token, info } = await (await aero.json('POST', '/api/v1/tokens', { name: 'to be revoked' })).json();
		const script = new Client(testAddress(), token);
		expect((await script.json('GET', '/api/v1/me')).status).toBe(200);
		const del = await aero.json('DELETE', `/api/v1/tokens/${info.id}`);
		expect(del.status).toBe(200);
		expect((await del.json()).info.state).toBe('revoked');
		const after = await script.json('GET', '/api/v1/me');
		expect(after.status).toBe(401);
		expect((await after.json()).error.code).toBe('invalid_token');
		const { rows } = await db.query(
			`SELECT action FROM audit_events WHERE entity_type = 'api_token' AND entity_id = $1 ORDER BY id`,
			[String(info.id)]
		);
		expect(rows.map((r) => r.action)).toEqual(['token.created', 'token.revoked']);
	});

	it('get 401 after their expiry', async () => {
		const manager = await signedInAs('program_manager');
		const expiresAt = new Date(Date.now() + 1500).toISOString();
		const res = await manager.json('POST', '/api/v1/tokens', { name: 'short-lived', expiresAt });
		expect(res.status).toBe(201);
		const { token } = await res.json();
		const script = new Client(testAddress(), token);
		expect((await script.json('GET', '/api/v1/me')).status).toBe(200);
		await new Promise((r) => setTimeout(r, 2000));
		expect((await script.json('GET', '/api/v1/me')).status).toBe(401);
	});

	it('refuse an expiry in the past and name the field', async () => {
		const manager = await signedInAs('program_manager');
		const res = await manager.json('POST', '/api/v1/tokens', { name: 'late', expiresAt: '2001-01-01T00:00:00Z' });
		expect(res.status).toBe(400);
		expect((await res.json()).error.details).toEqual([{ field: 'expiresAt', message: 'The expiry must lie in the future.' }]);
	});

	it('an unknown token gets 401, not anonymous treatment', async () => {
		const res = await new Client(testAddress(), 'spl_not-a-real-token').json('GET', '/api/v1/health');
		expect(res.status).toBe(401);
	});

	it("cannot be revoked by someone else, and only admins create tokens for others", async () => {
		const owner = await signedInAs('aerodynamicist');
		const { info } = await (await owner.json('POST', '/api/v1/tokens', { name: 'not yours' })).json();
		const other = await signedInAs('test_engineer');
		expect((await other.json('DELETE', `/api/v1/tokens/${info.id}`)).status).toBe(404);
		const forOther = await other.json('POST', '/api/v1/tokens', { name: 'x', userId: info.ownerId });
		expect(forOther.status).toBe(403);

		const admin = await signedInAs('admin');
		const person = await freshPerson('test_engineer', admin);
		const issued = await admin.json('POST', '/api/v1/tokens', { name: 'rig 3 uploader', userId: person.id });
		expect(issued.status).toBe(201);
		const { token } = await issued.json();
		const me = await new Client(testAddress(), token).json('GET', '/api/v1/me');
		expect((await me.json()).user.email).toBe(person.email);
		expect((await admin.json('DELETE', `/api/v1/tokens/${info.id}`)).status).toBe(200);
	});
});
