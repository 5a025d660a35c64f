// The "cannot remove the last admin" rule (people.changeRole / people.setActive,
// PeopleError 'last_admin', answered 409 by PATCH /api/v1/people/[id]) against
// real PostgreSQL and the real production build.
//
// The shared test database always holds several admins (and its demo accounts
// must never be demoted or deactivated), so this file works in a scratch
// database of its own: created afresh, migrated with our umzug migrations,
// filled with people of its own, served by its own `node build` instance on a
// port of its own, and dropped at the end.
//
// Deactivating the last admin cannot be asked for directly over the API: the
// only admin who could ask is that admin, and deactivating oneself is refused
// first. It happens when two admins remove each other at the same moment, so
// the test makes that race certain: it holds the admin rows locked in its own
// transaction until both requests are waiting for them, then lets go.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHash, randomBytes, randomUUID } from 'node:crypto';
import { join } from 'node:path';
import pg from 'pg';
import type { Sequelize } from 'sequelize';
import { ensureEnv, projectRoot } from '../../scripts/lib/env.mjs';
import { ensurePostgres, recreateDatabase, dropDatabase, databaseUrl } from '../../scripts/lib/postgres.mjs';
import { createSequelize } from '../../src/lib/server/db/index';
import { createMigrator } from '../../src/lib/server/db/migrator';
import { freePort, ownServer, type OwnServer } from '../support/own-server';

const fileEnv = ensureEnv() as Record<string, string>;
const tag = `${Date.now().toString(36)}${randomBytes(2).toString('hex')}`;
// A database of its own per run (two checkouts' runs never share one).
const SCRATCH = `spanline_last_admin_${tag}`;
const logPath = join(projectRoot, '.data', 'test-logs', `people-last-admin-${tag}.log`);
let server: OwnServer | null = null;
let origin = '';
let db: pg.Client;

interface Person {
	id: string;
	email: string;
	token: string;
}


/** A person straight into the scratch database, with an API token (stored as its SHA-256 digest, as the app does). */
async function person(role: string, label: string): Promise<Person> {
	const id = randomUUID();
	const email = `${label}.${tag}@last-admin.test`;
	await db.query(
		`INSERT INTO users (id, email, name, role, active, last_sign_in_at, created_at, updated_at)
		 VALUES ($1, $2, $3, $4, true, now(), now(), now())`,
		[id, email, `${label} ${tag}`, role]
	);
	const token = `spl_${randomBytes(32).toString('base64url')}`;
	await db.query(
		`INSERT INTO api_tokens (user_id, name, token_hash, prefix, created_at) VALUES ($1, $2, $3, $4, now())`,
		[id, `last-admin ${label}`, createHash('sha256').update(token, 'utf8').digest('hex'), token.slice(0, 10)]
	);
	return { id, email, token };
}

async function patch(actor: Person, target: Person, body: Record<string, unknown>) {
	const res = await fetch(`${origin}/api/v1/people/${target.id}`, {
		method: 'PATCH',
		headers: {
			authorization: `Bearer ${actor.token}`,
			'content-type': 'application/json',
			origin,
			'x-forwarded-for': `198.18.7.${1 + Math.floor(Math.random() * 250)}`
		},
		body: JSON.stringify(body)
	});
	const text = await res.text();
	let json: { person?: { role: string; active: boolean }; error?: { code: string; message: string; details: { field: string }[] } } = {};
	try {
		json = JSON.parse(text);
	} catch {
		/* the assertion on the status shows the text */
	}
	return { status: res.status, json, text };
}

async function row(p: Person) {
	const r = await db.query('SELECT role, active, updated_at FROM users WHERE id = $1', [p.id]);
	return r.rows[0] as { role: string; active: boolean; updated_at: Date };
}

async function activeAdmins(): Promise<string[]> {
	const r = await db.query("SELECT email FROM users WHERE role = 'admin' AND active ORDER BY email");
	return r.rows.map((x) => x.email);
}

async function auditActions(p: Person): Promise<string[]> {
	const r = await db.query("SELECT action FROM audit_events WHERE entity_type = 'user' AND entity_id = $1 ORDER BY id", [p.id]);
	return r.rows.map((x) => x.action);
}

/** Requests of the server waiting for a row lock in the scratch database. */
async function waitingForLocks(): Promise<number> {
	const r = await db.query(
		"SELECT count(*)::int AS n FROM pg_stat_activity WHERE datname = $1 AND wait_event_type = 'Lock' AND pid <> pg_backend_pid()",
		[SCRATCH]
	);
	return r.rows[0].n;
}

/**
 * Send two requests while the test holds every admin row locked, wait until
 * both are blocked on those rows inside their transactions (both have passed
 * authentication by then), then release the rows and return both answers.
 */
async function race(a: () => ReturnType<typeof patch>, b: () => ReturnType<typeof patch>) {
	const holder = new pg.Client({ connectionString: databaseUrl(SCRATCH) });
	await holder.connect();
	try {
		await holder.query('BEGIN');
		// NO KEY UPDATE conflicts with the app's FOR UPDATE, not with foreign-key checks.
		await holder.query("SELECT id FROM users WHERE role = 'admin' AND active FOR NO KEY UPDATE");
		const answers = Promise.all([a(), b()]);
		for (const until = Date.now() + 15_000; (await waitingForLocks()) < 2; ) {
			if (Date.now() > until) throw new Error(`the two requests did not both wait for the admin rows; see ${logPath}`);
			await new Promise((r) => setTimeout(r, 25));
		}
		await holder.query('ROLLBACK');
		return await answers;
	} finally {
		await holder.end();
	}
}

