// Security headers, SvelteKit's cross-site form check and the session cookie
// flags, over real HTTP against the built server of `npm test`; then the
// Content-Security-Policy in Debian's Chromium: SvelteKit's inline hydration
// script (nonce) runs, styles and the self-hosted font load, and the browser
// reports no violation.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser } from 'playwright-core';
import { launchChromium } from '../support/browser';
import { baseUrl } from '../support/env';
import { DEMO_ACCOUNTS } from '../../src/lib/server/db/seed-data';

const manager = DEMO_ACCOUNTS.find((a) => a.role === 'program_manager')!;
// RFC 5737 documentation address per run, so sign-in failure limits of other files never apply here.
const forwardedFor = `203.0.113.${1 + Math.floor(Math.random() * 250)}`;

function parseCsp(header: string | null): Map<string, string[]> {
	const out = new Map<string, string[]>();
	for (const part of (header ?? '').split(';')) {
		const [name, ...values] = part.trim().split(/\s+/);
		if (name) out.set(name.toLowerCase(), values);
	}
	return out;
}

function expectCommonHeaders(res: Response) {
	expect(res.headers.get('x-content-type-options')).toBe('nosniff');
	expect(res.headers.get('referrer-policy')).toBe('strict-origin-when-cross-origin');
	expect(res.headers.get('x-frame-options')).toBe('DENY');
	const csp = parseCsp(res.headers.get('content-security-policy'));
	expect(csp.get('frame-ancestors')).toEqual(["'none'"]);
}

describe('security headers', () => {
	it('a page carries a nonce-based CSP allowing only this origin, and the other headers', async () => {
		const res = await fetch(`${baseUrl()}/signin`);
		expect(res.status).toBe(200);
		expectCommonHeaders(res);
		const csp = parseCsp(res.headers.get('content-security-policy'));
		const script = csp.get('script-src')!;
		expect(script[0]).toBe("'self'");
		expect(script.some((s) => /^'nonce-[A-Za-z0-9+/=_-]{16,}'$/.test(s))).toBe(true);
		expect(script).not.toContain("'unsafe-inline'");
		expect(script).not.toContain("'unsafe-eval'");
		for (const d of ['default-src', 'style-src', 'font-src', 'connect-src']) {
			// Nothing but 'self' (and SvelteKit's nonce): no foreign host, no wildcard.
			expect(csp.get(d)!.filter((s) => !s.startsWith("'nonce-"))).toEqual(["'self'"]);
		}
		expect(csp.get('object-src')).toEqual(["'none'"]);
		expect(csp.get('base-uri')).toEqual(["'self'"]);
		expect(csp.get('form-action')).toEqual(["'self'"]);
		// The nonce in the header is the one on the inline hydration script.
		const nonce = script.find((s) => s.startsWith("'nonce-"))!.slice(7, -1);
		const html = await res.text();
		expect(html).toContain(`<script nonce="${nonce}">`);
	});

	it('every response gets a fresh nonce', async () => {
		const [a, b] = await Promise.all([fetch(`${baseUrl()}/signin`), fetch(`${baseUrl()}/signin`)]);
		const nonce = (r: Response) => parseCsp(r.headers.get('content-security-policy')).get('script-src')!.find((s) => s.startsWith("'nonce-"));
		expect(nonce(a)).toBeTruthy();
		expect(nonce(a)).not.toBe(nonce(b));
	});

	it.each([
		['/api/v1/health', 200],
		['/api/v1/campaigns', 401],
		['/api/v1/no-such-endpoint', 401]
	])('API response %s (%i) carries the headers and a deny-all CSP', async (path, status) => {
		const res = await fetch(`${baseUrl()}${path}`);
		expect(res.status).toBe(status);
		expectCommonHeaders(res);
		expect(parseCsp(res.headers.get('content-security-policy')).get('default-src')).toEqual(["'none'"]);
	});

	it('an API request with a bad token is refused with the headers too', async () => {
		const res = await fetch(`${baseUrl()}/api/v1/campaigns`, { headers: { authorization: 'Bearer not-a-real-token' } });
		expect(res.status).toBe(401);
		expectCommonHeaders(res);
	});
});

