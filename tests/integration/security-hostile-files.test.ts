// The hostile corpus (tests/support/hostile-corpus.ts, ≥ 200 broken or
// malicious run files) through the real import API, POST
// /api/v1/campaigns/{id}/runs, of an instance of the production build that
// this test starts itself (so it can read the server's memory from
// /proc/<pid>/status). Every case must be refused with a 4xx and a clear
// message, none may get a 5xx, the server must stay up with bounded memory,
// and the campaign's rows (runs, files, samples, reductions, points) must be
// unchanged. A valid upload at the end proves the refusals came from the
// importer, not from a route that refuses everything.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import { once } from 'node:events';
import http from 'node:http';
import { closeSync, mkdirSync, openSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import pg from 'pg';
import { projectRoot } from '../../scripts/lib/env.mjs';
import { DEMO_ACCOUNTS } from '../../src/lib/server/db/seed-data';
import { baseCsv, hostileCorpus, type HostileCase } from '../support/hostile-corpus';

const port = 3500 + Math.floor(Math.random() * 200);
const origin = `http://127.0.0.1:${port}`;
// Outside test-results/, which the next `npm test` empties.
const logPath = join(projectRoot, '.data', 'test-logs', `hostile-files-server-${port}.log`);
const tag = Date.now().toString(36);
const MB = 1024 * 1024;

let server: ChildProcess;
let db: pg.Client;
let token = '';
let campaignId = 0;
let configurationId = 0;

function memory(pid: number): { rss: number; peak: number } {
	const s = readFileSync(`/proc/${pid}/status`, 'utf8');
	const kb = (k: string) => Number(new RegExp(`^${k}:\\s+(\\d+) kB`, 'm').exec(s)?.[1] ?? NaN) * 1024;
	return { rss: kb('VmRSS'), peak: kb('VmHWM') };
}

async function campaignRows(): Promise<Record<string, number>> {
	const { rows } = await db.query(
		`SELECT (SELECT count(*) FROM runs WHERE campaign_id = $1)::int AS runs,
		        (SELECT count(*) FROM source_files f JOIN runs r ON r.id = f.run_id WHERE r.campaign_id = $1)::int AS source_files,
		        (SELECT count(*) FROM samples s JOIN runs r ON r.id = s.run_id WHERE r.campaign_id = $1)::int AS samples,
		        (SELECT count(*) FROM reductions x JOIN runs r ON r.id = x.run_id WHERE r.campaign_id = $1)::int AS reductions,
		        (SELECT count(*) FROM points p JOIN reductions x ON x.id = p.reduction_id JOIN runs r ON r.id = x.run_id WHERE r.campaign_id = $1)::int AS points,
		        (SELECT count(*) FROM samples WHERE run_id NOT IN (SELECT id FROM runs))::int AS orphan_samples`,
		[campaignId]
	);
	return rows[0];
}

function upload(c: Pick<HostileCase, 'fileName' | 'body' | 'query' | 'headers'>, runNumber: string) {
	// A run number per case: a case wrongly accepted must not make the next ones fail for "run 7 exists".
	const query = new URLSearchParams({ name: c.fileName, configurationId: String(configurationId), runNumber, ...(c.query ?? {}) });
	return fetch(`${origin}/api/v1/campaigns/${campaignId}/runs?${query}`, {
		method: 'POST',
		body: new Uint8Array(c.body),
		headers: { authorization: `Bearer ${token}`, 'content-type': 'application/octet-stream', ...(c.headers ?? {}) },
		signal: AbortSignal.timeout(60_000)
	});
}

/**
 * The same upload through node:http, which — unlike fetch — still reads an
 * answer the server sends before it has read the whole body (an early 413).
 */
function uploadRaw(c: Pick<HostileCase, 'fileName' | 'body' | 'query' | 'headers'>, runNumber: string): Promise<{ status: number; text: string }> {
	const query = new URLSearchParams({ name: c.fileName, configurationId: String(configurationId), runNumber, ...(c.query ?? {}) });
	return new Promise((resolve, reject) => {
		const req = http.request(
			`${origin}/api/v1/campaigns/${campaignId}/runs?${query}`,
			{ method: 'POST', headers: { authorization: `Bearer ${token}`, 'content-type': 'application/octet-stream', 'content-length': c.body.length, ...(c.headers ?? {}) } },
			(res) => {
				let text = '';
				res.setEncoding('utf8');
				res.on('data', (d) => (text += d));
				res.on('end', () => resolve({ status: res.statusCode ?? 0, text }));
			}
		);
		req.on('error', (e) => setTimeout(() => reject(e), 500));
		req.setTimeout(60_000, () => req.destroy(new Error('timeout')));
		req.end(c.body);
	});
}

beforeAll(async () => {
	mkdirSync(join(projectRoot, '.data', 'test-logs'), { recursive: true });
	const fd = openSync(logPath, 'w');
	server = spawn('node', ['build'], {
		cwd: projectRoot,
		env: { ...process.env, PORT: String(port), HOST: '127.0.0.1', ORIGIN: origin },
		stdio: ['ignore', fd, fd]
	});
	closeSync(fd);
	for (const until = Date.now() + 30_000; ; ) {
		try {
			if ((await fetch(`${origin}/api/v1/health`)).ok) break;
		} catch {
			/* not yet listening */
		}
		if (Date.now() > until) throw new Error(`own server did not start; see ${logPath}`);
		await new Promise((r) => setTimeout(r, 200));
	}

	// Our own facility, campaign and configuration (invented), so the row counts are ours alone.
	db = new pg.Client({ connectionString: process.env.DATABASE_URL });
	await db.connect();
	const facility = await db.query(
		`INSERT INTO facilities (name, code, kind, test_section, corrections) VALUES ($1, $2, 'closed_jet', $3, $4) RETURNING id`,
		[`Hostile-input tunnel ${tag}`, `HIT-${tag}`, JSON.stringify({ shape: 'rectangular', widthM: 1.2, heightM: 0.9, areaM2: 1.08 }), JSON.stringify({ delta: 0.12, tau2: 0.11, wakeMethod: 'thom' })]
	);
	const campaign = await db.query(`INSERT INTO campaigns (code, name, kind, facility_id, status) VALUES ($1, 'Hostile-input campaign', 'tunnel', $2, 'active') RETURNING id`, [
		`HI-${tag}`,
		facility.rows[0].id
	]);
	campaignId = Number(campaign.rows[0].id);
	const config = await db.query(
		`INSERT INTO configurations (campaign_id, name, geometry, ref_area, ref_span, ref_chord) VALUES ($1, 'HI half-wing', $2, 0.18, 1.2, 0.15) RETURNING id`,
		[campaignId, JSON.stringify({ span: 1.2, stations: [], segments: [] })]
	);
	configurationId = Number(config.rows[0].id);

	// A test engineer signs in through the real form and issues an API token, as a data system would get one.
	const engineer = DEMO_ACCOUNTS.find((a) => a.role === 'test_engineer')!;
	const signIn = await fetch(`${origin}/signin?/password`, {
		method: 'POST',
		redirect: 'manual',
		headers: { 'content-type': 'application/x-www-form-urlencoded', origin, accept: 'text/html', 'x-forwarded-for': `198.18.0.${1 + Math.floor(Math.random() * 250)}` },
		body: new URLSearchParams({ email: engineer.email, password: engineer.password, next: '/' })
	});
	const cookie = signIn.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ');
	const created = await fetch(`${origin}/api/v1/tokens`, {
		method: 'POST',
		headers: { cookie, origin, 'content-type': 'application/json' },
		body: JSON.stringify({ name: `hostile corpus ${tag}` })
	});
	expect(created.status).toBe(201);
	token = (await created.json()).token;
});

afterAll(async () => {
	await db?.end();
	if (server && server.exitCode === null) {
		server.kill('SIGTERM');
		await once(server, 'exit');
	}
});

describe('hostile and broken files through the import API', () => {
	const corpus = hostileCorpus();

	it(`the corpus has at least 200 cases across every family of the issue (${corpus.length})`, () => {
		expect(corpus.length).toBeGreaterThanOrEqual(200);
		const families = new Set(corpus.map((c) => c.family));
		for (const f of ['csv-truncated-row', 'csv-bitflip', 'xlsx-truncated', 'xlsx-bitflip', 'zip-bomb', 'wide', 'long-line', 'proto-headers', 'encoding', 'csv-nul', 'formula', 'huge-ref']) {
			expect(families.has(f), f).toBe(true);
		}
		expect(new Set(corpus.map((c) => c.id)).size).toBe(corpus.length);
	});

	it('every case is refused with a 4xx and a clear JSON message; no 5xx; the server stays up; memory stays bounded; no rows change', async () => {
		const before = await campaignRows();
		const memStart = memory(server.pid!);
		const failures: string[] = [];
		const statuses = new Map<number, number>();
		const earlyAnswers: string[] = [];
		let slowest = { id: '', ms: 0 };
		for (const [i, c] of corpus.entries()) {
			const t0 = performance.now();
			let status = 0;
			let text = '';
			try {
				const res = await upload(c, `HI-${i}`);
				status = res.status;
				text = await res.text();
			} catch (err) {
				// Node's fetch gives up when the server answers before reading the whole body;
				// ask again with node:http, which reads that early answer.
				try {
					({ status, text } = await uploadRaw(c, `HI-${i}-raw`));
					earlyAnswers.push(`${c.id} (${status})`);
				} catch (raw) {
					failures.push(`${c.id}: request failed (${(err as Error).message}; node:http: ${(raw as Error).message}) — did the server go down?`);
					if (server.exitCode !== null) break;
					continue;
				}
			}
			const ms = performance.now() - t0;
			if (ms > slowest.ms) slowest = { id: c.id, ms };
			statuses.set(status, (statuses.get(status) ?? 0) + 1);
			let body: { error?: { code?: string; message?: string } } = {};
			try {
				body = JSON.parse(text);
			} catch {
				/* checked below */
			}
			const msg = body.error?.message ?? '';
			// 431: Node's HTTP parser refuses a header over its 16 KiB limit before the app runs (no body).
			if (status === 431 && c.family === 'mapping-header') continue;
			if (status >= 500) {
				const reqId = /"requestId":"([^"]+)"/.exec(text)?.[1];
				const logged = reqId ? readFileSync(logPath, 'utf8').split('\n').filter((l) => l.includes(reqId) && !l.includes('"msg":"request')) : [];
				failures.push(`${c.id}: HTTP ${status} ${text.slice(0, 200)}${logged.length ? `\n    server: ${logged.join(' | ').slice(0, 400)}` : ''}`);
			} else if (status < 400) failures.push(`${c.id}: HTTP ${status} ${text.slice(0, 200)}`);
			else if ([401, 403, 404, 405].includes(status)) failures.push(`${c.id}: HTTP ${status} is not an import refusal: ${text.slice(0, 200)}`);
			else if (!body.error?.code || msg.length < 12) failures.push(`${c.id}: HTTP ${status} without a clear JSON message: ${text.slice(0, 200)}`);
			else if (/internal|undefined|\[object|TypeError|stack/i.test(msg)) failures.push(`${c.id}: HTTP ${status} message leaks internals: ${msg}`);
			if (i % 25 === 24) {
				const h = await fetch(`${origin}/api/v1/health`).catch(() => null);
				if (!h?.ok) failures.push(`after ${c.id}: health check failed (${h?.status ?? 'no answer'})`);
			}
		}
		const memEnd = memory(server.pid!);
		const after = await campaignRows();
		console.log(
			`hostile corpus: ${corpus.length} cases; statuses ${JSON.stringify(Object.fromEntries(statuses))}; slowest ${slowest.id} ${slowest.ms.toFixed(0)} ms; ` +
				`server RSS ${(memStart.rss / MB).toFixed(0)} → ${(memEnd.rss / MB).toFixed(0)} MB, peak ${(memEnd.peak / MB).toFixed(0)} MB` +
				(earlyAnswers.length ? `; answered before the body was read (fetch saw a network error): ${earlyAnswers.join(', ')}` : '')
		);
		expect(failures, failures.join('\n')).toEqual([]);
		expect(server.exitCode).toBeNull();
		expect((await fetch(`${origin}/api/v1/health`)).status).toBe(200);
		// Bounded: spreadsheets are parsed in a worker with resource limits; the
		// main process must not keep what the bombs inflated (limits are ours, generous
		// against a 64 MiB bomb: peak under 1 GiB, settled RSS within 300 MB of the start).
		expect(memEnd.peak).toBeLessThan(1024 * MB);
		expect(memEnd.rss - memStart.rss).toBeLessThan(300 * MB);
		expect(after).toEqual(before);
		expect(after.orphan_samples).toBe(0);
	});

	it('the same route accepts a valid file afterwards (so the refusals were the importer’s)', async () => {
		const before = await campaignRows();
		// 22 rows: not byte-identical to any corpus case built from the 21-row base, so no duplicate_file.
		const res = await upload({ fileName: 'valid-after-hostile.csv', body: baseCsv(22) }, 'HI-valid');
		const text = await res.text();
		expect(res.status, text).toBe(201);
		const after = await campaignRows();
		expect(after.runs).toBe(before.runs + 1);
		expect(after.samples).toBe(before.samples + 22);
		expect(server.exitCode).toBeNull();
	});
});
