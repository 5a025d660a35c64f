// Secrets never reach the logs, error pages or API responses.
//
// The test starts its own instance of the production build (the same `build/`
// and test database as `npm test`'s server) with stdout and stderr going to a
// file it owns, drives sign-ins with every demo password (right and wrong),
// creates and uses an API token, sends secrets in headers, query strings and
// bodies where they do not belong, provokes errors — and then greps that log,
// and every response it received, for AUTH_SECRET, the database password, the
// demo passwords and the token. Its own server, because the log of the shared
// server is only complete once that server has exited.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { randomBytes } from 'node:crypto';
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { ensureEnv, projectRoot } from '../../scripts/lib/env.mjs';
import { DEMO_ACCOUNTS } from '../../src/lib/server/db/seed-data';
import { ownServer, type OwnServer } from '../support/own-server';

const fileEnv = ensureEnv() as Record<string, string>;
const port = 3300 + Math.floor(Math.random() * 200);
const origin = `http://127.0.0.1:${port}`;
// Outside test-results/, which the next `npm test` empties.
const logPath = join(projectRoot, '.data', 'test-logs', `security-secrets-server-${port}.log`);
let server: OwnServer;

/** Everything the server sent back, headers and bodies, to search for secrets too. */
const received: string[] = [];
const createdTokens: string[] = [];
/** Secrets that travel in the path: an invitation link is /invite/<token>. */
const pathSecrets: string[] = [];
const address = `192.0.2.${1 + Math.floor(Math.random() * 250)}`;

async function call(path: string, init: RequestInit & { headers?: Record<string, string> } = {}) {
	const res = await fetch(`${origin}${path}`, {
		redirect: 'manual',
		...init,
		headers: { 'x-forwarded-for': address, ...(init.headers ?? {}) }
	});
	const body = await res.text();
	const headers = [...res.headers].filter(([k]) => k !== 'set-cookie').map(([k, v]) => `${k}: ${v}`);
	// Only what came back: the path we sent (with its planted secrets) is not part of the answer.
	received.push(`${res.status} ${path.split('?')[0]}\n${headers.join('\n')}\n\n${body}`);
	return { res, body };
}

function cookieHeader(res: Response): string {
	return res.headers
		.getSetCookie()
		.map((c) => c.split(';')[0])
		.filter((c) => !c.endsWith('='))
		.join('; ');
}

async function signIn(email: string, password: string) {
	return call('/signin?/password', {
		method: 'POST',
		headers: { 'content-type': 'application/x-www-form-urlencoded', origin, accept: 'text/html' },
		body: new URLSearchParams({ email, password, next: '/' })
	});
}

beforeAll(async () => {
	server = await ownServer({ port, logPath });
});

afterAll(async () => {
	await server?.stop();
});

