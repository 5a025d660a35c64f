// The PostgreSQL helpers and the app's connection check, against the real cluster.
// Never stops the cluster (other integration files share it).
import { afterAll, describe, expect, it } from 'vitest';
import { ensureEnv } from '../../scripts/lib/env.mjs';
import { databaseUrl, dropDatabase, ensureDatabase, ensurePostgres, isRunning } from '../../scripts/lib/postgres.mjs';
import { checkDatabase, closeSequelize, createSequelize } from '../../src/lib/server/db/index';

const SCRATCH = 'spanline_lifecycle_test';

afterAll(async () => {
	await closeSequelize();
	await dropDatabase(SCRATCH);
});

describe('PostgreSQL lifecycle helpers', () => {
	it('reuse the running cluster on a second call, on loopback and the project port', async () => {
		const first = await ensurePostgres({ log: () => {} });
		const messages: string[] = [];
		const second = await ensurePostgres({ log: (m: string) => messages.push(m) });
		expect(second).toEqual(first);
		expect(first.host).toBe('127.0.0.1');
		expect(first.port).not.toBe(5432);
		expect(isRunning()).toBe(true);
		expect(messages.join('\n')).toMatch(/already running/);
	});

	it('keep the generated secrets from one call of ensureEnv to the next', () => {
		const a = ensureEnv();
		const b = ensureEnv();
		expect(b).toEqual(a);
		expect(a.SPANLINE_DB_PASSWORD.length).toBeGreaterThanOrEqual(24);
		// 32 random bytes in base64url are 43 characters.
		expect(a.AUTH_SECRET).toMatch(/^[A-Za-z0-9_-]{43}$/);
	});

	it('create a database once and report it present afterwards', async () => {
		await dropDatabase(SCRATCH);
		expect(await ensureDatabase(SCRATCH)).toBe(true);
		expect(await ensureDatabase(SCRATCH)).toBe(false);
		await expect(ensureDatabase('bad name; DROP')).rejects.toThrow(/invalid database name/);
	});

	it('build a URL the application role can connect with', async () => {
		const url = new URL(databaseUrl(SCRATCH));
		expect(url.hostname).toBe('127.0.0.1');
		expect(url.username).toBe('spanline');
		expect(decodeURIComponent(url.password)).toBe(process.env.SPANLINE_DB_PASSWORD);
		const s = createSequelize(url.toString());
		try {
			const [rows] = await s.query('SELECT current_user AS who, host(inet_server_addr()) AS addr');
			expect(rows).toEqual([{ who: 'spanline', addr: '127.0.0.1' }]);
		} finally {
			await s.close();
		}
	});

	it('reject a wrong password for the application role (scram over TCP)', async () => {
		const url = new URL(databaseUrl(SCRATCH));
		url.password = 'not-the-password';
		const s = createSequelize(url.toString());
		try {
			await expect(s.query('SELECT 1')).rejects.toThrow(/password authentication failed/);
		} finally {
			await s.close();
		}
	});
});

describe('checkDatabase', () => {
	it('reports a reachable database with its latency', async () => {
		process.env.DATABASE_URL = databaseUrl(SCRATCH);
		await closeSequelize();
		const r = await checkDatabase();
		expect(r.ok).toBe(true);
		expect(r.latencyMs).toBeGreaterThanOrEqual(0);
	});

	it('reports an unreachable database as an error instead of throwing', async () => {
		// Port 1 on loopback: nothing listens there, the connection is refused at once.
		process.env.DATABASE_URL = 'postgres://spanline:x@127.0.0.1:1/spanline';
		await closeSequelize();
		const r = await checkDatabase();
		expect(r.ok).toBe(false);
		expect(r.error).toMatch(/ECONNREFUSED|connect/i);
		await closeSequelize();
	});

	it('reports a missing DATABASE_URL as an error', async () => {
		delete process.env.DATABASE_URL;
		await closeSequelize();
		const r = await checkDatabase();
		expect(r).toMatchObject({ ok: false, error: expect.stringMatching(/DATABASE_URL is not set/) });
	});
});
