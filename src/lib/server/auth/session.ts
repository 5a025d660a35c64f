/**
 * The signed-in person's id from the Auth.js session cookie, cheaply.
 *
 * Asking Auth.js (`locals.auth()`) on every page request derives the
 * encryption key (HKDF), decrypts the JWE, then encrypts a new one to roll the
 * cookie's expiry — about a quarter of a page request's CPU time, measured with
 * `npm run bench:load`. Here the cookie is decrypted once with Auth.js's own
 * `decode` (same secret, same salt, same expiry check) and the result is kept
 * for that exact cookie value until its expiry (or CACHE_MS at most); the
 * cookie is rolled through Auth.js only when it is older than ROLL_AFTER_S.
 *
 * Nothing is weakened: a cookie value decodes to the same claims every time,
 * and whether the person is still active is checked against the database on
 * every request by the caller, as before.
 */
import { decode } from '@auth/core/jwt';
import type { Cookies } from '@sveltejs/kit';

export const SESSION_COOKIE = 'authjs.session-token';
export const SECURE_SESSION_COOKIE = '__Secure-authjs.session-token';

/** Roll (re-issue) a session cookie through Auth.js once it is this old. */
export const ROLL_AFTER_S = 60 * 60;
/** Keep a decoded cookie at most this long. */
const CACHE_MS = 10 * 60_000;
/** Decoded cookies kept (oldest dropped first); one per signed-in browser. */
const CACHE_SIZE = 5_000;

export interface SessionClaims {
	userId: string;
	/** Seconds since the epoch, as in the JWT. */
	issuedAt: number;
	expiresAt: number;
}

const cache = new Map<string, { claims: SessionClaims; until: number }>();

export type SessionRead =
	| { kind: 'none' } // no session cookie: anonymous
	| { kind: 'valid'; claims: SessionClaims; roll: boolean }
	| { kind: 'ask-auth' }; // chunked, undecodable or unusual: let Auth.js decide (and clear it)

/** Read the session cookie of this request (the __Secure- name when the app is served over https). */
export async function readSession(cookies: Pick<Cookies, 'get'>, secret: string, secure: boolean, now = Date.now()): Promise<SessionRead> {
	const name = secure ? SECURE_SESSION_COOKIE : SESSION_COOKIE;
	const value = cookies.get(name);
	if (!value) return cookies.get(`${name}.0`) ? { kind: 'ask-auth' } : { kind: 'none' };
	const hit = cache.get(value);
	let claims = hit && hit.until > now ? hit.claims : null;
	if (!claims) {
		if (hit) cache.delete(value);
		let payload: { sub?: unknown; iat?: unknown; exp?: unknown } | null;
		try {
			payload = await decode({ token: value, secret, salt: name });
		} catch {
			return { kind: 'ask-auth' };
		}
		if (!payload || typeof payload.sub !== 'string' || typeof payload.exp !== 'number' || typeof payload.iat !== 'number') return { kind: 'ask-auth' };
		claims = { userId: payload.sub, issuedAt: payload.iat, expiresAt: payload.exp };
		if (cache.size >= CACHE_SIZE) cache.delete(cache.keys().next().value!);
		cache.set(value, { claims, until: Math.min(now + CACHE_MS, claims.expiresAt * 1000) });
	}
	if (claims.expiresAt * 1000 <= now) return { kind: 'ask-auth' };
	return { kind: 'valid', claims, roll: now / 1000 - claims.issuedAt > ROLL_AFTER_S };
}

/** Forget every decoded cookie (tests). */
export function clearSessionCache(): void {
	cache.clear();
}
