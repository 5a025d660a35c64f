/**
 * Signed-in HTTP clients for integration tests: a tiny cookie jar over
 * fetch, sign-in through the real form action, the mail fake, and fresh
 * people created through a real invitation (tests that lock or deactivate
 * must use those, never the seeded demo accounts).
 */
import { randomBytes } from 'node:crypto';
import { DEMO_ACCOUNTS } from '../../src/lib/server/db/seed-data';
import type { Role } from '../../src/lib/server/auth/roles';
import { baseUrl } from './env';

export const demoAccount = (role: Role) => {
	const a = DEMO_ACCOUNTS.find((d) => d.role === role);
	if (!a) throw new Error(`no demo account for ${role}`);
	return a;
};

/**
 * A fresh documentation address (IPv6 2001:db8::/32, RFC 3849) per client,
 * sent as X-Forwarded-For, so one test's failure limit never blocks another:
 * the space is large enough that two clients never share one by chance.
 */
export function testAddress(): string {
	const h = randomBytes(8).toString('hex').match(/.{4}/g)!;
	return `2001:db8:${h.join(':')}`;
}

export function uniqueEmail(tag: string): string {
	return `${tag}.${Date.now().toString(36)}${randomBytes(3).toString('hex')}@example.test`;
}

export class Client {
	readonly cookies = new Map<string, string>();
	constructor(
		public address: string = testAddress(),
		public token: string | null = null
	) {}

	private store(res: Response) {
		for (const line of res.headers.getSetCookie()) {
			const [pair, ...attrs] = line.split(';');
			const eq = pair.indexOf('=');
			const name = pair.slice(0, eq).trim();
			const value = pair.slice(eq + 1).trim();
			const expired = attrs.some((a) => /^\s*max-age=0/i.test(a) || /^\s*expires=thu, 01 jan 1970/i.test(a));
			if (!value || expired) this.cookies.delete(name);
			else this.cookies.set(name, value);
		}
	}

	headers(extra: Record<string, string> = {}): Record<string, string> {
		const h: Record<string, string> = { 'x-forwarded-for': this.address, ...extra };
		if (this.cookies.size) h.cookie = [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ');
		if (this.token) h.authorization = `Bearer ${this.token}`;
		return h;
	}

	async request(method: string, path: string, init: { body?: BodyInit; headers?: Record<string, string> } = {}) {
		const res = await fetch(new URL(path, baseUrl()), {
			method,
			redirect: 'manual',
			body: init.body,
			headers: this.headers(init.headers)
		});
		this.store(res);
		return res;
	}

	get(path: string, headers: Record<string, string> = {}) {
		return this.request('GET', path, { headers: { accept: 'text/html,application/json', ...headers } });
	}

	json(method: string, path: string, body?: unknown) {
		return this.request(method, path, {
			body: body === undefined ? undefined : JSON.stringify(body),
			headers: { 'content-type': 'application/json', accept: 'application/json' }
		});
	}

	/** POST a form as a browser would (Origin for SvelteKit's check, Accept: text/html). */
	form(path: string, fields: Record<string, string>) {
		return this.request('POST', path, {
			body: new URLSearchParams(fields),
			headers: { 'content-type': 'application/x-www-form-urlencoded', origin: baseUrl(), accept: 'text/html' }
		});
	}

	async signIn(email: string, password: string): Promise<Response> {
		return this.form('/signin?/password', { email, password, next: '/' });
	}

	get signedIn(): boolean {
		return [...this.cookies.keys()].some((k) => k.includes('authjs.session-token'));
	}
}

export async function signedInAs(role: Role): Promise<Client> {
	const c = new Client();
	const a = demoAccount(role);
	const res = await c.signIn(a.email, a.password);
	if (res.status !== 302 || !c.signedIn) throw new Error(`sign-in as ${role} failed: ${res.status} ${await res.text()}`);
	return c;
}

// ---------------------------------------------------------------- mail fake

export interface FakeMail {
	id: number;
	to: string[];
	from: string;
	subject: string;
	text: string;
	html: string;
	date: string;
}

export function mailFakeUrl(): string {
	const url = process.env.MAIL_FAKE_URL;
	if (!url) throw new Error('MAIL_FAKE_URL is not set: run the suite with `npm test`.');
	return url;
}

/** Wait until the fake holds a message to `to` matching `subject` (newest first). */
export async function waitForMail(to: string, subject: RegExp, timeoutMs = 10_000): Promise<FakeMail> {
	const until = Date.now() + timeoutMs;
	while (Date.now() < until) {
		const list = (await (await fetch(`${mailFakeUrl()}/messages`)).json()) as FakeMail[];
		const hit = list.find((m) => m.to.includes(to) && subject.test(m.subject));
		if (hit) return hit;
		await new Promise((r) => setTimeout(r, 150));
	}
	throw new Error(`no mail to ${to} matching ${subject} within ${timeoutMs} ms`);
}

export function linkIn(mail: FakeMail, pattern: RegExp): string {
	const m = mail.text.match(pattern);
	if (!m) throw new Error(`no link matching ${pattern} in mail "${mail.subject}"`);
	return m[0];
}

// ---------------------------------------------------------------- fresh people

/** Invite a new person as the demo admin, follow the mail's link and set a password. */
export async function freshPerson(role: Role, admin?: Client): Promise<{ email: string; password: string; id: string }> {
	const a = admin ?? (await signedInAs('admin'));
	const email = uniqueEmail(role.replace('_', '-'));
	const res = await a.json('POST', '/api/v1/people', { email, role, name: `Test ${role}` });
	if (res.status !== 201) throw new Error(`invitation failed: ${res.status} ${await res.text()}`);
	const { person } = (await res.json()) as { person: { id: string } };
	const mail = await waitForMail(email, /invited/i);
	const link = new URL(linkIn(mail, /https?:\/\/\S+\/invite\/\S+/));
	const password = `pw-${randomBytes(9).toString('base64url')}`;
	const set = await new Client().form(link.pathname, { name: `Test ${role}`, password, confirm: password });
	if (set.status !== 303) throw new Error(`setting the password failed: ${set.status}`);
	return { email, password, id: person.id };
}
