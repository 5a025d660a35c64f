/**
 * The authorization matrix: every route of the app (pages, form actions, API
 * methods) requested anonymously and as each role, with the status compared
 * against the one role table (src/lib/server/auth/roles.ts). The routes are
 * also enumerated from src/routes, so a new route without a row here fails
 * this test.
 *
 * To add a route: append a row to ROUTES with the capability its guard
 * checks. `ok` lists what a permitted caller may get (requests use unknown
 * ids and empty bodies, so permitted writes fail validation instead of
 * changing shared data); `expect` overrides single callers.
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative, sep } from 'node:path';
import pg from 'pg';
import { CAPABILITIES, ROLES, type Capability, type Role } from '../../src/lib/server/auth/roles';
import { Client, signedInAs } from '../support/session';

export type Caller = Role | 'anonymous';
export interface RouteCase {
	/** SvelteKit route id as in src/routes, e.g. '/(app)/campaigns/[id=id]'. */
	route: string;
	/** HTTP method for API rows, 'GET' for pages, or '?/<action>' for a form action ('?/default' for the default one). */
	method: string;
	kind: 'page' | 'action' | 'api';
	/** The path to request; `{campaign}`, `{run}` and `{configuration}` become seeded ids. */
	path: string;
	/** The capability the route's guard checks, or 'public'. */
	capability: Capability | 'public';
	/** Statuses a permitted caller may get (default: 200 for pages and GET, 400 for writes with an empty body). */
	ok?: number[];
	/** Exact status for particular callers, overriding the table. */
	expect?: Partial<Record<Caller, number>>;
	/** JSON body for API writes (default: {}). */
	body?: unknown;
	/** Ends the session (sign-out): requested last, with a session of its own. */
	endsSession?: boolean;
}

const NONE = '999999999';
const NIL_UUID = '00000000-0000-0000-0000-000000000000';

