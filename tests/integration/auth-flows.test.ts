/**
 * Sign-in end to end over real HTTP, the real database and the real SMTP
 * path to the local mail fake: invitation, password, sign-in link, refusals,
 * deactivation and the repeated-failure limit. Accounts that get locked or
 * deactivated are created here through invitations.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import pg from 'pg';
import { baseUrl } from '../support/env';
import { Client, freshPerson, linkIn, mailFakeUrl, signedInAs, testAddress, uniqueEmail, waitForMail, type FakeMail } from '../support/session';

let db: pg.Client;
beforeAll(async () => {
	db = new pg.Client({ connectionString: process.env.DATABASE_URL });
	await db.connect();
});
afterAll(async () => {
	await db?.end();
});

/** The message shown on the sign-in page after a refused form post (the page is re-rendered with status 400). */
async function notice(res: Response): Promise<string> {
	const html = await res.text();
	const m = html.match(/data-testid="signin-notice"[^>]*>([\s\S]*?)<\/div>/);
	return (m?.[1] ?? '').replace(/<[^>]+>/g, '').replace(/\s+/g, ' ').trim();
}

describe('invitation → e-mail → link → password → sign-in', () => {
	it('gives the invited person a session with the invited role', async () => {
		const admin = await signedInAs('admin');
		const email = uniqueEmail('invitee');
		const invited = await admin.json('POST', '/api/v1/people', { email, role: 'aerodynamicist', name: 'Ines Invitee' });
		expect(invited.status).toBe(201);
		expect((await invited.json()).person).toMatchObject({ email, role: 'aerodynamicist', state: 'invited' });

		const mail = await waitForMail(email, /invited to Spanline/);
		expect(mail.text).toContain('as Aerodynamicist');
		expect(mail.html).toContain('Choose my password');
		const link = new URL(linkIn(mail, /https?:\/\/\S+\/invite\/\S+/));
		expect(link.origin).toBe(baseUrl());

		const visitor = new Client();
		const page = await visitor.get(link.pathname);
		expect(page.status).toBe(200);
		expect(await page.text()).toContain(email);

		const short = await visitor.form(link.pathname, { password: 'short', confirm: 'short' });
		expect(short.status).toBe(400);
		expect(await short.text()).toContain('at least 10 characters');

		const password = 'a-long-enough-secret-42';
		const set = await visitor.form(link.pathname, { name: 'Ines Invitee', password, confirm: password });
		expect(set.status).toBe(303);
		expect(set.headers.get('location')).toMatch(/^\/signin\?done=password_set/);

		// The link works once.
		const again = await new Client().get(link.pathname);
		expect(await again.text()).toContain('already been used');

		const signedIn = await visitor.signIn(email, password);
		expect(signedIn.status).toBe(302);
		const me = await visitor.json('GET', '/api/v1/me');
		expect(me.status).toBe(200);
		expect((await me.json()).user).toMatchObject({ email, role: 'aerodynamicist', authenticatedBy: 'session' });

		// The outbox keeps the delivery record, not the one-time link.
		const { rows } = await db.query(`SELECT status, text FROM mail_outbox WHERE "to" = $1 AND kind = 'invitation'`, [email]);
		expect(rows).toHaveLength(1);
		expect(rows[0].status).toBe('sent');
		expect(rows[0].text).not.toContain('/invite/');

		const audit = await db.query(
			`SELECT action, ip, request_id FROM audit_events WHERE entity_type = 'user' AND entity_id = (SELECT id::text FROM users WHERE email = $1) ORDER BY id`,
			[email]
		);
		expect(audit.rows.map((r) => r.action)).toEqual(['person.invited', 'person.password_set', 'sign_in.succeeded']);
		expect(audit.rows.every((r) => r.request_id)).toBe(true);
	});

	it('refuses to invite an address that already has an account', async () => {
		const admin = await signedInAs('admin');
		const res = await admin.json('POST', '/api/v1/people', { email: 'aero@spanline.test', role: 'admin' });
		expect(res.status).toBe(409);
		expect((await res.json()).error).toMatchObject({ code: 'conflict', details: [{ field: 'email' }] });
	});

	it('names the field of an invalid invitation', async () => {
		const admin = await signedInAs('admin');
		const res = await admin.json('POST', '/api/v1/people', { email: 'not-an-address', role: 'pilot' });
		expect(res.status).toBe(400);
		const fields = (await res.json()).error.details.map((d: { field: string }) => d.field).sort();
		expect(fields).toEqual(['email', 'role']);
	});
});