describe('secrets stay out of logs and responses', () => {
	it('drives sign-in, tokens, errors and leaky-looking requests through the server', async () => {
		// Wrong, then right, password for every demo account.
		for (const a of DEMO_ACCOUNTS) {
			const wrong = await signIn(a.email, `${a.password}-wrong`);
			expect(wrong.res.status).toBe(400);
			const right = await signIn(a.email, a.password);
			expect(right.res.status).toBe(302);
		}
		// Sign in as the admin, create a token, use it.
		const admin = DEMO_ACCOUNTS.find((a) => a.role === 'admin')!;
		const session = await signIn(admin.email, admin.password);
		const cookie = cookieHeader(session.res);
		expect(cookie).toMatch(/session-token/);
		const created = await call('/api/v1/tokens', {
			method: 'POST',
			headers: { cookie, 'content-type': 'application/json', origin },
			body: JSON.stringify({ name: 'secret-log check' })
		});
		expect(created.res.status).toBe(201);
		const token = JSON.parse(created.body).token as string;
		expect(token.length).toBeGreaterThanOrEqual(20);
		createdTokens.push(token);
		const me = await call('/api/v1/me', { headers: { authorization: `Bearer ${token}` } });
		expect(me.res.status).toBe(200);
		// A token one character off is refused.
		const bad = await call('/api/v1/me', { headers: { authorization: `Bearer ${token.slice(0, -1)}x` } });
		expect(bad.res.status).toBe(401);

		// Secrets sent where they do not belong: query strings, odd headers, bodies.
		await call(`/signin?password=${encodeURIComponent(admin.password)}&token=${token}&next=%2F`);
		await call(`/api/v1/health?token=${token}&secret=${fileEnv.AUTH_SECRET}`);
		await call('/api/v1/campaigns', { headers: { cookie: `authjs.session-token=${fileEnv.AUTH_SECRET}` } });
		await call('/api/v1/me', {
			method: 'PATCH',
			headers: { cookie, 'content-type': 'application/json', origin },
			body: `{"password": "${admin.password}", "broken json`
		});
		await call('/api/v1/tokens', {
			method: 'POST',
			headers: { authorization: `Bearer ${token}`, 'content-type': 'application/json' },
			body: JSON.stringify({ name: '', token, password: admin.password, secret: fileEnv.SPANLINE_DB_PASSWORD })
		});
		await call('/no-such-page', { headers: { cookie, accept: 'text/html', 'x-api-key': fileEnv.AUTH_SECRET } });
		await call('/api/v1/people/not-a-uuid', { headers: { authorization: `Bearer ${token}` } });
		await call('/auth/callback/nodemailer?token=0123456789abcdef&email=someone%40example.test');
		// An invitation link (same shape as newSecret()): the page, its data and its form post.
		const invitation = randomBytes(32).toString('base64url');
		pathSecrets.push(invitation);
		await call(`/invite/${invitation}`, { headers: { accept: 'text/html' } });
		await call(`/invite/${invitation}/__data.json`);
		await call(`/invite/${invitation}`, {
			method: 'POST',
			headers: { 'content-type': 'application/x-www-form-urlencoded', origin, accept: 'text/html' },
			body: new URLSearchParams({ password: 'too short' })
		});
		// A cross-site POST carrying a password.
		const forged = await call('/signin?/password', {
			method: 'POST',
			headers: { 'content-type': 'application/x-www-form-urlencoded', origin: 'https://elsewhere.example', accept: 'text/html' },
			body: new URLSearchParams({ email: admin.email, password: admin.password })
		});
		expect(forged.res.status).toBe(403);
	});

	it('the server log holds none of the secrets, and every request line has a request id', async () => {
		// Give pino's asynchronous writer a moment, then stop the server so everything is flushed.
		await server.stop();
		const log = readFileSync(logPath, 'utf8');
		const lines = log.split('\n').filter(Boolean);
		const requests = lines.filter((l) => l.startsWith('{')).map((l) => JSON.parse(l));
		// The log is not empty: the request logging saw what the test did (≥ 18 request lines).
		expect(requests.filter((r) => r.msg === 'request' || r.msg === 'request failed').length).toBeGreaterThanOrEqual(18);
		for (const r of requests.filter((r) => 'method' in r)) {
			expect(r.reqId, JSON.stringify(r)).toMatch(/^[0-9a-f-]{36}$/);
		}
		const secrets: [string, string][] = [
			['AUTH_SECRET', fileEnv.AUTH_SECRET],
			['SPANLINE_DB_PASSWORD', fileEnv.SPANLINE_DB_PASSWORD],
			...DEMO_ACCOUNTS.map((a) => [`demo password of ${a.role}`, a.password] as [string, string]),
			...createdTokens.map((t, i) => [`API token ${i + 1}`, t] as [string, string]),
			...pathSecrets.map((t) => ['invitation token (path)', t] as [string, string])
		];
		expect(secrets.every(([, v]) => typeof v === 'string' && v.length >= 8)).toBe(true);
		const found = secrets.filter(([, v]) => log.includes(v) || log.includes(encodeURIComponent(v)));
		expect(found.map(([k]) => k), `secrets in ${logPath}`).toEqual([]);
		// The sensitive query values were censored, not dropped silently: the request is still visible.
		expect(requests.some((r) => typeof r.url === 'string' && /^\/signin\?password=(%5B|\[)Redacted/.test(r.url))).toBe(true);
		// The invitation requests are logged with the route and a censored token.
		expect(requests.filter((r) => typeof r.url === 'string' && r.url.startsWith('/invite/[Redacted]')).length).toBeGreaterThanOrEqual(3);
	});

	it('the shared server log of this `npm test` run (test-results/server.log) holds none of the secrets either', () => {
		// What scripts/test.mjs has captured so far (it reads the server's output only
		// while it is not blocked running Vitest, so this may be a prefix of the log).
		const shared = join(projectRoot, 'test-results', 'server.log');
		expect(existsSync(shared), `${shared} missing: run through npm test`).toBe(true);
		const log = readFileSync(shared, 'utf8');
		expect(log).toMatch(/Listening on/);
		const secrets = [fileEnv.AUTH_SECRET, fileEnv.SPANLINE_DB_PASSWORD, ...DEMO_ACCOUNTS.map((a) => a.password), ...createdTokens];
		expect(secrets.filter((v) => log.includes(v)).length).toBe(0);
	});

	it('no response (headers or body) contained a secret other than the token handed out once', () => {
		const all = received.join('\n\n');
		expect(received.length).toBeGreaterThanOrEqual(20);
		const leaks = [
			['AUTH_SECRET', fileEnv.AUTH_SECRET],
			['SPANLINE_DB_PASSWORD', fileEnv.SPANLINE_DB_PASSWORD],
			...DEMO_ACCOUNTS.map((a) => [a.role, a.password])
		].filter(([, v]) => all.includes(v));
		const where = leaks.map(([k, v]) => {
			const r = received.find((x) => x.includes(v))!;
			const i = r.indexOf(v);
			return `${k} in "${r.split('\n')[0]}": …${r.slice(Math.max(0, i - 120), i + v.length + 40)}…`;
		});
		expect(where).toEqual([]);
		// The token appears in exactly one answer: the one that created it.
		const withToken = received.filter((r) => r.includes(createdTokens[0]));
		expect(withToken).toHaveLength(1);
		expect(withToken[0]).toMatch(/^201 \/api\/v1\/tokens/);
	});
});
