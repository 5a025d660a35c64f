/**
 * `npm run bench:load`: a bounded load run on loopback. 50 virtual users for
 * 60 s against an instance of the production build on its own database
 * (`spanline_bench`, recreated, migrated, seeded with the demo scenario and
 * 12 imported tunnel runs): 25 browse campaign and run pages with a session
 * cookie, 20 read the JSON API with a token, 5 upload tunnel runs. Prints
 * requests/s, p50/p95/p99 latency and errors per kind of request, the server's
 * memory (RSS) at start and end, and an idle baseline (one user, same
 * requests) with the loaded/idle ratio.
 *
 * Options (environment): BENCH_USERS (50), BENCH_UPLOADERS (5), BENCH_SECONDS (60),
 * BENCH_WARMUP_SECONDS (10, same load, not counted), BENCH_PORT (3121), BENCH_WORKERS
 * (server processes, default one per core as `npm start`), BENCH_NODE_ARGS
 * (extra flags for the server's node, e.g. `--cpu-prof --cpu-prof-dir=.data/prof`). Targets from issue 7: 0 errors, p95 of page and API
 * reads < 200 ms, RSS growth < 20 %.
 *
 * The build is copied to .data/bench-build first, so an `npm test` that
 * rebuilds build/ meanwhile cannot pull files from under the running server.
 * Latency is measured in this process around each request (node:http,
 * keep-alive), so it includes the client's own overhead.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import http from 'node:http';
import { cpSync, existsSync, mkdirSync, openSync, closeSync, readFileSync, readdirSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { ensureEnv, projectRoot } from './lib/env.mjs';
import { databaseUrl, ensurePostgres, recreateDatabase } from './lib/postgres.mjs';

const USERS = Number(process.env.BENCH_USERS ?? 50);
const UPLOADERS = Number(process.env.BENCH_UPLOADERS ?? 5);
const SECONDS = Number(process.env.BENCH_SECONDS ?? 60);
const PORT = Number(process.env.BENCH_PORT ?? 3121);
const WARMUP = Number(process.env.BENCH_WARMUP_SECONDS ?? 10);
const ORIGIN = `http://127.0.0.1:${PORT}`;
const DB = 'spanline_bench';
const MB = 1024 * 1024;

type Kind = 'page' | 'api' | 'upload';

/** The server's processes: the cluster primary and its workers (scripts/serve.mjs). */
function processTree(root: number): number[] {
	const children = new Map<number, number[]>();
	for (const d of readdirSync('/proc').filter((x) => /^\d+$/.test(x))) {
		try {
			const ppid = Number(readFileSync(`/proc/${d}/stat`, 'utf8').split(') ')[1].split(' ')[1]);
			children.set(ppid, [...(children.get(ppid) ?? []), Number(d)]);
		} catch {
			/* ended meanwhile */
		}
	}
	const out: number[] = [];
	const walk = (p: number) => {
		out.push(p);
		for (const c of children.get(p) ?? []) walk(c);
	};
	walk(root);
	return out;
}

/** Resident memory of the whole server (primary plus workers), bytes. */
function rss(pid: number): number {
	let total = 0;
	for (const p of processTree(pid)) {
		try {
			const s = readFileSync(`/proc/${p}/status`, 'utf8');
			total += Number(/^VmRSS:\s+(\d+) kB/m.exec(s)?.[1] ?? 0) * 1024;
		} catch {
			/* ended meanwhile */
		}
	}
	return total;
}

function pct(sorted: number[], p: number): number {
	if (!sorted.length) return NaN;
	return sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)];
}

function tunnelCsv(seed: number, n = 41): string {
	const lines = ['Run,Point,Alpha [deg],q [Pa],T [degC],Lift [N],Drag [N],PM [N m]'];
	for (let i = 0; i < n; i++) {
		const a = -8 + (20 * i) / (n - 1) + seed * 1e-7;
		const L = 9.18 * (a + 2);
		lines.push(`1,${i + 1},${a.toFixed(7)},600.0,20.0,${L.toFixed(5)},${(1.188 + 0.0003 * L * L).toFixed(5)},${(-0.324 - 0.0015 * L).toFixed(6)}`);
	}
	return lines.join('\n') + '\n';
}

