// safeUrl: what the request log records of a URL. Invitation links carry
// their secret in the path (/invite/<token>, src/routes/invite/[token]), so the
// path is censored as well as sensitive query values, while the rest of the
// URL stays readable. The last test runs a real pino logger through the
// request-logging handle and reads the written line.
import { randomBytes } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { CENSOR, createLogger, requestLogging, safePath, safeUrl } from '../../../src/lib/server/log';

// Same shape as an invitation token from newSecret(): 32 random bytes, base64url.
const token = () => randomBytes(32).toString('base64url');
// Origin + raw request target, as adapter-node builds event.url (so `//invite/…` stays a path).
const url = (path: string) => new URL(`http://127.0.0.1:3107${path}`);

describe('safeUrl: secrets in the path', () => {
	it('censors the token of an invitation link and keeps the route readable', () => {
		const t = token();
		const out = safeUrl(url(`/invite/${t}`));
		expect(out).toBe(`/invite/${CENSOR}`);
		expect(out).not.toContain(t);
	});

	it('censors the token when SvelteKit asks for the page data or the form posts back', () => {
		const t = token();
		expect(safeUrl(url(`/invite/${t}/__data.json?x-sveltekit-invalidated=01`))).toBe(
			`/invite/${CENSOR}/__data.json?x-sveltekit-invalidated=01`
		);
		expect(safeUrl(url(`/invite/${t}?/default`))).toBe(`/invite/${CENSOR}?%2Fdefault=`);
		expect(safeUrl(url(`/invite/${t}/`))).toBe(`/invite/${CENSOR}/`);
	});

	it('censors spellings that still reach the invitation route (doubled slashes, encoded or upper-case folder)', () => {
		const t = token();
		for (const path of [`//invite/${t}`, `/invite//${t}`, `/%69nvite/${t}`, `/INVITE/${t}`, `/invite/${encodeURIComponent(t + '/x y')}`]) {
			const out = safeUrl(url(path));
			expect(out, path).not.toContain(t);
			expect(out, path).toContain(CENSOR);
		}
	});

	it('leaves paths without a secret segment exactly as they were', () => {
		for (const path of ['/', '/invite', '/invite/', '/campaigns/12/runs', '/campaigns/invite/12', '/api/v1/people/0b9c2d1e-invite', '/admin/people']) {
			expect(safePath(path), path).toBe(path);
			expect(safeUrl(url(path)), path).toBe(url(path).pathname);
		}
	});

	it('censors an invitation path carried inside a query value (?next=/invite/…, a whole link)', () => {
		const t = token();
		const out = safeUrl(url(`/signin?next=${encodeURIComponent(`/invite/${t}`)}&from=${encodeURIComponent(`https://spanline.example/invite/${t}?a=1`)}`));
		expect(out).not.toContain(t);
		expect(new URL(out, 'http://x').searchParams.get('next')).toBe(`/invite/${CENSOR}`);
		expect(new URL(out, 'http://x').searchParams.get('from')).toBe(`https://spanline.example/invite/${CENSOR}?a=1`);
	});
});

describe('safeUrl: secrets in the query (unchanged behaviour)', () => {
	it('censors sensitive parameter values and keeps the others and empty action names', () => {
		const out = safeUrl(url('/auth/callback/nodemailer?token=abc123def456&email=a%40b.test&next=%2Fcampaigns&page=2'));
		const q = new URL(out, 'http://x').searchParams;
		expect(q.get('token')).toBe(CENSOR);
		expect(q.get('email')).toBe(CENSOR);
		expect(q.get('next')).toBe('/campaigns');
		expect(q.get('page')).toBe('2');
		expect(safeUrl(url('/signin?/password'))).toBe('/signin?%2Fpassword=');
	});
});

describe('request log line', () => {
	it('a request for an invitation page is logged with the route, the status and no token', async () => {
		const lines: string[] = [];
		const logger = createLogger({ env: {}, destination: { write: (s: string) => void lines.push(s) } });
		const handle = requestLogging(logger);
		const t = token();
		const event = {
			url: url(`/invite/${t}`),
			request: new Request(`http://127.0.0.1:3107/invite/${t}`),
			locals: { requestId: 'req-invite-1' }
		};
		const response = await handle({ event, resolve: async () => new Response('ok', { status: 200 }) } as never);
		expect(response.status).toBe(200);
		expect(lines).toHaveLength(1);
		expect(lines[0]).not.toContain(t);
		const line = JSON.parse(lines[0]);
		expect(line).toMatchObject({ msg: 'request', reqId: 'req-invite-1', method: 'GET', url: `/invite/${CENSOR}`, status: 200 });
	});
});