// prettier-ignore
export const ROUTES: RouteCase[] = [
	// Public pages and actions
	{ route: '/signin', method: 'GET', kind: 'page', path: '/signin', capability: 'public', ok: [200], expect: { admin: 303, test_engineer: 303, aerodynamicist: 303, program_manager: 303 } },
	// Signed in, the refused form's page sends the person on instead of showing the form again.
	{ route: '/signin', method: '?/password', kind: 'action', path: '/signin?/password', capability: 'public', ok: [400], expect: { admin: 303, test_engineer: 303, aerodynamicist: 303, program_manager: 303 } },
	{ route: '/signin', method: '?/link', kind: 'action', path: '/signin?/link', capability: 'public', ok: [400], expect: { admin: 303, test_engineer: 303, aerodynamicist: 303, program_manager: 303 } },
	{ route: '/signin/check-mail', method: 'GET', kind: 'page', path: '/signin/check-mail', capability: 'public', ok: [200] },
	{ route: '/signout', method: 'GET', kind: 'page', path: '/signout', capability: 'public', ok: [200], expect: { anonymous: 303 } },
	{ route: '/signout', method: '?/default', kind: 'action', path: '/signout', capability: 'public', ok: [302], endsSession: true },
	{ route: '/invite/[token]', method: 'GET', kind: 'page', path: '/invite/not-a-real-invitation', capability: 'public', ok: [200] },
	{ route: '/invite/[token]', method: '?/default', kind: 'action', path: '/invite/not-a-real-invitation', capability: 'public', ok: [400] },
	{ route: '/api/v1/health', method: 'GET', kind: 'api', path: '/api/v1/health', capability: 'public', ok: [200] },

	// Pages of the signed-in app
	{ route: '/(app)', method: 'GET', kind: 'page', path: '/', capability: 'read' },
	{ route: '/(app)/campaigns/[id=id]', method: 'GET', kind: 'page', path: '/campaigns/{campaign}', capability: 'read' },
	{ route: '/(app)/campaigns/[id=id]/upload', method: 'GET', kind: 'page', path: '/campaigns/{campaign}/upload', capability: 'importRuns' },
	{ route: '/(app)/campaigns/[id=id]/summary', method: 'GET', kind: 'page', path: '/campaigns/{campaign}/summary', capability: 'read' },
	{ route: '/(app)/campaigns/[id=id]/report', method: 'GET', kind: 'page', path: '/campaigns/{campaign}/report', capability: 'read' },
	{ route: '/(app)/account/notifications', method: 'GET', kind: 'page', path: '/account/notifications', capability: 'ownAccount' },
	{ route: '/(app)/account/notifications', method: '?/default', kind: 'action', path: '/account/notifications', capability: 'ownAccount' },
	{ route: '/(app)/campaigns/[id=id]/calibration', method: 'GET', kind: 'page', path: '/campaigns/{campaign}/calibration', capability: 'read' },
	{ route: '/(app)/runs/[id=id]', method: 'GET', kind: 'page', path: '/runs/{run}', capability: 'read' },
	{ route: '/(app)/compare', method: 'GET', kind: 'page', path: '/compare', capability: 'read' },
	{ route: '/(app)/configurations', method: 'GET', kind: 'page', path: '/configurations', capability: 'read' },
	{ route: '/(app)/configurations/new', method: 'GET', kind: 'page', path: '/configurations/new', capability: 'editModels' },
	{ route: '/(app)/configurations/new', method: '?/save', kind: 'action', path: '/configurations/new?/save', capability: 'editModels' },
	{ route: '/(app)/configurations/[id=id]', method: 'GET', kind: 'page', path: '/configurations/{configuration}', capability: 'read' },
	{ route: '/(app)/configurations/[id=id]', method: '?/save', kind: 'action', path: '/configurations/{configuration}?/save', capability: 'editModels', ok: [400, 404] },
	{ route: '/(app)/configurations/[id=id]', method: '?/duplicate', kind: 'action', path: `/configurations/${NONE}?/duplicate`, capability: 'editModels', ok: [400, 404] },
	{ route: '/(app)/account', method: 'GET', kind: 'page', path: '/account', capability: 'ownAccount' },
	{ route: '/(app)/account', method: '?/profile', kind: 'action', path: '/account?/profile', capability: 'ownAccount' },
	{ route: '/(app)/account', method: '?/createToken', kind: 'action', path: '/account?/createToken', capability: 'ownAccount' },
	{ route: '/(app)/account', method: '?/revokeToken', kind: 'action', path: '/account?/revokeToken', capability: 'ownAccount', ok: [404] },
	{ route: '/(app)/admin', method: 'GET', kind: 'page', path: '/admin', capability: 'administer', ok: [303] },
	{ route: '/(app)/admin/people', method: 'GET', kind: 'page', path: '/admin/people', capability: 'administer' },
	{ route: '/(app)/admin/people', method: '?/invite', kind: 'action', path: '/admin/people?/invite', capability: 'administer' },
	{ route: '/(app)/admin/people', method: '?/update', kind: 'action', path: '/admin/people?/update', capability: 'administer' },
	{ route: '/(app)/admin/tokens', method: 'GET', kind: 'page', path: '/admin/tokens', capability: 'administer' },
	{ route: '/(app)/admin/tokens', method: '?/create', kind: 'action', path: '/admin/tokens?/create', capability: 'administer' },
	{ route: '/(app)/admin/tokens', method: '?/revoke', kind: 'action', path: '/admin/tokens?/revoke', capability: 'administer', ok: [404] },
	{ route: '/(app)/admin/audit', method: 'GET', kind: 'page', path: '/admin/audit', capability: 'administer' },
	{ route: '/(app)/admin/mail', method: 'GET', kind: 'page', path: '/admin/mail', capability: 'administer' },

	// API
	{ route: '/api/v1/me', method: 'GET', kind: 'api', path: '/api/v1/me', capability: 'ownAccount' },
	{ route: '/api/v1/me', method: 'PATCH', kind: 'api', path: '/api/v1/me', capability: 'ownAccount' },
	{ route: '/api/v1/tokens', method: 'GET', kind: 'api', path: '/api/v1/tokens', capability: 'ownAccount' },
	{ route: '/api/v1/tokens', method: 'POST', kind: 'api', path: '/api/v1/tokens', capability: 'ownAccount' },
	{ route: '/api/v1/tokens/[id]', method: 'DELETE', kind: 'api', path: `/api/v1/tokens/${NONE}`, capability: 'ownAccount', ok: [404] },
	{ route: '/api/v1/people', method: 'GET', kind: 'api', path: '/api/v1/people', capability: 'administer' },
	{ route: '/api/v1/people', method: 'POST', kind: 'api', path: '/api/v1/people', capability: 'administer' },
	{ route: '/api/v1/people/[id]', method: 'GET', kind: 'api', path: `/api/v1/people/${NIL_UUID}`, capability: 'administer', ok: [404] },
	{ route: '/api/v1/people/[id]', method: 'PATCH', kind: 'api', path: `/api/v1/people/${NIL_UUID}`, capability: 'administer', ok: [400, 404] },
	{ route: '/api/v1/campaigns', method: 'GET', kind: 'api', path: '/api/v1/campaigns', capability: 'read' },
	{ route: '/api/v1/campaigns/[id=id]', method: 'GET', kind: 'api', path: '/api/v1/campaigns/{campaign}', capability: 'read' },
	{ route: '/api/v1/campaigns/[id=id]/summary', method: 'GET', kind: 'api', path: '/api/v1/campaigns/{campaign}/summary', capability: 'read' },
	{ route: '/api/v1/campaigns/[id=id]/summary/digest', method: 'POST', kind: 'api', path: `/api/v1/campaigns/${NONE}/summary/digest`, capability: 'read', ok: [404] },
	{ route: '/api/v1/campaigns/[id=id]/export', method: 'GET', kind: 'api', path: '/api/v1/campaigns/{campaign}/export?format=csv&table=runs', capability: 'read' },
	{ route: '/api/v1/runs/[id=id]/export', method: 'GET', kind: 'api', path: '/api/v1/runs/{run}/export?format=csv&table=points', capability: 'read', ok: [200, 404] },
	{ route: '/api/v1/campaigns/[id=id]/runs', method: 'GET', kind: 'api', path: '/api/v1/campaigns/{campaign}/runs', capability: 'read' },
	{ route: '/api/v1/campaigns/[id=id]/runs', method: 'POST', kind: 'api', path: `/api/v1/campaigns/${NONE}/runs`, capability: 'importRuns', ok: [400, 404, 415] },
	{ route: '/api/v1/campaigns/[id=id]/runs/preview', method: 'POST', kind: 'api', path: `/api/v1/campaigns/${NONE}/runs/preview`, capability: 'importRuns', ok: [400, 404, 415] },
	{ route: '/api/v1/facilities/[id=id]/mapping-profiles', method: 'GET', kind: 'api', path: `/api/v1/facilities/${NONE}/mapping-profiles`, capability: 'read', ok: [200, 404] },
	{ route: '/api/v1/facilities/[id=id]/mapping-profiles', method: 'POST', kind: 'api', path: `/api/v1/facilities/${NONE}/mapping-profiles`, capability: 'importRuns', ok: [400, 404] },
	{ route: '/api/v1/runs/[id=id]', method: 'GET', kind: 'api', path: '/api/v1/runs/{run}', capability: 'read' },
	{ route: '/api/v1/runs/[id=id]/files/[fileId=id]', method: 'GET', kind: 'api', path: `/api/v1/runs/${NONE}/files/${NONE}`, capability: 'read', ok: [404] },
	{ route: '/api/v1/runs/[id=id]/points', method: 'GET', kind: 'api', path: '/api/v1/runs/{run}/points', capability: 'read', ok: [200, 404] },
	{ route: '/api/v1/runs/[id=id]/reductions', method: 'POST', kind: 'api', path: `/api/v1/runs/${NONE}/reductions`, capability: 'editRuns', ok: [400, 404] },
	// Which state changes a role may make is decided inside (sign-off needs signOff); the door is 'read'.
	{ route: '/api/v1/runs/[id=id]/state', method: 'POST', kind: 'api', path: `/api/v1/runs/${NONE}/state`, capability: 'read', ok: [400, 403, 404] },
	{ route: '/api/v1/configurations', method: 'GET', kind: 'api', path: '/api/v1/configurations', capability: 'read' },
	{ route: '/api/v1/configurations', method: 'POST', kind: 'api', path: '/api/v1/configurations', capability: 'editModels' },
	{ route: '/api/v1/configurations/[id=id]', method: 'GET', kind: 'api', path: `/api/v1/configurations/${NONE}`, capability: 'read', ok: [404] },
	{ route: '/api/v1/configurations/[id=id]/duplicate', method: 'POST', kind: 'api', path: `/api/v1/configurations/${NONE}/duplicate`, capability: 'editModels', ok: [400, 404] },
	{ route: '/api/v1/configurations/[id=id]/versions', method: 'POST', kind: 'api', path: `/api/v1/configurations/${NONE}/versions`, capability: 'editModels', ok: [400, 404] },
	{ route: '/api/v1/correlation/calibrations/[id=id]', method: 'GET', kind: 'api', path: `/api/v1/correlation/calibrations/${NONE}`, capability: 'read', ok: [404] },
	{ route: '/api/v1/correlation/campaigns/[id=id]/calibration', method: 'GET', kind: 'api', path: `/api/v1/correlation/campaigns/${NONE}/calibration`, capability: 'read', ok: [200, 404] },
	{ route: '/api/v1/correlation/campaigns/[id=id]/calibration', method: 'POST', kind: 'api', path: `/api/v1/correlation/campaigns/${NONE}/calibration`, capability: 'editModels', ok: [400, 404] },
	{ route: '/api/v1/correlation/campaigns/[id=id]/deltas', method: 'GET', kind: 'api', path: `/api/v1/correlation/campaigns/${NONE}/deltas`, capability: 'read', ok: [200, 404] },
	{ route: '/api/v1/correlation/predictions/[id=id]', method: 'GET', kind: 'api', path: `/api/v1/correlation/predictions/${NONE}`, capability: 'read', ok: [404] },
	{ route: '/api/v1/correlation/runs/[id=id]', method: 'GET', kind: 'api', path: `/api/v1/correlation/runs/${NONE}`, capability: 'read', ok: [200, 404] },
	{ route: '/api/v1/correlation/runs/[id=id]/predict', method: 'POST', kind: 'api', path: `/api/v1/correlation/runs/${NONE}/predict`, capability: 'editModels', ok: [400, 404] },
	{ route: '/api/v1/correlation/runs/[id=id]/predictions', method: 'GET', kind: 'api', path: `/api/v1/correlation/runs/${NONE}/predictions`, capability: 'read', ok: [200, 404] }
];

