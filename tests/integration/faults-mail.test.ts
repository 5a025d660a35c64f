// The SMTP server is down: the user's action still succeeds, the message waits
// in the outbox (mail_outbox) and goes out once a server listens again — with
// an instance of the production build started here whose SMTP port has, at
// first, nothing listening; then a real SMTP server (smtp-server, no AUTH/TLS,
// like the project's mail fake) is started on that port in this process.
// The instance has a database of its own: the shared test server retries due
// mail of its database too, and would deliver our message to the mail fake.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { once } from 'node:events';
import net from 'node:net';
import { join } from 'node:path';
import pg from 'pg';
import { SMTPServer } from 'smtp-server';
import { projectRoot } from '../../scripts/lib/env.mjs';
import { databaseUrl, dropDatabase, recreateDatabase } from '../../scripts/lib/postgres.mjs';

const DB = 'spanline_faults_mail';
import { DEMO_ACCOUNTS } from '../../src/lib/server/db/seed-data';
import { ownServer, type OwnServer } from '../support/own-server';

const appPort = 4000 + Math.floor(Math.random() * 100);
const origin = `http://127.0.0.1:${appPort}`;
let smtpPort = 0;
let server: OwnServer;
let smtp: SMTPServer | null = null;
let db: pg.Client;
const received: { to: string[]; data: string }[] = [];
const email = `outbox.${Date.now().toString(36)}@example.test`;

async function freePort(): Promise<number> {
	const s = net.createServer();
	s.listen(0, '127.0.0.1');
	await once(s, 'listening');
	const port = (s.address() as net.AddressInfo).port;
	await new Promise((r) => s.close(r));
	return port;
}

async function outbox() {
	const { rows } = await db.query(`SELECT status, attempts, last_error, sent_at FROM mail_outbox WHERE "to" = $1`, [email]);
	return rows as { status: string; attempts: number; last_error: string | null; sent_at: Date | null }[];
}

beforeAll(async () => {
	smtpPort = await freePort();
	await recreateDatabase(DB);
	for (const script of ['scripts/migrate.ts', 'scripts/seed.ts']) {
		const r = spawnSync('npx', ['tsx', script, ...(script.includes('migrate') ? ['up'] : [])], { cwd: projectRoot, env: { ...process.env, DATABASE_URL: databaseUrl(DB) }, encoding: 'utf8' });
		if (r.status !== 0) throw new Error(`${script}: ${r.stdout}${r.stderr}`);
	}
	server = await ownServer({
		port: appPort,
		logPath: join(projectRoot, '.data', 'test-logs', `faults-mail-${appPort}.log`),
		env: { DATABASE_URL: databaseUrl(DB), SMTP_HOST: '127.0.0.1', SMTP_PORT: String(smtpPort), SMTP_SECURE: 'false', SMTP_IGNORE_TLS: 'true', SMTP_USER: '' }
	});
	db = new pg.Client({ connectionString: databaseUrl(DB) });
	await db.connect();
});

afterAll(async () => {
	await db?.end();
	if (smtp) await new Promise((r) => smtp!.close(() => r(undefined)));
	await server?.stop();
	await dropDatabase(DB);
});

describe('SMTP server down', () => {
	it('an invitation still succeeds at once and its message waits in the outbox', async () => {
		const admin = DEMO_ACCOUNTS.find((a) => a.role === 'admin')!;
		const signIn = await fetch(`${origin}/signin?/password`, {
			method: 'POST',
			redirect: 'manual',
			headers: { 'content-type': 'application/x-www-form-urlencoded', origin, accept: 'text/html', 'x-forwarded-for': `198.18.3.${1 + Math.floor(Math.random() * 250)}` },
			body: new URLSearchParams({ email: admin.email, password: admin.password, next: '/' })
		});
		const cookie = signIn.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ');
		const t0 = performance.now();
		const res = await fetch(`${origin}/api/v1/people`, {
			method: 'POST',
			headers: { cookie, origin, 'content-type': 'application/json' },
			body: JSON.stringify({ email, role: 'program_manager', name: 'Outbox Test' })
		});
		const ms = performance.now() - t0;
		expect(res.status, await res.text()).toBe(201);
		// Common practice, no source: an action must not wait on a mail server.
		expect(ms).toBeLessThan(5_000);
		let rows = await outbox();
		for (let i = 0; i < 20 && !(rows[0]?.attempts >= 1); i++) {
			await new Promise((r) => setTimeout(r, 250));
			rows = await outbox();
		}
		expect(rows).toHaveLength(1);
		expect(rows[0].status).not.toBe('sent');
		expect(rows[0].attempts).toBeGreaterThanOrEqual(1);
		expect(rows[0].last_error).toBeTruthy();
	});

	it('the message is sent once an SMTP server listens again (retry loop), and marked sent', async () => {
		smtp = new SMTPServer({
			disabledCommands: ['AUTH', 'STARTTLS'],
			authOptional: true,
			logger: false,
			onData(stream, session, callback) {
				let data = '';
				stream.on('data', (c) => (data += c));
				stream.on('end', () => {
					received.push({ to: session.envelope.rcptTo.map((r) => r.address), data });
					callback();
				});
			}
		});
		smtp.listen(smtpPort, '127.0.0.1');
		await once(smtp.server, 'listening');
		// First retry after 15 s (mail/index.ts BACKOFF_S), checked every 15 s: ≤ ~35 s.
		const until = Date.now() + 75_000;
		while (Date.now() < until && !received.some((m) => m.to.includes(email))) await new Promise((r) => setTimeout(r, 500));
		expect(received.some((m) => m.to.includes(email))).toBe(true);
		let rows = await outbox();
		for (let i = 0; i < 20 && rows[0]?.status !== 'sent'; i++) {
			await new Promise((r) => setTimeout(r, 250));
			rows = await outbox();
		}
		expect(rows[0].status).toBe('sent');
		expect(rows[0].sent_at).toBeTruthy();
		// Exactly one delivery: the retry does not send the same message twice.
		expect(received.filter((m) => m.to.includes(email))).toHaveLength(1);
	}, 100_000);
});
