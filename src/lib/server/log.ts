import { AsyncLocalStorage } from 'node:async_hooks';
import { randomUUID } from 'node:crypto';
import { pino, stdSerializers, type Logger, type DestinationStream, type LoggerOptions } from 'pino';
import type { Handle } from '@sveltejs/kit';

/**
 * Structured logs (pino, one JSON object per line on stdout). Every line
 * written while a request is handled carries its `reqId` (the same id as the
 * `x-request-id` response header and the error page), because `log()` returns
 * that request's child logger through AsyncLocalStorage.
 *
 * Secrets never reach the log, by two independent means:
 * 1. pino's `redact` censors known secret-bearing fields by path;
 * 2. every finished line is scrubbed of the current secret *values*
 *    (AUTH_SECRET, the database password from DATABASE_URL, SMTP_PASSWORD) and of
 *    the patterns `Bearer <token>`, `postgres://user:<password>@` and
 *    `password=…`, whatever field or message they ended up in.
 */

export const CENSOR = '[Redacted]';

/** Field paths pino censors wherever they occur at these depths. */
export const REDACT_PATHS = [
	'authorization',
	'cookie',
	'password',
	'token',
	'secret',
	'AUTH_SECRET',
	'DATABASE_URL',
	'SMTP_PASSWORD',
	'*.authorization',
	'*.cookie',
	'*.password',
	'*.passwordHash',
	'*.token',
	'*.secret',
	'*.AUTH_SECRET',
	'*.DATABASE_URL',
	'*.SMTP_PASSWORD',
	'*.headers.authorization',
	'*.headers.cookie',
	'*.headers["set-cookie"]',
	'*.*.password',
	'*.*.token'
];

/** Query parameters whose values are never logged (sign-in links carry a token and an address). */
const SENSITIVE_QUERY = /token|password|secret|code|email|key|signature|state/i;

function secretValues(env: NodeJS.ProcessEnv): string[] {
	const values: string[] = [];
	const add = (v: string | undefined) => {
		// Very short values would censor ordinary words; real secrets here are ≥ 16 characters.
		if (v && v.length >= 8) values.push(v, encodeURIComponent(v));
	};
	add(env.AUTH_SECRET);
	add(env.SMTP_PASSWORD);
	add(env.SPANLINE_DB_PASSWORD);
	if (env.DATABASE_URL) {
		try {
			add(decodeURIComponent(new URL(env.DATABASE_URL).password));
		} catch {
			/* not a URL: nothing to extract */
		}
	}
	return [...new Set(values)].sort((a, b) => b.length - a.length);
}

function escapeRegExp(s: string): string {
	return s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
}

