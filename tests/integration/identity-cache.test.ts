// The in-process identity cache (src/lib/server/auth/identity-cache.ts)
// against the real database: it remembers only while it listens to the
// change announcements, and a change of the person in the database — made
// here with plain SQL, as any tool could — makes it ask again.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import pg from 'pg';
import * as identity from '../../src/lib/server/auth/identity-cache';
import type { SessionUser } from '../../src/lib/server/auth/users';

let db: pg.Client;
let userId = '';
const email = `identity-cache-${Date.now().toString(36)}@example.test`;

async function until(what: string, fn: () => boolean, ms = 5_000) {
	for (const end = Date.now() + ms; !fn(); ) {
		if (Date.now() > end) throw new Error(`${what} did not happen within ${ms} ms`);
		await new Promise((r) => setTimeout(r, 20));
	}
}

beforeAll(async () => {
	db = new pg.Client({ connectionString: process.env.DATABASE_URL });
	await db.connect();
	const { rows } = await db.query(`INSERT INTO users (email, name, role) VALUES ($1, 'Cache Probe', 'program_manager') RETURNING id`, [email]);
	userId = rows[0].id;
});

afterAll(async () => {
	await identity.stopListening();
	await db.query('DELETE FROM users WHERE id = $1', [userId]);
	await db.end();
});

describe('identity cache', () => {
	let loads = 0;
	const load = async (id: string): Promise<SessionUser | null> => {
		loads++;
		const { rows } = await db.query('SELECT id, name, email, role FROM users WHERE id = $1 AND active', [id]);
		return rows[0] ?? null;
	};

	it('asks the database every time while it is not listening', async () => {
		expect(identity.isListening()).toBe(false);
		loads = 0;
		await identity.personById(userId, load);
		await identity.personById(userId, load);
		expect(loads).toBe(2);
	});

	it('remembers once listening, and asks again after the person changes in the database', async () => {
		identity.startListening(process.env.DATABASE_URL);
		await until('listening', () => identity.isListening());
		loads = 0;
		expect((await identity.personById(userId, load))?.name).toBe('Cache Probe');
		expect((await identity.personById(userId, load))?.name).toBe('Cache Probe');
		expect(loads).toBe(1);

		await db.query(`UPDATE users SET name = 'Renamed Probe' WHERE id = $1`, [userId]);
		// The announcement arrives on the listening connection; the entry is then gone.
		await until('the announcement', () => {
			void identity.personById(userId, load);
			return loads >= 2;
		});
		expect((await identity.personById(userId, load))?.name).toBe('Renamed Probe');
	});

	it('never remembers an inactive person, and forgets one who is deactivated', async () => {
		await identity.personById(userId, load);
		await db.query('UPDATE users SET active = false WHERE id = $1', [userId]);
		let seen: SessionUser | null = { id: '', name: null, email: '', role: 'admin' };
		for (const end = Date.now() + 5_000; seen && Date.now() < end; await new Promise((r) => setTimeout(r, 20))) seen = await identity.personById(userId, load);
		expect(seen).toBeNull();
		const before = loads;
		expect(await identity.personById(userId, load)).toBeNull();
		expect(loads).toBe(before + 1);
		await db.query('UPDATE users SET active = true WHERE id = $1', [userId]);
	});

	it('forgets everything and stops remembering when it stops listening', async () => {
		await identity.personById(userId, load);
		await identity.stopListening();
		const before = loads;
		await identity.personById(userId, load);
		expect(loads).toBe(before + 1);
	});
});
