import { redirect, type Handle, type HandleServerError, type ServerInit } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { building } from '$app/environment';
import { randomUUID } from 'node:crypto';
import { apiError } from '$lib/server/http';
import { env } from '$env/dynamic/private';
import { handle as authHandle, usesSecureCookies } from './auth';
import { readSession } from '$lib/server/auth/session';
import * as identity from '$lib/server/auth/identity-cache';
import * as tokens from '$lib/server/auth/tokens';
import * as signInRules from '$lib/server/auth/sign-in';
import * as links from '$lib/server/auth/links';
import * as mail from '$lib/server/mail';
import * as notifications from '$lib/server/notifications';
import { countQuery, log, logRequests, safeUrl } from '$lib/server/log';
import { closeSequelize, observeQueries } from '$lib/server/db';
import { securityHeaders } from '$lib/server/security-headers';
import { isDatabaseUnavailable } from '$lib/server/db/errors';

/** Paths anyone may reach without signing in. */
const PUBLIC_PATHS = [
	/^\/signin(\/|$)/,
	/^\/signout$/,
	/^\/invite\//,
	/^\/auth\//,
	/^\/api\/v1\/health$/,
	/^\/_app\//,
	/^\/favicon/
];

/** How often queued mail is retried (the retry pauses themselves grow per message). */
const MAIL_RETRY_INTERVAL_MS = 15_000;

export const init: ServerInit = async () => {
	if (building) return;
	observeQueries(countQuery);
	// Remembered identities, dropped on the database's change announcements (auth/identity-cache.ts).
	identity.startListening(env.DATABASE_URL);
	// A small retry loop for mail that could not be delivered at once.
	const timer = setInterval(() => {
		mail.deliverDue().catch((err) => log().error({ err }, 'mail retry failed'));
	}, MAIL_RETRY_INTERVAL_MS);
	timer.unref();
	// Campaign digests on a schedule (off unless SPANLINE_DIGEST_INTERVAL_HOURS > 0).
	notifications.startDigestScheduler();
	// adapter-node's graceful shutdown: once in-flight requests are answered, close
	// the pool at once (its idle connections would otherwise hold the process ~10 s).
	process.once('sveltekit:shutdown', () => {
		clearInterval(timer);
		notifications.stopDigestScheduler();
		identity.stopListening().catch(() => {});
		closeSequelize().catch((err) => log().warn({ err }, 'closing the database pool at shutdown'));
	});
};

const requestId: Handle = async ({ event, resolve }) => {
	event.locals.requestId = event.request.headers.get('x-request-id')?.slice(0, 64) || randomUUID();
	event.locals.user = null;
	const response = await resolve(event);
	response.headers.set('x-request-id', event.locals.requestId);
	return response;
};

const DB_DOWN_MESSAGE = 'The database is not reachable right now; nothing was changed. Try again in a moment.';

/**
 * A database outage is a 503, not a 500, wherever it surfaces: thrown by a
 * later hook (token and session look-ups) or by a load, action or endpoint
 * (reported through handleError, which marks the request).
 */
const databaseOutage: Handle = async ({ event, resolve }) => {
	let response: Response;
	try {
		response = await resolve(event);
	} catch (err) {
		if (!isDatabaseUnavailable(err)) throw err;
		event.locals.databaseUnavailable = true;
		response = event.url.pathname.startsWith('/api/')
			? apiError(503, 'database_unavailable', DB_DOWN_MESSAGE)
			: new Response(DB_DOWN_MESSAGE, { status: 503, headers: { 'content-type': 'text/plain; charset=utf-8' } });
	}
	if (event.locals.databaseUnavailable && response.status === 500) {
		if (event.url.pathname.startsWith('/api/')) return apiError(503, 'database_unavailable', DB_DOWN_MESSAGE);
		return new Response(response.body, { status: 503, headers: response.headers });
	}
	if (event.locals.databaseUnavailable) response.headers.set('retry-after', '5');
	return response;
};