/** A function that removes secrets from one finished log line. */
export function makeScrubber(env: NodeJS.ProcessEnv = process.env): (line: string) => string {
	const values = secretValues(env);
	// JSON escapes some characters; scrub both the raw and the JSON-escaped forms.
	const forms = [...new Set(values.flatMap((v) => [v, JSON.stringify(v).slice(1, -1)]))];
	const exact = forms.length ? new RegExp(forms.map(escapeRegExp).join('|'), 'g') : null;
	return (line) => {
		let out = line
			.replace(/(Bearer\s+)[^\s"\\,;]+/gi, `$1${CENSOR}`)
			.replace(/(postgres(?:ql)?:\/\/[^:/@\s"]*:)[^@\s"]*@/gi, `$1${CENSOR}@`)
			.replace(/((?:password|passwd|pwd|secret|token)=)[^&\s"\\;]+/gi, `$1${CENSOR}`);
		if (exact) out = out.replace(exact, CENSOR);
		return out;
	};
}

/** Build a logger; tests pass their own destination to capture lines. */
export function createLogger(options: { destination?: DestinationStream; env?: NodeJS.ProcessEnv; level?: string } = {}): Logger {
	const env = options.env ?? process.env;
	const scrub = makeScrubber(env);
	const config: LoggerOptions = {
		level: options.level ?? env.LOG_LEVEL ?? 'info',
		base: { app: 'spanline', pid: process.pid },
		timestamp: pino.stdTimeFunctions.isoTime,
		redact: { paths: REDACT_PATHS, censor: CENSOR },
		serializers: { err: stdSerializers.err, error: stdSerializers.err },
		hooks: { streamWrite: scrub }
	};
	return options.destination ? pino(config, options.destination) : pino(config);
}

const root = createLogger();

/** What is kept per request while it is handled: its logger and its database statements. */
interface RequestScope {
	logger: Logger;
	queries: number;
	dbMs: number;
}
const current = new AsyncLocalStorage<RequestScope>();

/** The logger of the request being handled (with its reqId), or the process logger outside a request. */
export function log(): Logger {
	return current.getStore()?.logger ?? root;
}

/** Count one finished database statement against the request being handled (see db/config observeQueries). */
export function countQuery(ms: number): void {
	const scope = current.getStore();
	if (scope) {
		scope.queries++;
		scope.dbMs += ms;
	}
}

/**
 * Route folders whose next path segment is itself a secret: `/invite/<token>`
 * (src/routes/invite/[token]) carries the invitation token in the path, and
 * whoever holds it can set the invited person's password.
 */
const SECRET_SEGMENT_AFTER = new Set(['invite']);

/** An invitation path anywhere inside a (decoded) query value. */
const INVITE_IN_VALUE = /(\/invite\/+)[^/?#&\s]+/gi;

function decodeSegment(segment: string): string {
	try {
		return decodeURIComponent(segment);
	} catch {
		return segment;
	}
}

/**
 * The path with secret-bearing segments censored and everything else kept.
 * Segments are compared decoded and case-insensitively, because SvelteKit
 * decodes the path before matching routes (`/%69nvite/<token>` still reaches
 * the invitation page). Only the first non-empty segment is a route folder
 * here, so `/campaigns/invite` stays as it is.
 */
export function safePath(pathname: string): string {
	const parts = pathname.split('/');
	const first = parts.findIndex((p) => p !== '');
	if (first < 0 || !SECRET_SEGMENT_AFTER.has(decodeSegment(parts[first]).toLowerCase())) return pathname;
	// The next non-empty segment, so `/invite//<token>` is censored too.
	const secret = parts.findIndex((p, i) => i > first && p !== '');
	if (secret >= 0) parts[secret] = CENSOR;
	return parts.join('/');
}

/**
 * Path plus query, with secret path segments and the values of sensitive
 * parameters censored. A query value that holds an invitation path
 * (`?next=/invite/…`, or a whole link) has that token censored as well.
 */
export function safeUrl(url: URL): string {
	const path = safePath(url.pathname);
	if (!url.search) return path;
	const params = new URLSearchParams();
	for (const [k, v] of url.searchParams) {
		// An empty value (SvelteKit's `?/password` action names) has nothing to hide.
		if (v && SENSITIVE_QUERY.test(k)) params.append(k, CENSOR);
		else params.append(k, v.replace(INVITE_IN_VALUE, `$1${CENSOR}`).slice(0, 200));
	}
	return `${path}?${params.toString()}`;
}

/**
 * Handle: one `request` line per answered request (method, censored URL,
 * status, duration, user id) and the request's child logger for everything
 * logged while it runs. Place it after the handle that sets
 * `event.locals.requestId`, before the ones that may log.
 */
export function requestLogging(logger: Logger = root): Handle {
	return async ({ event, resolve }) => {
		const reqId = event.locals.requestId || event.request.headers.get('x-request-id')?.slice(0, 64) || randomUUID();
		const child = logger.child({ reqId });
		const started = performance.now();
		const scope: RequestScope = { logger: child, queries: 0, dbMs: 0 };
		return current.run(scope, async () => {
			try {
				const response = await resolve(event);
				const status = response.status;
				const line = {
					method: event.request.method,
					url: safeUrl(event.url),
					status,
					ms: Math.round((performance.now() - started) * 10) / 10,
					user: event.locals.user?.id ?? null,
					// Statements run for this request and their summed time: the first thing to read when a page is slow.
					db: { queries: scope.queries, ms: Math.round(scope.dbMs) }
				};
				if (status >= 500) child.warn(line, 'request failed');
				else child.info(line, 'request');
				return response;
			} catch (err) {
				// redirect()/error() thrown by a later handle are not failures; SvelteKit turns them into responses.
				const status = (err as { status?: number })?.status;
				child.info(
					{ method: event.request.method, url: safeUrl(event.url), status: status ?? 500, ms: Math.round(performance.now() - started) },
					status && status < 500 ? 'request' : 'request failed'
				);
				throw err;
			}
		});
	};
}

/** The request-logging handle on the process logger. */
export const logRequests: Handle = requestLogging();