export const CALLERS: Caller[] = ['anonymous', ...ROLES];

/** The status the role table predicts for one caller of one route. */
export function expectedStatuses(row: RouteCase, caller: Caller): number[] {
	const exact = row.expect?.[caller];
	if (exact !== undefined) return [exact];
	const write = row.kind === 'action' || (row.kind === 'api' && row.method !== 'GET');
	const ok = row.ok ?? [write ? 400 : 200];
	if (row.capability === 'public') return ok;
	if (caller === 'anonymous') return [row.kind === 'api' ? 401 : 303];
	return (CAPABILITIES[row.capability] as readonly Role[]).includes(caller) ? ok : [403];
}

/** Send one row's request with a client (cookies for roles, none for anonymous). */
export async function requestRow(client: Client, row: RouteCase, ids: Record<string, string>): Promise<Response> {
	const path = row.path.replace(/\{(\w+)\}/g, (_, k: string) => ids[k] ?? NONE);
	if (row.kind === 'page') return client.get(path, { accept: 'text/html' });
	if (row.kind === 'action') return client.form(path, {});
	return client.json(row.method, path, row.method === 'GET' ? undefined : (row.body ?? {}));
}

// ------------------------------------------------------------ enumeration

const ROUTES_DIR = join(process.cwd(), 'src', 'routes');
const METHODS = ['GET', 'POST', 'PUT', 'PATCH', 'DELETE'];