/**
 * Before Auth.js consumes a sign-in link, tell an expired link from an
 * unknown or used one (Auth.js reports both as the same error).
 */
const linkCheck: Handle = async ({ event, resolve }) => {
	if (event.request.method === 'GET' && event.url.pathname === '/auth/callback/nodemailer') {
		const problem = await links.linkProblem(event.url.searchParams.get('token'), event.url.searchParams.get('email'));
		if (problem) redirect(303, `/signin?refused=${problem}`);
	}
	return resolve(event);
};

const SESSION_COOKIES = ['authjs.session-token', '__Secure-authjs.session-token'];

/**
 * The session's user id: decoded here (cached per cookie value, see
 * auth/session.ts); Auth.js itself is asked only to roll an old cookie or to
 * judge one that does not decode.
 */
async function sessionUserId(event: Parameters<Handle>[0]['event']): Promise<string | null> {
	const read = await readSession(event.cookies, env.AUTH_SECRET ?? '', usesSecureCookies(event));
	if (read.kind === 'none') return null;
	if (read.kind === 'valid' && !read.roll) return read.claims.userId;
	return (await event.locals.auth())?.user?.id ?? null;
}

/** Who is asking: an API token, else the Auth.js session, re-checked against the database. */
const identify: Handle = async ({ event, resolve }) => {
	const header = event.request.headers.get('authorization');
	if (header) {
		const m = /^Bearer\s+(\S+)$/i.exec(header.trim());
		const user = m ? await tokens.userForToken(m[1]) : null;
		if (!user) {
			// A bad token is never silently treated as anonymous browsing.
			return apiError(401, 'invalid_token', 'The API token is unknown, revoked or expired, or its owner is deactivated.');
		}
		event.locals.user = user;
		return resolve(event);
	}
	const id = await sessionUserId(event);
	if (id) {
		const user = await identity.personById(id, signInRules.activeUser);
		if (user) {
			event.locals.user = user;
		} else {
			// Deactivated (or removed) since signing in: the session ends now.
			for (const name of SESSION_COOKIES) {
				for (const suffix of ['', '.0', '.1', '.2']) {
					if (event.cookies.get(name + suffix)) event.cookies.delete(name + suffix, { path: '/' });
				}
			}
			if (!event.url.pathname.startsWith('/api/') && !event.url.pathname.startsWith('/signin')) {
				redirect(303, '/signin?refused=deactivated');
			}
		}
	}
	return resolve(event);
};

/** First line of defence; every load, action and endpoint checks its capability again. */
const gate: Handle = async ({ event, resolve }) => {
	const path = event.url.pathname;
	if (!event.locals.user && !PUBLIC_PATHS.some((p) => p.test(path))) {
		if (path.startsWith('/api/')) {
			return apiError(401, 'unauthenticated', 'Sign in or send an API token (Authorization: Bearer <token>).');
		}
		redirect(303, `/signin?next=${encodeURIComponent(path + event.url.search)}`);
	}
	return resolve(event);
};

// logRequests right after requestId so every later line carries the request id;
// securityHeaders wraps every response the rest of the sequence returns.
export const handle: Handle = sequence(requestId, logRequests, securityHeaders, databaseOutage, linkCheck, authHandle, identify, gate);

export const handleError: HandleServerError = ({ error, event, status, message }) => {
	if (isDatabaseUnavailable(error)) {
		event.locals.databaseUnavailable = true;
		return { message: DB_DOWN_MESSAGE, code: 'database_unavailable', requestId: event.locals.requestId };
	}
	// log() is this request's logger (its reqId); safeUrl hides path and query secrets (invitation tokens).
	if (status !== 404) log().error({ err: error, status, url: safeUrl(event.url) }, 'unhandled error');
	return { message: status === 404 ? 'Page not found.' : message, requestId: event.locals.requestId };
};