function run(cmd: string, args: string[], env: NodeJS.ProcessEnv) {
	const r = spawnSync(cmd, args, { cwd: projectRoot, env, encoding: 'utf8' });
	if (r.status !== 0) throw new Error(`${cmd} ${args.join(' ')} failed:\n${r.stdout}${r.stderr}`);
}

async function waitHealthy(child: ChildProcess) {
	for (const until = Date.now() + 30_000; ; ) {
		if (child.exitCode !== null) throw new Error(`server exited with ${child.exitCode}`);
		try {
			if ((await fetch(`${ORIGIN}/api/v1/health`)).ok) return;
		} catch {
			/* not yet */
		}
		if (Date.now() > until) throw new Error('server did not become healthy in 30 s');
		await new Promise((r) => setTimeout(r, 200));
	}
}

interface Sample {
	kind: Kind;
	path: string;
	ms: number;
	ok: boolean;
}

/** CPU seconds (user + system) one process has used, from /proc/<pid>/stat (clock ticks of 1/100 s on Linux). */
function processCpuSeconds(pid: number): number {
	const f = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1].split(' ');
	return (Number(f[11]) + Number(f[12])) / 100;
}

/** CPU seconds of the whole server (primary plus workers). */
function cpuSeconds(pid: number): number {
	let total = 0;
	for (const p of processTree(pid)) {
		try {
			total += processCpuSeconds(p);
		} catch {
			/* ended meanwhile */
		}
	}
	return total;
}

/** CPU seconds of every process named `postgres` (the server and its backends; ended backends are not counted). */
function postgresCpuSeconds(): number {
	let total = 0;
	for (const pid of readdirSync('/proc').filter((d) => /^\d+$/.test(d))) {
		try {
			const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
			if (stat.includes('(postgres)')) total += processCpuSeconds(Number(pid));
		} catch {
			/* the process ended meanwhile */
		}
	}
	return total;
}