describe('sign-in link by e-mail', () => {
	it('signs in through the link in the mail, once', async () => {
		const person = await freshPerson('program_manager');
		const c = new Client();
		const asked = await c.form('/signin?/link', { email: person.email, next: '/' });
		expect(asked.status).toBe(302);
		expect(asked.headers.get('location')).toContain('/verify-request');

		const mail = await waitForMail(person.email, /sign-in link/);
		expect(mail.html).toContain('Sign me in');
		const link = linkIn(mail, /https?:\/\/\S+\/auth\/callback\/nodemailer\S+/);
		const used = await c.get(link);
		expect(used.status).toBe(302);
		expect(c.signedIn).toBe(true);
		const me = await c.json('GET', '/api/v1/me');
		expect((await me.json()).user).toMatchObject({ email: person.email, role: 'program_manager' });

		const reused = await new Client().get(link);
		expect(reused.status).toBe(303);
		expect(reused.headers.get('location')).toBe('/signin?refused=link_invalid');
	});

	it('tells an expired link from a used one', async () => {
		const person = await freshPerson('test_engineer');
		const c = new Client();
		await c.form('/signin?/link', { email: person.email, next: '/' });
		const link = linkIn(await waitForMail(person.email, /sign-in link/), /https?:\/\/\S+\/auth\/callback\/nodemailer\S+/);
		// Age the stored token past its 15 minutes instead of waiting.
		const aged = await db.query(`UPDATE verification_tokens SET expires = now() - interval '1 minute' WHERE identifier = $1`, [person.email]);
		expect(aged.rowCount).toBe(1);
		const res = await c.get(link);
		expect(res.status).toBe(303);
		expect(res.headers.get('location')).toBe('/signin?refused=link_expired');
		expect(c.signedIn).toBe(false);
		const page = await c.get('/signin?refused=link_expired');
		expect(await page.text()).toContain('This sign-in link has expired');
	});

	it('puts only the app’s own origin into a sign-in link, whatever Host or X-Forwarded-* the request claims', async () => {
		const person = await freshPerson('program_manager');
		const forged: Record<string, string>[] = [{ host: 'evil.example' }, { 'x-forwarded-host': 'evil.example', 'x-forwarded-proto': 'https' }];
		for (const headers of forged) {
			const c = new Client();
			const res = await c.request('POST', '/signin?/link', {
				body: new URLSearchParams({ email: person.email, next: '/' }),
				headers: { 'content-type': 'application/x-www-form-urlencoded', origin: baseUrl(), accept: 'text/html', ...headers }
			});
			expect(res.status, JSON.stringify(headers)).toBe(302);
			expect(res.headers.get('location') ?? '').not.toContain('evil.example');
		}
		// The mails as delivered to the SMTP fake (the outbox drops a link's body once it is sent).
		let links: FakeMail[] = [];
		for (const until = Date.now() + 10_000; links.length < forged.length && Date.now() < until; await new Promise((r) => setTimeout(r, 150))) {
			const list = (await (await fetch(`${mailFakeUrl()}/messages`)).json()) as FakeMail[];
			links = list.filter((m) => m.to.includes(person.email) && /sign-in link/.test(m.subject));
		}
		expect(links).toHaveLength(forged.length);
		for (const m of links) {
			expect(m.text + m.html).not.toContain('evil.example');
			expect(m.text).toContain(`${new URL(baseUrl()).origin}/auth/callback/nodemailer`);
		}
	});

	it('sends no link to an address without an account', async () => {
		const email = uniqueEmail('stranger');
		const res = await new Client().form('/signin?/link', { email, next: '/' });
		expect(res.status).toBe(400);
		expect(await notice(res)).toContain('There is no Spanline account for this address');
		const { rows } = await db.query(`SELECT count(*)::int AS n FROM mail_outbox WHERE "to" = $1`, [email]);
		expect(rows[0].n).toBe(0);
		const users = await db.query(`SELECT count(*)::int AS n FROM users WHERE email = $1`, [email]);
		expect(users.rows[0].n).toBe(0);
	});
});

describe('refused password sign-ins', () => {
	it('says "wrong password" and records the failure', async () => {
		const person = await freshPerson('aerodynamicist');
		const c = new Client();
		const res = await c.signIn(person.email, 'not-the-password');
		expect(res.status).toBe(400);
		expect(await notice(res)).toContain('Wrong password');
		expect(c.signedIn).toBe(false);
		const { rows } = await db.query(`SELECT ip, succeeded FROM sign_in_attempts WHERE email = $1 ORDER BY id DESC LIMIT 1`, [person.email]);
		expect(rows[0]).toEqual({ ip: c.address, succeeded: false });
		const audit = await db.query(`SELECT details FROM audit_events WHERE action = 'sign_in.failed' AND actor_label = $1`, [person.email]);
		expect(audit.rows[0].details).toEqual({ method: 'password', reason: 'wrong_password' });
	});

	it('says there is no account for an unknown address', async () => {
		const res = await new Client().signIn(uniqueEmail('nobody'), 'whatever-it-is');
		expect(res.status).toBe(400);
		expect(await notice(res)).toContain('There is no Spanline account for this address');
	});
});