beforeAll(async () => {
	await ensurePostgres({ log: () => {} });
	await recreateDatabase(SCRATCH);
	const sequelize: Sequelize = createSequelize(databaseUrl(SCRATCH));
	try {
		await createMigrator(sequelize).up();
	} finally {
		await sequelize.close();
	}
	db = new pg.Client({ connectionString: databaseUrl(SCRATCH) });
	await db.connect();

	const port = await freePort(4200);
	origin = `http://127.0.0.1:${port}`;
	server = await ownServer({
		port,
		logPath,
		env: {
			AUTH_SECRET: process.env.AUTH_SECRET ?? fileEnv.AUTH_SECRET,
			DATABASE_URL: databaseUrl(SCRATCH),
			ADDRESS_HEADER: 'x-forwarded-for',
			XFF_DEPTH: '1'
		}
	});
});

afterAll(async () => {
	await server?.stop();
	await db?.end();
	await dropDatabase(SCRATCH);
});

describe('the last admin cannot be removed (own scratch database, own server)', () => {
	let sole: Person;
	let engineer: Person;
	/** The admin left standing after the deactivation race. */
	let survivor: Person;

	it('starts from exactly one active admin in the scratch database', async () => {
		sole = await person('admin', 'sole-admin');
		engineer = await person('test_engineer', 'engineer');
		expect(await activeAdmins()).toEqual([sole.email]);
	});

	it('refuses to demote the only admin with 409 last_admin and changes nothing', async () => {
		const before = await row(sole);
		for (const role of ['test_engineer', 'aerodynamicist', 'program_manager']) {
			const r = await patch(sole, sole, { role });
			expect(r.status, r.text).toBe(409);
			expect(r.json.error?.code).toBe('last_admin');
			expect(r.json.error?.details).toEqual([{ field: 'role', message: r.json.error?.message }]);
		}
		expect(await row(sole)).toEqual(before);
		expect(await activeAdmins()).toEqual([sole.email]);
		expect(await auditActions(sole)).toEqual([]);
	});

	it('refuses to let the only admin deactivate themselves (own-account rule, checked before the count) and changes nothing', async () => {
		const before = await row(sole);
		const r = await patch(sole, sole, { active: false });
		expect(r.status, r.text).toBe(400);
		expect(r.json.error?.code).toBe('invalid');
		expect(await row(sole)).toEqual(before);
		expect(await auditActions(sole)).toEqual([]);
	});

	it('with two admins, demoting one succeeds and is audited; then the remaining one is the last again', async () => {
		const promote = await patch(sole, engineer, { role: 'admin' });
		expect(promote.status, promote.text).toBe(200);
		expect(await activeAdmins()).toEqual([engineer.email, sole.email].sort());

		const demote = await patch(engineer, sole, { role: 'aerodynamicist' });
		expect(demote.status, demote.text).toBe(200);
		expect(demote.json.person?.role).toBe('aerodynamicist');
		expect((await row(sole)).role).toBe('aerodynamicist');
		expect(await auditActions(sole)).toEqual(['person.role_changed']);
		expect(await activeAdmins()).toEqual([engineer.email]);

		const again = await patch(engineer, engineer, { role: 'test_engineer' });
		expect(again.status, again.text).toBe(409);
		expect(again.json.error?.code).toBe('last_admin');
		expect((await row(engineer)).role).toBe('admin');
	});

	it('two admins deactivating each other at the same moment: one succeeds, the other is refused with last_admin', async () => {
		const a = await person('admin', 'pair-a');
		const b = await person('admin', 'pair-b');
		// Only the pair is admin from here on (the engineer of the earlier tests steps down).
		expect((await patch(a, engineer, { role: 'test_engineer' })).status).toBe(200);
		expect(await activeAdmins()).toEqual([a.email, b.email].sort());

		const answers = await race(
			() => patch(a, b, { active: false }),
			() => patch(b, a, { active: false })
		);
		const statuses = answers.map((x) => x.status).sort();
		expect(statuses, answers.map((x) => x.text).join('\n')).toEqual([200, 409]);
		const refused = answers.find((x) => x.status === 409)!;
		expect(refused.json.error?.code).toBe('last_admin');
		expect(refused.json.error?.details?.[0]?.field).toBe('active');
		// Exactly one of the pair is still an active admin, and only the change that happened is audited.
		const left = await activeAdmins();
		expect(left).toHaveLength(1);
		const [gone] = [a, b].filter((p) => !left.includes(p.email));
		expect(await auditActions(gone)).toEqual(['person.deactivated']);
		[survivor] = [a, b].filter((p) => left.includes(p.email));
		expect(await auditActions(survivor)).toEqual([]);
		expect(await row(survivor)).toMatchObject({ role: 'admin', active: true });
	});

	it('two admins demoting each other at the same moment: one succeeds, the other is refused with last_admin', async () => {
		const c = await person('admin', 'pair-c');
		const d = survivor;
		expect(await activeAdmins()).toEqual([c.email, d.email].sort());

		const answers = await race(
			() => patch(c, d, { role: 'test_engineer' }),
			() => patch(d, c, { role: 'test_engineer' })
		);
		const statuses = answers.map((x) => x.status).sort();
		expect(statuses, answers.map((x) => x.text).join('\n')).toEqual([200, 409]);
		const refused = answers.find((x) => x.status === 409)!;
		expect(refused.json.error?.code).toBe('last_admin');
		expect(refused.json.error?.details?.[0]?.field).toBe('role');
		expect(await activeAdmins()).toHaveLength(1);
	});
});
