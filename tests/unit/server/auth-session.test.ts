/**
 * The session-cookie fast path (src/lib/server/auth/session.ts) against
 * cookies made by Auth.js's own `encode`: it must accept exactly what
 * Auth.js would, and hand everything else back to Auth.js.
 */
import { describe, it, expect, beforeEach } from 'vitest';
import { encode } from '@auth/core/jwt';
import { clearSessionCache, readSession, ROLL_AFTER_S, SECURE_SESSION_COOKIE, SESSION_COOKIE } from '../../../src/lib/server/auth/session';

const SECRET = 'unit-test-secret-of-sufficient-length-0123456789';
const USER = '7780c2d0-6f83-481e-9397-4951f9ce67e3';

function jar(values: Record<string, string>) {
	return { get: (name: string) => values[name] };
}

async function cookie(opts: { salt?: string; secret?: string; maxAge?: number; iat?: number } = {}) {
	const token: Record<string, unknown> = { sub: USER, name: 'Test' };
	if (opts.iat !== undefined) token.iat = opts.iat;
	return encode({ token, secret: opts.secret ?? SECRET, salt: opts.salt ?? SESSION_COOKIE, maxAge: opts.maxAge ?? 3600 });
}

beforeEach(() => clearSessionCache());

describe('readSession', () => {
	it('finds no session without the cookie', async () => {
		expect(await readSession(jar({}), SECRET, false)).toEqual({ kind: 'none' });
	});

	it('reads the user id from a fresh Auth.js cookie and does not ask to roll it', async () => {
		const r = await readSession(jar({ [SESSION_COOKIE]: await cookie() }), SECRET, false);
		expect(r.kind).toBe('valid');
		if (r.kind !== 'valid') return;
		expect(r.claims.userId).toBe(USER);
		expect(r.roll).toBe(false);
		expect(r.claims.expiresAt - r.claims.issuedAt).toBe(3600);
	});

	it('asks to roll a cookie older than ROLL_AFTER_S', async () => {
		const value = await cookie({ maxAge: 36 * 3600 });
		const later = Date.now() + (ROLL_AFTER_S + 60) * 1000;
		const r = await readSession(jar({ [SESSION_COOKIE]: value }), SECRET, false, later);
		expect(r).toMatchObject({ kind: 'valid', roll: true });
	});

	it('hands an expired cookie to Auth.js, also when it was cached while valid', async () => {
		const value = await cookie({ maxAge: 60 });
		expect((await readSession(jar({ [SESSION_COOKIE]: value }), SECRET, false)).kind).toBe('valid');
		const afterExpiry = Date.now() + 120_000;
		expect(await readSession(jar({ [SESSION_COOKIE]: value }), SECRET, false, afterExpiry)).toEqual({ kind: 'ask-auth' });
	});

	it('hands a cookie made with another secret, or for the other cookie name, to Auth.js', async () => {
		expect(await readSession(jar({ [SESSION_COOKIE]: await cookie({ secret: 'another-secret-entirely-0123456789abcdef' }) }), SECRET, false)).toEqual({ kind: 'ask-auth' });
		// The cookie name is the key-derivation salt: a plain-http cookie under the __Secure- name does not decode.
		expect(await readSession(jar({ [SECURE_SESSION_COOKIE]: await cookie({ salt: SESSION_COOKIE }) }), SECRET, true)).toEqual({ kind: 'ask-auth' });
	});

	it('hands a tampered cookie to Auth.js', async () => {
		const value = await cookie();
		const i = Math.floor(value.length / 2);
		const tampered = value.slice(0, i) + (value[i] === 'A' ? 'B' : 'A') + value.slice(i + 1);
		expect(await readSession(jar({ [SESSION_COOKIE]: tampered }), SECRET, false)).toEqual({ kind: 'ask-auth' });
	});

	it('reads the __Secure- cookie when the app is served over https, and ignores the plain one there', async () => {
		const secure = await cookie({ salt: SECURE_SESSION_COOKIE });
		expect((await readSession(jar({ [SECURE_SESSION_COOKIE]: secure }), SECRET, true)).kind).toBe('valid');
		expect(await readSession(jar({ [SESSION_COOKIE]: await cookie() }), SECRET, true)).toEqual({ kind: 'none' });
	});

	it('leaves a chunked cookie to Auth.js', async () => {
		expect(await readSession(jar({ [`${SESSION_COOKIE}.0`]: 'part' }), SECRET, false)).toEqual({ kind: 'ask-auth' });
	});
});