describe('deactivation', () => {
	it('ends the session and the tokens at the next request and refuses sign-in', async () => {
		const admin = await signedInAs('admin');
		const person = await freshPerson('test_engineer', admin);
		const user = new Client();
		expect((await user.signIn(person.email, person.password)).status).toBe(302);
		expect((await user.get('/')).status).toBe(200);
		const created = await user.json('POST', '/api/v1/tokens', { name: 'before deactivation' });
		const { token } = await created.json();
		const bearer = new Client(testAddress(), token);
		expect((await bearer.json('GET', '/api/v1/me')).status).toBe(200);

		const off = await admin.json('PATCH', `/api/v1/people/${person.id}`, { active: false });
		expect(off.status).toBe(200);
		expect((await off.json()).person.state).toBe('deactivated');

		const page = await user.get('/');
		expect(page.status).toBe(303);
		expect(page.headers.get('location')).toBe('/signin?refused=deactivated');
		expect((await user.json('GET', '/api/v1/me')).status).toBe(401);
		expect((await bearer.json('GET', '/api/v1/me')).status).toBe(401);

		const again = await new Client().signIn(person.email, person.password);
		expect(again.status).toBe(400);
		expect(await notice(again)).toContain('deactivated');

		const link = await new Client().form('/signin?/link', { email: person.email, next: '/' });
		expect(await notice(link)).toContain('deactivated');

		const actions = await db.query(`SELECT action FROM audit_events WHERE entity_id = $1 AND action = 'person.deactivated'`, [person.id]);
		expect(actions.rowCount).toBe(1);
	});

	it('does not let an admin deactivate their own account', async () => {
		const admin = await signedInAs('admin');
		const me = (await (await admin.json('GET', '/api/v1/me')).json()).user;
		const res = await admin.json('PATCH', `/api/v1/people/${me.id}`, { active: false });
		expect(res.status).toBe(400);
		expect((await res.json()).error.message).toContain('cannot deactivate your own account');
	});
});

describe('role change', () => {
	it('applies at the next request and is audited', async () => {
		const admin = await signedInAs('admin');
		const person = await freshPerson('program_manager', admin);
		const user = new Client();
		await user.signIn(person.email, person.password);
		expect((await user.get('/admin/people')).status).toBe(403);
		const res = await admin.json('PATCH', `/api/v1/people/${person.id}`, { role: 'admin' });
		expect(res.status).toBe(200);
		expect((await user.get('/admin/people')).status).toBe(200);
		const { rows } = await db.query(`SELECT details FROM audit_events WHERE entity_id = $1 AND action = 'person.role_changed'`, [person.id]);
		expect(rows[0].details).toMatchObject({ from: 'program_manager', to: 'admin' });
	});
});

describe('repeated-failure limit', () => {
	beforeAll(async () => {
		// The address limit needs the server to see the per-test client addresses.
		const probe = new Client();
		const email = uniqueEmail('probe');
		await probe.signIn(email, 'x');
		const { rows } = await db.query(`SELECT ip FROM sign_in_attempts WHERE email = $1`, [email]);
		if (rows[0]?.ip !== probe.address) {
			throw new Error(
				`the server saw the client address ${rows[0]?.ip}, not X-Forwarded-For ${probe.address}: start it with ADDRESS_HEADER=x-forwarded-for XFF_DEPTH=1`
			);
		}
	});

	it('locks an account for 15 minutes after 10 failures, even from different addresses, and says until when', async () => {
		const person = await freshPerson('aerodynamicist');
		for (let i = 1; i <= 9; i++) {
			const res = await new Client().signIn(person.email, `wrong-${i}`);
			expect(await notice(res)).toContain('Wrong password');
		}
		const tenth = await new Client().signIn(person.email, 'wrong-10');
		const lockedText = await notice(tenth);
		expect(lockedText).toMatch(/locked until \d{4}-\d{2}-\d{2} \d{2}:\d{2} UTC/);

		const right = await new Client().signIn(person.email, person.password);
		expect(right.status).toBe(400);
		expect(await notice(right)).toMatch(/locked until/);

		const { rows } = await db.query(`SELECT locked_until FROM users WHERE id = $1`, [person.id]);
		const minutes = (new Date(rows[0].locked_until).getTime() - Date.now()) / 60_000;
		expect(minutes).toBeGreaterThan(14);
		expect(minutes).toBeLessThanOrEqual(15);

		// An admin can lift the lock early.
		const admin = await signedInAs('admin');
		expect((await admin.json('PATCH', `/api/v1/people/${person.id}`, { unlock: true })).status).toBe(200);
		expect((await new Client().signIn(person.email, person.password)).status).toBe(302);
	});

	it('blocks an address after 10 failures there, for any account', async () => {
		const person = await freshPerson('test_engineer');
		const address = testAddress();
		for (let i = 1; i <= 10; i++) {
			const res = await new Client(address).signIn(uniqueEmail('guess'), 'guess');
			expect(await notice(res)).toContain('no Spanline account');
		}
		const res = await new Client(address).signIn(person.email, person.password);
		expect(res.status).toBe(400);
		expect(await notice(res)).toMatch(/network address: sign-in from it is paused until \d{4}-\d{2}-\d{2} \d{2}:\d{2} UTC/);
		// Elsewhere the same person signs in.
		expect((await new Client().signIn(person.email, person.password)).status).toBe(302);
	});
});