function walk(dir: string): string[] {
	return readdirSync(dir).flatMap((name) => {
		const full = join(dir, name);
		return statSync(full).isDirectory() ? walk(full) : [full];
	});
}

/** Every page, form action and API method under src/routes, as 'route method' keys. */
export function discoverRoutes(): string[] {
	const keys = new Set<string>();
	for (const file of walk(ROUTES_DIR)) {
		const name = file.split(sep).pop()!;
		const route = '/' + relative(ROUTES_DIR, join(file, '..')).split(sep).join('/');
		const id = route === '/' ? '/' : route.replace(/\/$/, '');
		const text = readFileSync(file, 'utf8');
		if (name === '+page.svelte') keys.add(`${id} GET`);
		if ((name === '+page.server.ts' || name === '+page.ts') && /export\s+const\s+load\b/.test(text)) keys.add(`${id} GET`);
		if (name === '+server.ts' || name === '+server.js') {
			for (const m of METHODS) {
				if (new RegExp(`export\\s+(const|async\\s+function|function)\\s+${m}\\b`).test(text)) keys.add(`${id} ${m}`);
			}
		}
		if (name === '+page.server.ts' || name === '+page.server.js') {
			const block = text.split(/export\s+const\s+actions\b/)[1];
			if (block) {
				for (const m of block.matchAll(/^\t([A-Za-z_]\w*)\s*:\s*async/gm)) keys.add(`${id} ?/${m[1]}`);
			}
		}
	}
	return [...keys].sort();
}

