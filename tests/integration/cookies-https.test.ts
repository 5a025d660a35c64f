// Session cookies when Spanline is served under an https origin.
//
// Behind a TLS-terminating proxy the app runs with ORIGIN=https://…; adapter-node
// then builds event.url from ORIGIN, and Auth.js (@auth/core: useSecureCookies
// defaults to `url.protocol === "https:"`) must switch to Secure cookies with
// the `__Secure-` name prefix (and `__Host-` for its CSRF cookie), so a browser
// never sends the session over plain http. The test starts its own instance of
// the production build (same build/ and test database as `npm test`'s server)
// with an https ORIGIN and talks to it over plain http on loopback, as the
// proxy would. Cookie prefixes: RFC 6265bis (draft-ietf-httpbis-rfc6265bis),
// section "Cookie Name Prefixes".
//
// The plain-http server of the suite is covered in security-headers.test.ts
// (HttpOnly, SameSite=Lax, Path=/, no Secure); here only what that test leaves
// open: over http the cookie carries no `__Secure-` prefix (a browser rejects
// a `__Secure-` cookie without Secure) and it signs the next request in.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { ensureEnv, projectRoot } from '../../scripts/lib/env.mjs';
import { demoAccount, testAddress } from '../support/session';
import { baseUrl } from '../support/env';
import { freePort, ownServer, type OwnServer } from '../support/own-server';

const fileEnv = ensureEnv() as Record<string, string>;
const engineer = demoAccount('test_engineer');
let server: OwnServer | null = null;
let port = 0;
/** Where the test connects (plain http on loopback). */
let local = '';
/** What the app believes it is served as. */
let httpsOrigin = '';


interface SetCookie {
	name: string;
	value: string;
	/** Attribute names lower-cased, with their values (`''` for flags). */
	attrs: Map<string, string>;
	raw: string;
}

function parseSetCookies(res: Response): SetCookie[] {
	return res.headers.getSetCookie().map((raw) => {
		const [pair, ...rest] = raw.split(';');
		const eq = pair.indexOf('=');
		const attrs = new Map<string, string>();
		for (const a of rest) {
			const i = a.indexOf('=');
			if (i < 0) attrs.set(a.trim().toLowerCase(), '');
			else attrs.set(a.slice(0, i).trim().toLowerCase(), a.slice(i + 1).trim());
		}
		return { name: pair.slice(0, eq).trim(), value: pair.slice(eq + 1).trim(), attrs, raw };
	});
}

/** Sign in through the real form action, as a browser on `origin` would. */
async function signIn(connectTo: string, origin: string, extra: Record<string, string> = {}) {
	return fetch(`${connectTo}/signin?/password`, {
		method: 'POST',
		redirect: 'manual',
		headers: {
			'content-type': 'application/x-www-form-urlencoded',
			origin,
			accept: 'text/html',
			'x-forwarded-for': testAddress(),
			...extra
		},
		body: new URLSearchParams({ email: engineer.email, password: engineer.password, next: '/' })
	});
}

async function me(connectTo: string, cookie: string) {
	const res = await fetch(`${connectTo}/api/v1/me`, { headers: { cookie, accept: 'application/json', 'x-forwarded-for': testAddress() } });
	return { status: res.status, text: await res.text() };
}

beforeAll(async () => {
	port = await freePort(4300);
	local = `http://127.0.0.1:${port}`;
	httpsOrigin = `https://127.0.0.1:${port}`;
	server = await ownServer({
		port,
		logPath: join(projectRoot, '.data', 'test-logs', `cookies-https-server-${port}.log`),
		env: { AUTH_SECRET: process.env.AUTH_SECRET ?? fileEnv.AUTH_SECRET, ORIGIN: httpsOrigin }
	});
});

afterAll(async () => {
	await server?.stop();
});

