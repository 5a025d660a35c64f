/**
 * Mail through the real SMTP path to the local fake: both parts, the
 * configured sender, an outbox record per message, and the development-only
 * page where admins read the captured mail.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import pg from 'pg';
import { signedInAs, uniqueEmail, waitForMail } from '../support/session';

let db: pg.Client;
beforeAll(async () => {
	db = new pg.Client({ connectionString: process.env.DATABASE_URL });
	await db.connect();
});
afterAll(async () => {
	await db?.end();
});

describe('mail to the local fake', () => {
	it('delivers an invitation with plain-text and HTML parts from MAIL_FROM, and records it in the outbox', async () => {
		const admin = await signedInAs('admin');
		const email = uniqueEmail('mailcheck');
		const res = await admin.json('POST', '/api/v1/people', { email, role: 'program_manager' });
		expect(res.status).toBe(201);
		expect((await res.json()).mail).toEqual({ status: 'sent' });

		const mail = await waitForMail(email, /invited to Spanline/);
		const from = /<([^>]+)>/.exec(process.env.MAIL_FROM ?? '')?.[1] ?? process.env.MAIL_FROM;
		expect(mail.from).toBe(from);
		expect(mail.text).toMatch(/valid until \d{4}-\d{2}-\d{2} \d{2}:\d{2} UTC/);
		expect(mail.html).toMatch(/<a href="http[^"]+\/invite\/[^"]+"/);

		const { rows } = await db.query(`SELECT status, attempts, sent_at, last_error FROM mail_outbox WHERE "to" = $1`, [email]);
		expect(rows).toHaveLength(1);
		expect(rows[0]).toMatchObject({ status: 'sent', attempts: 1, last_error: null });
		expect(rows[0].sent_at).not.toBeNull();
	});

	it('shows captured mail to admins on the development-only page', async () => {
		const admin = await signedInAs('admin');
		const email = uniqueEmail('captured');
		await admin.json('POST', '/api/v1/people', { email, role: 'aerodynamicist' });
		await waitForMail(email, /invited/);
		const page = await admin.get('/admin/mail');
		expect(page.status).toBe(200);
		const html = await page.text();
		expect(html).toContain(email);
		expect(html).toContain('You are invited to Spanline');
	});
});