// ------------------------------------------------------------ the test

describe('authorization matrix', () => {
	const clients = new Map<Caller, Client>();
	const ids: Record<string, string> = {};

	beforeAll(async () => {
		clients.set('anonymous', new Client());
		for (const role of ROLES) clients.set(role, await signedInAs(role));
		const db = new pg.Client({ connectionString: process.env.DATABASE_URL });
		await db.connect();
		try {
			ids.campaign = String((await db.query('SELECT min(id) AS id FROM campaigns')).rows[0].id ?? NONE);
			ids.run = String((await db.query('SELECT min(id) AS id FROM runs')).rows[0].id ?? NONE);
			ids.configuration = String((await db.query('SELECT min(id) AS id FROM configurations')).rows[0].id ?? NONE);
		} finally {
			await db.end();
		}
	});

	it('has a row for every page, action and API method in src/routes', () => {
		const covered = new Set(ROUTES.map((r) => `${r.route} ${r.method}`));
		const missing = discoverRoutes().filter((k) => !covered.has(k));
		expect(missing, 'routes without a row in tests/integration/auth-matrix.test.ts').toEqual([]);
		const stale = [...covered].filter((k) => !discoverRoutes().includes(k));
		expect(stale, 'rows for routes that no longer exist').toEqual([]);
	});

	it.each(CALLERS)('answers %s as the role table says', async (caller) => {
		const rows = [...ROUTES.filter((r) => !r.endsSession), ...ROUTES.filter((r) => r.endsSession)];
		const wrong: string[] = [];
		for (const row of rows) {
			// A sign-out ends the session: give it one of its own.
			const client = row.endsSession && caller !== 'anonymous' ? await signedInAs(caller) : clients.get(caller)!;
			const res = await requestRow(client, row, ids);
			const want = expectedStatuses(row, caller);
			if (!want.includes(res.status)) wrong.push(`${row.method} ${row.path}: got ${res.status}, want ${want.join(' or ')}`);
			if (res.status === 303 && caller === 'anonymous' && row.capability !== 'public') {
				const to = res.headers.get('location') ?? '';
				if (!to.startsWith('/signin')) wrong.push(`${row.method} ${row.path}: redirected to ${to}, not to sign-in`);
			}
			if (row.kind === 'api' && (res.status === 401 || res.status === 403)) {
				const body = await res.json();
				if (body?.error?.code !== (res.status === 401 ? 'unauthenticated' : 'forbidden')) {
					wrong.push(`${row.method} ${row.path}: error body ${JSON.stringify(body)}`);
				}
			}
			await res.body?.cancel().catch(() => {});
		}
		expect(wrong).toEqual([]);
	});
});