describe('session cookie under an https ORIGIN (own server)', () => {
	let cookieHeader = '';

	it('sets __Secure-authjs.session-token with Secure, HttpOnly, SameSite=Lax and Path=/', async () => {
		const res = await signIn(local, httpsOrigin);
		expect(res.status, await res.clone().text()).toBe(302);
		const cookies = parseSetCookies(res);
		const session = cookies.find((c) => c.name === '__Secure-authjs.session-token');
		expect(session, cookies.map((c) => c.raw).join('\n')).toBeTruthy();
		expect(session!.value.length).toBeGreaterThan(20);
		expect(session!.attrs.has('secure')).toBe(true);
		expect(session!.attrs.has('httponly')).toBe(true);
		expect(session!.attrs.get('samesite')?.toLowerCase()).toBe('lax');
		expect(session!.attrs.get('path')).toBe('/');
		// A session cookie without the prefix would be an unprotected second copy.
		expect(cookies.some((c) => c.name === 'authjs.session-token')).toBe(false);
		// The answer sends the browser on within the https origin.
		const location = res.headers.get('location') ?? '';
		expect(location.startsWith('/') || location.startsWith(`${httpsOrigin}/`), location).toBe(true);
		cookieHeader = cookies
			.filter((c) => c.value)
			.map((c) => `${c.name}=${c.value}`)
			.join('; ');
	});

	it('every Auth.js cookie it sets is Secure, and each carries the __Secure- or __Host- prefix', async () => {
		const res = await signIn(local, httpsOrigin);
		expect(res.status).toBe(302);
		const auth = parseSetCookies(res).filter((c) => c.name.includes('authjs.'));
		expect(auth.length).toBeGreaterThanOrEqual(1);
		for (const c of auth) {
			expect(c.attrs.has('secure'), c.raw).toBe(true);
			expect(c.attrs.has('httponly'), c.raw).toBe(true);
			expect(c.name, c.raw).toMatch(/^__(Secure|Host)-authjs\./);
			// __Host- also demands Path=/ and no Domain (RFC 6265bis, cookie name prefixes).
			if (c.name.startsWith('__Host-')) {
				expect(c.attrs.get('path'), c.raw).toBe('/');
				expect(c.attrs.has('domain'), c.raw).toBe(false);
			}
		}
	});

	it('stays Secure when a request claims X-Forwarded-Proto: http or another Host', async () => {
		for (const extra of [{ 'x-forwarded-proto': 'http' }, { 'x-forwarded-host': 'evil.example', 'x-forwarded-proto': 'http' }] as Record<string, string>[]) {
			const res = await signIn(local, httpsOrigin, extra);
			expect(res.status, JSON.stringify(extra)).toBe(302);
			const session = parseSetCookies(res).find((c) => c.name.endsWith('authjs.session-token'));
			expect(session?.name, JSON.stringify(extra)).toBe('__Secure-authjs.session-token');
			expect(session!.attrs.has('secure')).toBe(true);
			expect(res.headers.get('location') ?? '').not.toContain('evil.example');
		}
	});

	it('the __Secure- session cookie signs the next request in as the engineer', async () => {
		expect(cookieHeader).toMatch(/__Secure-authjs\.session-token=/);
		const r = await me(local, cookieHeader);
		expect(r.status, r.text).toBe(200);
		expect(r.text).toContain(engineer.email);
		// Without the cookie the same request is anonymous.
		expect((await me(local, '')).status).toBe(401);
	});
});

describe('session cookie on the plain-http test server (complements security-headers.test.ts)', () => {
	it('has no __Secure- prefix and signs the next request in', async () => {
		const res = await signIn(baseUrl(), baseUrl());
		expect(res.status).toBe(302);
		const cookies = parseSetCookies(res);
		const session = cookies.find((c) => c.name.endsWith('authjs.session-token'));
		expect(session, cookies.map((c) => c.raw).join('\n')).toBeTruthy();
		expect(session!.name).toBe('authjs.session-token');
		const cookie = cookies
			.filter((c) => c.value)
			.map((c) => `${c.name}=${c.value}`)
			.join('; ');
		const r = await me(baseUrl(), cookie);
		expect(r.status, r.text).toBe(200);
		expect(r.text).toContain(engineer.email);
	});
});
