// scripts/serve.mjs, the way `npm start` serves the build: a supervising
// primary with worker processes. Against an instance this test starts itself
// (same build and test database as `npm test`'s server): both workers answer,
// a killed worker is replaced while the app keeps answering, and SIGTERM ends
// the workers and then the primary with exit code 0.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import { once } from 'node:events';
import { closeSync, mkdirSync, openSync, readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { projectRoot } from '../../scripts/lib/env.mjs';

const port = 4400 + Math.floor(Math.random() * 100);
const origin = `http://127.0.0.1:${port}`;
const logPath = join(projectRoot, '.data', 'test-logs', `serve-cluster-${port}.log`);
let primary: ChildProcess;

/** Live child processes of a pid, from /proc. */
function childrenOf(pid: number): number[] {
	const out: number[] = [];
	for (const d of readdirSync('/proc').filter((x) => /^\d+$/.test(x))) {
		try {
			const stat = readFileSync(`/proc/${d}/stat`, 'utf8').split(') ')[1].split(' ');
			if (Number(stat[1]) === pid && stat[0] !== 'Z') out.push(Number(d));
		} catch {
			/* ended meanwhile */
		}
	}
	return out.sort();
}

/** Process ids that wrote `request` lines for /api/v1/health since `from` (byte offset in the log). */
function answeringPids(from: number): Set<number> {
	const text = readFileSync(logPath, 'utf8').slice(from);
	const pids = new Set<number>();
	for (const line of text.split('\n')) {
		if (!line.startsWith('{')) continue;
		const j = JSON.parse(line) as { msg?: string; url?: string; pid?: number };
		if (j.msg === 'request' && j.url === '/api/v1/health' && j.pid) pids.add(j.pid);
	}
	return pids;
}

async function until<T>(what: string, fn: () => T | undefined | false, ms = 20_000): Promise<T> {
	for (const end = Date.now() + ms; ; ) {
		const v = fn();
		if (v) return v;
		if (Date.now() > end) throw new Error(`${what} did not happen within ${ms} ms; see ${logPath}`);
		await new Promise((r) => setTimeout(r, 100));
	}
}

async function healthy(): Promise<boolean> {
	try {
		// A fresh connection each time (a kept-alive one may belong to a killed worker), and a bound on the wait.
		const r = await fetch(`${origin}/api/v1/health`, { headers: { connection: 'close' }, signal: AbortSignal.timeout(3_000) });
		await r.arrayBuffer();
		return r.ok;
	} catch {
		return false;
	}
}

beforeAll(async () => {
	mkdirSync(join(projectRoot, '.data', 'test-logs'), { recursive: true });
	const fd = openSync(logPath, 'w');
	primary = spawn('node', ['scripts/serve.mjs', 'build'], {
		cwd: projectRoot,
		env: { ...process.env, PORT: String(port), HOST: '127.0.0.1', ORIGIN: origin, SPANLINE_WORKERS: '2' },
		stdio: ['ignore', fd, fd]
	});
	closeSync(fd);
	for (const end = Date.now() + 30_000; !(await healthy()); ) {
		if (primary.exitCode !== null) throw new Error(`serve.mjs exited with ${primary.exitCode}: ${readFileSync(logPath, 'utf8').slice(-2000)}`);
		if (Date.now() > end) throw new Error(`serve.mjs did not start; see ${logPath}`);
		await new Promise((r) => setTimeout(r, 200));
	}
});

afterAll(async () => {
	if (primary && primary.exitCode === null) {
		primary.kill('SIGKILL');
		for (const pid of childrenOf(primary.pid!)) process.kill(pid, 'SIGKILL');
	}
});

describe('scripts/serve.mjs (supervisor and workers)', () => {
	it('runs two workers under the primary, and both answer requests', async () => {
		const workers = await until('two workers', () => childrenOf(primary.pid!).length === 2 && childrenOf(primary.pid!));
		const from = readFileSync(logPath, 'utf8').length;
		// The primary hands connections out round-robin: fresh connections reach both workers.
		for (let i = 0; i < 40; i++) {
			const r = await fetch(`${origin}/api/v1/health`, { headers: { connection: 'close' } });
			expect(r.status).toBe(200);
			await r.arrayBuffer();
		}
		const pids = await until('log lines from both workers', () => {
			const p = answeringPids(from);
			return p.size === 2 && p;
		});
		expect([...pids].sort()).toEqual(workers);
	});

	it('replaces a worker that is killed, and keeps answering meanwhile', async () => {
		const before = childrenOf(primary.pid!);
		process.kill(before[0], 'SIGKILL');
		// The surviving worker answers meanwhile (a connection handed to the dying one at that instant may be lost: retry).
		let answered = false;
		for (let i = 0; i < 5 && !answered; i++) answered = await healthy();
		expect(answered).toBe(true);
		const after = await until('a replacement worker', () => {
			const now = childrenOf(primary.pid!);
			return now.length === 2 && !now.includes(before[0]) && now;
		});
		expect(after).toContain(before[1]);
		expect(readFileSync(logPath, 'utf8')).toMatch(new RegExp(`worker ${before[0]} exited \\(SIGKILL\\); starting a new one`));
		for (let i = 0; i < 10; i++) expect(await healthy()).toBe(true);
	});

	it('on SIGTERM stops every worker, then exits with code 0', async () => {
		const workers = childrenOf(primary.pid!);
		expect(workers).toHaveLength(2);
		const exited = once(primary, 'exit');
		primary.kill('SIGTERM');
		const [code] = (await Promise.race([exited, new Promise((_, reject) => setTimeout(() => reject(new Error('primary still running 20 s after SIGTERM')), 20_000))])) as [number | null];
		expect(code).toBe(0);
		for (const pid of workers) expect(() => process.kill(pid, 0)).toThrow();
		expect(await healthy()).toBe(false);
	});
});
