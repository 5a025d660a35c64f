/**
 * `npm run bench:import`: the import benchmark (a benchmark, not a test).
 *
 * 1. Reuses bench-data/flight-1m.csv (1,000,000 rows × 12 numeric columns)
 *    or writes it with scripts/generate-bench-files.ts.
 * 2. Starts the built server on a fresh `spanline_bench` database (or, with
 *    SPANLINE_BENCH_URL, uses a running one — then no peak memory is read).
 * 3. Imports the file end to end through POST /api/v1/campaigns/{id}/runs
 *    (upload, parse, validate, COPY samples, store the bytes, detect
 *    segments, reduce), then, as the baseline, loads the same file with
 *    `psql \copy` into an equivalent table (12 double precision columns).
 * 4. Imports a 100-point tunnel run (invented polar of fixtures/scenario.ts)
 *    five times and prints each time and the median.
 *
 * Prints both times, their ratio, rows per second and the server's peak
 * resident memory (VmHWM of the process started here).
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { createReadStream, existsSync, readFileSync, statSync } from 'node:fs';
import { Readable } from 'node:stream';
import { join } from 'node:path';
import { cd, cl, POLAR } from '../fixtures/scenario';

const root = join(import.meta.dirname, '..');
const benchFile = join(root, 'bench-data', 'flight-1m.csv');

function sh(cmd: string, args: string[], env: NodeJS.ProcessEnv = process.env): void {
	const r = spawnSync(cmd, args, { cwd: root, env, stdio: 'inherit' });
	if (r.status !== 0) throw new Error(`${cmd} ${args.join(' ')} failed (${r.status})`);
}

function vmHWM(pid: number): string {
	try {
		const m = /VmHWM:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
		return m ? `${(Number(m[1]) / 1024).toFixed(0)} MB` : 'n/a';
	} catch {
		return 'n/a';
	}
}

async function main(): Promise<void> {
	if (!existsSync(benchFile)) {
		console.log('writing bench-data/flight-1m.csv …');
		sh('npx', ['tsx', 'scripts/generate-bench-files.ts']);
	}
	const size = statSync(benchFile).size;

	const { ensureEnv } = await import('./lib/env.mjs');
	const pg = await import('./lib/postgres.mjs');
	const fileEnv = ensureEnv();
	await pg.ensurePostgres({ log: () => {} });
	let url = process.env.SPANLINE_BENCH_URL ?? '';
	let child: ChildProcess | null = null;
	const dbName = 'spanline_bench';
	const databaseUrl = process.env.SPANLINE_BENCH_URL ? (process.env.DATABASE_URL as string) : pg.databaseUrl(dbName);
	if (!url) {
		await pg.recreateDatabase(dbName);
		const env = { ...process.env, DATABASE_URL: databaseUrl };
		sh('npx', ['tsx', 'scripts/migrate.ts', 'up'], env);
		sh('npx', ['tsx', 'scripts/seed.ts'], env);
		const buildDir = process.env.SPANLINE_BENCH_BUILD ?? join(root, 'build');
		if (!existsSync(join(buildDir, 'index.js'))) sh('npx', ['vite', 'build'], env);
		const port = 3290;
		url = `http://127.0.0.1:${port}`;
		child = spawn('node', [buildDir], {
			env: { ...env, AUTH_SECRET: fileEnv.AUTH_SECRET, HOST: '127.0.0.1', PORT: String(port), ORIGIN: url, BODY_SIZE_LIMIT: 'Infinity', SPANLINE_ENV: 'bench', LOG_LEVEL: 'warn' },
			stdio: ['ignore', 'pipe', 'inherit']
		});
		let out = '';
		child.stdout!.on('data', (d) => (out += d));
		const until = Date.now() + 30_000;
		while (!out.includes('Listening on') && Date.now() < until) await new Promise((r) => setTimeout(r, 100));
	}
	process.env.DATABASE_URL = databaseUrl;
	const { getSequelize, closeSequelize } = await import('../src/lib/server/db/index');
	const { createToken } = await import('../src/lib/server/auth/tokens');
	const q = <T>(sql: string, r: Record<string, unknown> = {}) => getSequelize().query(sql, { replacements: r, type: 'SELECT' as never }) as unknown as Promise<T[]>;
	try {
		const [user] = await q<{ id: string; name: string; email: string; role: 'test_engineer' }>(`SELECT id, name, email, role FROM users WHERE role = 'test_engineer' LIMIT 1`);
		const { token } = await createToken({ actor: user }, { ownerId: user.id, name: `bench ${Date.now()}` });
		const [flight] = await q<{ id: string; cfg: string }>(`SELECT c.id, (SELECT id FROM configurations WHERE campaign_id = c.id ORDER BY id LIMIT 1) AS cfg FROM campaigns c WHERE c.kind = 'flight' ORDER BY c.id LIMIT 1`);
		const [tunnel] = await q<{ id: string; cfg: string }>(`SELECT c.id, (SELECT id FROM configurations WHERE campaign_id = c.id ORDER BY id LIMIT 1) AS cfg FROM campaigns c WHERE c.kind = 'tunnel' ORDER BY c.id LIMIT 1`);
		const tag = Date.now().toString(36);
		const post = async (campaign: string, params: Record<string, string>, body: BodyInit) => {
			const res = await fetch(`${url}/api/v1/campaigns/${campaign}/runs?${new URLSearchParams(params)}`, {
				method: 'POST',
				body,
				headers: { authorization: `Bearer ${token}`, 'content-type': 'text/csv' },
				duplex: 'half'
			} as RequestInit);
			const json = await res.json();
			if (res.status !== 201) throw new Error(`import failed: ${res.status} ${JSON.stringify(json).slice(0, 500)}`);
			return json;
		};

		// 1. The big flight file through HTTP.
		console.log(`importing ${benchFile} (${(size / 1e6).toFixed(1)} MB) through ${url} …`);
		const t0 = performance.now();
		const big = await post(flight.id, { name: 'flight-1m.csv', configurationId: flight.cfg, runNumber: `BENCH-${tag}` }, Readable.toWeb(createReadStream(benchFile, { highWaterMark: 1 << 20 })) as unknown as BodyInit);
		const tHttp = (performance.now() - t0) / 1000;
		const rows = big.run.sourceFiles[0].rowCount as number;

		// 2. Baseline: psql \copy of the same file into an equivalent table.
		const cols = Array.from({ length: 12 }, (_, i) => `c${i + 1} double precision`).join(', ');
		await getSequelize().query(`DROP TABLE IF EXISTS bench_copy; CREATE TABLE bench_copy (${cols})`);
		const psql = existsSync(join(pg.findBinDir(), 'psql')) ? join(pg.findBinDir(), 'psql') : 'psql';
		const t1 = performance.now();
		const r = spawnSync(psql, [databaseUrl, '-q', '-c', `\\copy bench_copy FROM '${benchFile}' WITH (FORMAT csv, HEADER true)`], { stdio: 'inherit' });
		const tCopy = (performance.now() - t1) / 1000;
		if (r.status !== 0) throw new Error('psql \\copy failed');
		await getSequelize().query('DROP TABLE bench_copy');

		// 3. A 100-point tunnel run, five times.
		const times: number[] = [];
		for (let k = 0; k < 5; k++) {
			const lines = ['Alpha [deg],CL,CD,Note'];
			for (let i = 0; i < 100; i++) {
				const a = -5 + i * 0.19;
				lines.push(`${a.toFixed(2)},${cl(a).toFixed(6)},${cd(cl(a)).toFixed(6)},${tag}-${k}`);
			}
			const s = performance.now();
			await post(tunnel.id, { name: `tunnel-100-${k}.csv`, configurationId: tunnel.cfg, runNumber: `B100-${tag}-${k}` }, lines.join('\n') + '\n');
			times.push(performance.now() - s);
		}
		const sorted = [...times].sort((a, b) => a - b);

		console.log('');
		console.log('import benchmark');
		console.log(`  file                     ${rows.toLocaleString('en-US')} rows × 12 columns, ${(size / 1e6).toFixed(1)} MB`);
		console.log(`  HTTP import (end to end) ${tHttp.toFixed(2)} s   ${Math.round(rows / tHttp).toLocaleString('en-US')} rows/s   ${big.run.currentReduction ? 'reduced, ' : ''}${(await q<{ n: string }>('SELECT count(*) AS n FROM points p JOIN reductions r ON r.id = p.reduction_id WHERE r.run_id = :id', { id: big.run.id }))[0].n} points`);
		console.log(`  psql \\copy baseline      ${tCopy.toFixed(2)} s   ${Math.round(rows / tCopy).toLocaleString('en-US')} rows/s`);
		console.log(`  ratio                    ${(tHttp / tCopy).toFixed(2)}   (target ≤ 2.5)`);
		console.log(`  server peak memory       ${child ? vmHWM(child.pid!) : 'n/a (server not started here)'}   (target < 300 MB)`);
		console.log(`  100-point tunnel run     ${times.map((t) => t.toFixed(0)).join(', ')} ms; median ${sorted[2].toFixed(0)} ms   (target < 300 ms)`);
		console.log(`  storage                  ${process.env.SPANLINE_STORAGE ?? 'postgres'}, POLAR q = ${POLAR.Q} Pa demo polar for the tunnel run`);
	} finally {
		await closeSequelize();
		if (child) {
			child.kill('SIGTERM');
		}
	}
}

main().catch((e) => {
	console.error(e);
	process.exit(1);
});