async function main() {
	const fileEnv = ensureEnv();
	await ensurePostgres({ log: () => {} });
	if (!existsSync(join(projectRoot, 'build', 'index.js'))) {
		console.log('no build/ yet: building (vite build)…');
		run('npx', ['vite', 'build'], process.env);
	}
	const buildCopy = join(projectRoot, '.data', 'bench-build');
	rmSync(buildCopy, { recursive: true, force: true });
	cpSync(join(projectRoot, 'build'), buildCopy, { recursive: true });

	console.log(`preparing database ${DB} (migrate, demo seed)…`);
	await recreateDatabase(DB);
	const env = {
		...process.env,
		DATABASE_URL: databaseUrl(DB),
		AUTH_SECRET: fileEnv.AUTH_SECRET,
		PORT: String(PORT),
		HOST: '127.0.0.1',
		ORIGIN,
		BODY_SIZE_LIMIT: 'Infinity',
		SPANLINE_ENV: 'bench',
		// As `npm start` serves: scripts/serve.mjs, one worker per core unless BENCH_WORKERS says otherwise.
		SPANLINE_WORKERS: process.env.BENCH_WORKERS ?? ''
	};
	run('npx', ['tsx', 'scripts/migrate.ts', 'up'], env);
	run('npx', ['tsx', 'scripts/seed.ts'], env);

	mkdirSync(join(projectRoot, '.data', 'test-logs'), { recursive: true });
	const logPath = join(projectRoot, '.data', 'test-logs', 'bench-load-server.log');
	const fd = openSync(logPath, 'w');
	const nodeArgs = (process.env.BENCH_NODE_ARGS ?? '').split(/\s+/).filter(Boolean);
	const server = spawn('node', [...nodeArgs, 'scripts/serve.mjs', buildCopy], { cwd: projectRoot, env, stdio: ['ignore', fd, fd] });
	closeSync(fd);
	const stop = () => {
		if (server.exitCode === null) server.kill('SIGTERM');
	};
	process.on('exit', stop);
	try {
		await waitHealthy(server);

		// A session (pages) and a token (API, uploads) of the demo test engineer.
		const signIn = await fetch(`${ORIGIN}/signin?/password`, {
			method: 'POST',
			redirect: 'manual',
			headers: { 'content-type': 'application/x-www-form-urlencoded', origin: ORIGIN, accept: 'text/html' },
			body: new URLSearchParams({ email: 'test.engineer@spanline.test', password: 'demo-test-2026', next: '/' })
		});
		const cookie = signIn.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ');
		if (!cookie.includes('session-token')) throw new Error(`sign-in failed: ${signIn.status}`);
		const tok = await fetch(`${ORIGIN}/api/v1/tokens`, { method: 'POST', headers: { cookie, origin: ORIGIN, 'content-type': 'application/json' }, body: JSON.stringify({ name: 'bench' }) });
		const token = (await tok.json()).token as string;
		const auth = { authorization: `Bearer ${token}` };

		// A tunnel campaign of the demo seed with a configuration, and 12 imported runs to browse.
		const campaigns = (await (await fetch(`${ORIGIN}/api/v1/campaigns`, { headers: auth })).json()).items as { id: number; kind: string }[];
		const campaign = campaigns.find((c) => c.kind === 'tunnel') ?? campaigns[0];
		const configs = (await (await fetch(`${ORIGIN}/api/v1/configurations?campaignId=${campaign.id}`, { headers: auth })).json()) as { items?: { id: number }[] };
		const configurationId = configs.items?.[0]?.id;
		const runIds: number[] = [];
		const uploadPath = (n: number, name: string) =>
			`${ORIGIN}/api/v1/campaigns/${campaign.id}/runs?${new URLSearchParams({ name, runNumber: `B-${n}`, ...(configurationId ? { configurationId: String(configurationId) } : {}) })}`;
		for (let i = 0; i < 12; i++) {
			const res = await fetch(uploadPath(i, `bench-${i}.csv`), { method: 'POST', body: tunnelCsv(i), headers: { ...auth, 'content-type': 'text/csv' } });
			const body = await res.json();
			if (res.status !== 201) throw new Error(`seeding run ${i}: ${res.status} ${JSON.stringify(body).slice(0, 300)}`);
			runIds.push(body.run.id);
		}

		const pages = ['/', `/campaigns/${campaign.id}`, ...runIds.slice(0, 4).map((id) => `/runs/${id}`), '/configurations'];
		const apis = [
			'/api/v1/campaigns',
			`/api/v1/campaigns/${campaign.id}`,
			`/api/v1/campaigns/${campaign.id}/runs`,
			`/api/v1/campaigns/${campaign.id}/summary`,
			...runIds.slice(0, 6).flatMap((id) => [`/api/v1/runs/${id}`, `/api/v1/runs/${id}/points`])
		];
		// Check every path once: a bench over broken routes would measure error pages.
		for (const p of pages) {
			const r = await fetch(ORIGIN + p, { headers: { cookie, accept: 'text/html' }, redirect: 'manual' });
			await r.arrayBuffer();
			if (r.status !== 200) throw new Error(`page ${p}: HTTP ${r.status}`);
		}
		for (const p of apis) {
			const r = await fetch(ORIGIN + p, { headers: auth });
			await r.arrayBuffer();
			if (r.status !== 200) throw new Error(`API ${p}: HTTP ${r.status}`);
		}

		let uploadSeq = 1000;
		// The measured requests go through node:http with a keep-alive agent rather than
		// fetch: the load generator shares the machine's two cores with the server and
		// PostgreSQL, and fetch's stream machinery cost it about a third of a core.
		const agent = new http.Agent({ keepAlive: true, maxSockets: USERS + 4 });
		const send = (method: string, path: string, headers: Record<string, string>, body?: string) =>
			new Promise<number>((resolve, reject) => {
				const req = http.request(
					{ host: '127.0.0.1', port: PORT, method, path, agent, headers: body === undefined ? headers : { ...headers, 'content-length': String(Buffer.byteLength(body)) } },
					(res) => {
						res.on('error', reject);
						res.on('end', () => resolve(res.statusCode ?? 0));
						res.resume();
					}
				);
				req.on('error', reject);
				req.end(body);
			});
		const once = async (kind: Kind, i: number): Promise<Sample> => {
			const t0 = performance.now();
			const path = kind === 'page' ? pages[i % pages.length] : kind === 'api' ? apis[i % apis.length] : `/api/v1/campaigns/${campaign.id}/runs (POST)`;
			try {
				let status: number;
				if (kind === 'page') status = await send('GET', path, { cookie, accept: 'text/html' });
				else if (kind === 'api') status = await send('GET', path, auth);
				else {
					const n = uploadSeq++;
					const url = new URL(uploadPath(n, `load-${n}.csv`));
					status = await send('POST', url.pathname + url.search, { ...auth, 'content-type': 'text/csv' }, tunnelCsv(n));
				}
				return { kind, path, ms: performance.now() - t0, ok: kind === 'upload' ? status === 201 : status === 200 };
			} catch {
				return { kind, path, ms: performance.now() - t0, ok: false };
			}
		};

		// Idle baseline: one user, every page and API path ten times.
		const baseline: Sample[] = [];
		for (let r = 0; r < 10; r++) {
			for (let i = 0; i < pages.length; i++) baseline.push(await once('page', i));
			for (let i = 0; i < apis.length; i++) baseline.push(await once('api', i));
		}
		for (let r = 0; r < 5; r++) baseline.push(await once('upload', 0));

		// Server CPU per request, path by path, one request at a time: where the
		// capacity goes (the /proc figure has a 10 ms tick, hence the repeats).
		const REPEAT = 25;
		const cost: { path: string; cpuMs: number; wallMs: number }[] = [];
		const costOf = async (kind: Kind, i: number, path: string) => {
			const c0 = cpuSeconds(server.pid!);
			const w0 = performance.now();
			for (let r = 0; r < REPEAT; r++) await once(kind, i);
			cost.push({ path, cpuMs: ((cpuSeconds(server.pid!) - c0) * 1000) / REPEAT, wallMs: (performance.now() - w0) / REPEAT });
		};
		for (let i = 0; i < pages.length; i++) await costOf('page', i, pages[i]);
		for (let i = 0; i < apis.length; i++) await costOf('api', i, apis[i]);
		await costOf('upload', 0, 'upload (POST)');

		const readers = USERS - UPLOADERS;
		const drive = async (seconds: number, into: Sample[]) => {
			const until = performance.now() + seconds * 1000;
			const user = async (u: number) => {
				const kind: Kind = u < UPLOADERS ? 'upload' : u - UPLOADERS < Math.ceil(readers / 2) ? 'page' : 'api';
				for (let i = u; performance.now() < until; i++) into.push(await once(kind, i));
			};
			await Promise.all(Array.from({ length: USERS }, (_, u) => user(u)));
		};
		// Warm-up at full load, not counted: JIT, connection pools and caches fill here,
		// so the growth figure below is about the run, not about start-up.
		const rssCold = rss(server.pid!);
		await drive(WARMUP, []);
		const rssStart = rss(server.pid!);
		console.log(
			`load: ${USERS} users (${UPLOADERS} uploading) for ${SECONDS} s on ${ORIGIN} after a ${WARMUP} s warm-up; ` +
				`server RSS cold ${(rssCold / MB).toFixed(1)} MB, after warm-up ${(rssStart / MB).toFixed(1)} MB`
		);
		const samples: Sample[] = [];
		const cpu0 = cpuSeconds(server.pid!);
		const pg0 = postgresCpuSeconds();
		const self0 = process.cpuUsage();
		const t0 = performance.now();
		let peak = rssStart;
		const timeline: string[] = [];
		let tick = 0;
		const sampler = setInterval(() => {
			const now = rss(server.pid!);
			peak = Math.max(peak, now);
			if (++tick % 30 === 0) timeline.push(`${tick / 2} s: ${(now / MB).toFixed(0)} MB`);
		}, 500);
		await drive(SECONDS, samples);
		clearInterval(sampler);
		const elapsed = (performance.now() - t0) / 1000;
		const serverCpu = cpuSeconds(server.pid!) - cpu0;
		const pgCpu = postgresCpuSeconds() - pg0;
		const self = process.cpuUsage(self0);
		const clientCpu = (self.user + self.system) / 1e6;
		const rssEnd = rss(server.pid!);

		const stats = (list: Sample[]) => {
			const ms = list.map((s) => s.ms).sort((a, b) => a - b);
			return { n: list.length, errors: list.filter((s) => !s.ok).length, p50: pct(ms, 50), p95: pct(ms, 95), p99: pct(ms, 99) };
		};
		const row = (label: string, s: ReturnType<typeof stats>, rate?: number) =>
			`${label.padEnd(22)} ${String(s.n).padStart(7)} ${rate === undefined ? '       ' : rate.toFixed(1).padStart(7)} ${s.p50.toFixed(1).padStart(8)} ${s.p95.toFixed(1).padStart(8)} ${s.p99.toFixed(1).padStart(8)} ${String(s.errors).padStart(6)}`;
		console.log(`\n${'requests'.padEnd(22)} ${'count'.padStart(7)} ${'req/s'.padStart(7)} ${'p50 ms'.padStart(8)} ${'p95 ms'.padStart(8)} ${'p99 ms'.padStart(8)} ${'errors'.padStart(6)}`);
		const loaded: Record<string, ReturnType<typeof stats>> = {};
		for (const kind of ['page', 'api', 'upload'] as Kind[]) {
			const s = stats(samples.filter((x) => x.kind === kind));
			loaded[kind] = s;
			console.log(row(`${kind} (under load)`, s, s.n / elapsed));
		}
		const all = stats(samples);
		console.log(row('all (under load)', all, all.n / elapsed));
		const base: Record<string, ReturnType<typeof stats>> = {};
		for (const kind of ['page', 'api', 'upload'] as Kind[]) {
			base[kind] = stats(baseline.filter((x) => x.kind === kind));
			console.log(row(`${kind} (idle baseline)`, base[kind]));
		}
		const byPath = new Map<string, Sample[]>();
		for (const x of samples) byPath.set(x.path, [...(byPath.get(x.path) ?? []), x]);
		const slowest = [...byPath].map(([p, l]) => [p, stats(l)] as const).sort((a, b) => b[1].p95 - a[1].p95).slice(0, 6);
		console.log('\nslowest paths under load (p95):');
		for (const [p, st] of slowest) console.log(row(`  ${p}`.slice(0, 22), st));
		console.log(`  (${slowest.map(([p]) => p).join(', ')})`);
		console.log('\nserver CPU per request, one at a time (idle server):');
		for (const c of cost) console.log(`  ${c.path.padEnd(40)} ${c.cpuMs.toFixed(1).padStart(6)} ms CPU ${c.wallMs.toFixed(1).padStart(7)} ms wall`);
		console.log(
			`\nCPU over the measured run: server ${serverCpu.toFixed(1)} s of ${elapsed.toFixed(1)} s (${((100 * serverCpu) / elapsed).toFixed(0)} % of one core), ` +
				`PostgreSQL ${pgCpu.toFixed(1)} s (${((100 * pgCpu) / elapsed).toFixed(0)} %), load generator ${clientCpu.toFixed(1)} s (${((100 * clientCpu) / elapsed).toFixed(0)} %); machine has ${(await import('node:os')).cpus().length} CPUs`
		);
		console.log(`\nloaded/idle p95 ratio: page ${(loaded.page.p95 / base.page.p95).toFixed(1)}×, api ${(loaded.api.p95 / base.api.p95).toFixed(1)}×, upload ${(loaded.upload.p95 / base.upload.p95).toFixed(1)}×`);
		const growth = (rssEnd - rssStart) / rssStart;
		console.log(`server RSS every 15 s: ${timeline.join(', ')}`);
		console.log(`server RSS: start ${(rssStart / MB).toFixed(1)} MB, end ${(rssEnd / MB).toFixed(1)} MB (${(growth * 100).toFixed(1)} %), peak ${(peak / MB).toFixed(1)} MB`);
		const targets = [
			['0 errors', all.errors === 0],
			['p95 page reads < 200 ms', loaded.page.p95 < 200],
			['p95 API reads < 200 ms', loaded.api.p95 < 200],
			['RSS growth < 20 %', growth < 0.2]
		] as const;
		console.log(`targets: ${targets.map(([t, ok]) => `${ok ? 'met' : 'MISSED'}: ${t}`).join('; ')}`);
		process.exitCode = targets.every(([, ok]) => ok) ? 0 : 1;
	} finally {
		stop();
	}
}

main().catch((err) => {
	console.error(`bench:load: ${err instanceof Error ? err.message : err}`);
	process.exit(1);
});