describe('cross-site form posts (SvelteKit origin check)', () => {
	it.each([
		['a foreign site', 'https://attacker.example'],
		['the same host on another port', baseUrl().replace(/:(\d+)$/, (_, p) => `:${Number(p) + 1}`)],
		['localhost instead of 127.0.0.1', baseUrl().replace('127.0.0.1', 'localhost')],
		['the literal null origin', 'null']
	])('a form POST from %s is refused with 403 before any action runs', async (_what, origin) => {
		const res = await fetch(`${baseUrl()}/signin?/password`, {
			method: 'POST',
			redirect: 'manual',
			headers: { 'content-type': 'application/x-www-form-urlencoded', origin, accept: 'text/html', 'x-forwarded-for': forwardedFor },
			body: new URLSearchParams({ email: manager.email, password: manager.password, next: '/' })
		});
		expect(res.status).toBe(403);
		expect(await res.text()).toMatch(/Cross-site POST form submissions are forbidden/);
		// Nothing was signed in.
		expect(res.headers.getSetCookie().some((c) => c.includes('session-token'))).toBe(false);
	});

	it('the same form POST from our own origin signs in, with an HttpOnly SameSite=Lax session cookie', async () => {
		const res = await fetch(`${baseUrl()}/signin?/password`, {
			method: 'POST',
			redirect: 'manual',
			headers: {
				'content-type': 'application/x-www-form-urlencoded',
				origin: baseUrl(),
				accept: 'text/html',
				'x-forwarded-for': forwardedFor
			},
			body: new URLSearchParams({ email: manager.email, password: manager.password, next: '/' })
		});
		expect([302, 303]).toContain(res.status);
		const session = res.headers.getSetCookie().find((c) => /^(__Secure-)?authjs\.session-token=/.test(c));
		expect(session, res.headers.getSetCookie().join('\n')).toBeTruthy();
		const attrs = session!.split(';').map((a) => a.trim().toLowerCase());
		expect(attrs).toContain('httponly');
		expect(attrs).toContain('samesite=lax');
		expect(attrs).toContain('path=/');
		// Served over plain http on loopback: Secure would make the browser drop the cookie.
		// Over https Auth.js switches to the __Secure- cookie with Secure set.
		expect(attrs).not.toContain('secure');
	});
});

describe('Content-Security-Policy in Chromium (production build)', () => {
	let browser: Browser;
	beforeAll(async () => {
		browser = await launchChromium();
	});
	afterAll(async () => {
		await browser?.close();
	});

	it('hydrates the sign-in page, applies styles and the font, and reports no violation', async () => {
		const context = await browser.newContext({ extraHTTPHeaders: { 'x-forwarded-for': forwardedFor } });
		await context.addInitScript(() => {
			(window as unknown as { __violations: string[] }).__violations = [];
			document.addEventListener('securitypolicyviolation', (e) => {
				(window as unknown as { __violations: string[] }).__violations.push(`${e.violatedDirective} ${e.blockedURI}`);
			});
		});
		const page = await context.newPage();
		const consoleErrors: string[] = [];
		page.on('console', (m) => {
			if (m.type() === 'error') consoleErrors.push(m.text());
		});
		page.on('pageerror', (e) => consoleErrors.push(e.message));
		const documents: string[] = [];
		const fetches: string[] = [];
		page.on('request', (r) => {
			if (r.resourceType() === 'document') documents.push(r.url());
			if (r.resourceType() === 'fetch') fetches.push(r.url());
		});

		await page.goto(`${baseUrl()}/signin`, { waitUntil: 'networkidle' });
		const violations = () => page.evaluate(() => (window as unknown as { __violations: string[] }).__violations);
		expect(await violations()).toEqual([]);
		// A stylesheet from /_app applied (Tailwind's theme), the self-hosted font in use,
		// and the inline style attribute of app.html honoured (style-src-attr).
		expect(await page.evaluate(() => getComputedStyle(document.body).fontFamily)).toContain('Source Sans 3');
		expect(await page.evaluate(() => document.fonts.check('16px "Source Sans 3"'))).toBe(true);
		expect(await page.evaluate(() => getComputedStyle(document.body.firstElementChild!).display)).toBe('contents');

		// Hydration ran (the nonce let SvelteKit's inline start script through): the
		// enhanced form submits with fetch instead of a full page load.
		documents.length = 0;
		await page.fill('input[name="email"]', manager.email);
		await page.fill('input[name="password"]', 'certainly-not-the-password');
		await page.locator('form[action="?/password"] button[type="submit"], form[action="?/password"] button:not([type])').first().click();
		await expect.poll(() => fetches.some((u) => u.includes('/signin?/password')), { timeout: 10_000 }).toBe(true);
		expect(documents).toEqual([]);

		// Signed in, the app shell renders under the same policy.
		await page.fill('input[name="password"]', manager.password);
		await page.locator('form[action="?/password"] button[type="submit"], form[action="?/password"] button:not([type])').first().click();
		await page.waitForURL((u) => u.pathname === '/', { timeout: 15_000 });
		await page.waitForLoadState('networkidle');
		expect(await violations()).toEqual([]);
		expect(consoleErrors.filter((m) => /Content Security Policy|Refused to/i.test(m))).toEqual([]);
		await context.close();
	});
});
