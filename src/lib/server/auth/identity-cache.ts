/**
 * Who a session or an API token belongs to, remembered in this process.
 *
 * Every request needs it, and under load each database round trip waits in
 * the event loop's queue again (bench:load: about 55 ms per round trip at 50
 * users), so asking PostgreSQL every time doubled the latency of most reads.
 * What is remembered is dropped the moment it may have changed: the
 * database announces every change of a person's role, activity, name or
 * address and of a token's revocation, expiry or owner on the channel
 * `spanline_auth` (migration 2026-12-02T0600, triggers), and this process
 * listens. While the listening connection is down nothing is remembered (every
 * request asks the database, as before), and after it reconnects everything is
 * forgotten, so a missed announcement cannot keep anyone in. Entries also
 * expire after TTL_MS. Unknown tokens and inactive people are never
 * remembered.
 */
import pg from 'pg';
import type { SessionUser } from './users';

export const CHANNEL = 'spanline_auth';
/** An entry is used at most this long, announcements or not. */
const TTL_MS = 30_000;
const MAX_ENTRIES = 10_000;
const RECONNECT_MS = 1_000;

interface TokenEntry {
	user: SessionUser;
	tokenId: string;
	expiresAt: number | null;
	lastUsedAt: number | null;
	until: number;
}

const people = new Map<string, { user: SessionUser; until: number }>();
const tokens = new Map<string, TokenEntry>();

let client: pg.Client | null = null;
let listening = false;
let stopped = false;
let timer: ReturnType<typeof setTimeout> | null = null;

function forgetAll(): void {
	people.clear();
	tokens.clear();
}

/** Drop everything remembered about one person (their session and their tokens). */
export function forgetPerson(userId: string): void {
	people.delete(userId);
	for (const [hash, e] of tokens) if (e.user.id === userId) tokens.delete(hash);
}

/** Whether the cache is in use (the announcement channel is being listened to). */
export function isListening(): boolean {
	return listening;
}

/** The person behind a session: remembered, or loaded (and remembered when active). */
export async function personById(id: string, load: (id: string) => Promise<SessionUser | null>, now = Date.now()): Promise<SessionUser | null> {
	if (listening) {
		const hit = people.get(id);
		if (hit && hit.until > now) return hit.user;
	}
	const user = await load(id);
	if (user && listening) {
		if (people.size >= MAX_ENTRIES) people.clear();
		people.set(id, { user, until: now + TTL_MS });
	}
	return user;
}

/** A remembered, still valid token by its hash, or null (then the caller asks the database). */
export function tokenByHash(hash: string, now = Date.now()): TokenEntry | null {
	if (!listening) return null;
	const hit = tokens.get(hash);
	if (!hit) return null;
	if (hit.until <= now || (hit.expiresAt !== null && hit.expiresAt <= now)) {
		tokens.delete(hash);
		return null;
	}
	return hit;
}

/** Remember a token the database has just accepted. */
export function rememberToken(hash: string, entry: Omit<TokenEntry, 'until'>, now = Date.now()): void {
	if (!listening) return;
	if (tokens.size >= MAX_ENTRIES) tokens.clear();
	tokens.set(hash, { ...entry, until: now + TTL_MS });
}

/** Start listening for announcements (once per process); reconnects by itself. */
export function startListening(connectionString: string | undefined): void {
	if (client || timer || !connectionString) return;
	stopped = false;
	const connect = () => {
		timer = null;
		if (stopped) return;
		const c = new pg.Client({ connectionString, connectionTimeoutMillis: 2000 });
		client = c;
		const lost = () => {
			if (client !== c) return;
			listening = false;
			forgetAll();
			client = null;
			c.end().catch(() => {});
			if (!stopped) timer = setTimeout(connect, RECONNECT_MS);
			timer?.unref?.();
		};
		c.on('error', lost);
		c.on('end', lost);
		c.on('notification', (n) => {
			if (n.channel === CHANNEL && n.payload) forgetPerson(n.payload);
		});
		c.connect()
			.then(() => c.query(`LISTEN ${CHANNEL}`))
			.then(() => {
				if (client !== c) return;
				// Announcements made while nobody listened are lost: start from nothing.
				forgetAll();
				listening = true;
				// The listening connection must not keep a finished process alive.
				(c as unknown as { connection?: { stream?: { unref?: () => void } } }).connection?.stream?.unref?.();
			})
			.catch(lost);
	};
	connect();
}

/** Stop listening and forget everything (graceful shutdown, tests). */
export async function stopListening(): Promise<void> {
	stopped = true;
	listening = false;
	forgetAll();
	if (timer) clearTimeout(timer);
	timer = null;
	const c = client;
	client = null;
	if (c) await c.end().catch(() => {});
}
