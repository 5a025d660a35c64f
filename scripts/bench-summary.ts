/**
 * `npm run bench:summary`: the campaign summary benchmark (a benchmark, not a test).
 *
 * 1. Fresh `spanline_bench_summary` database (migrated and seeded), or the
 *    database of DATABASE_URL with SPANLINE_BENCH_URL pointing at a running server.
 * 2. Seeds one campaign of 2,000 runs over 8 configurations (10 % repeat
 *    runs), each with a current reduction of 50 points (100,000 points), a
 *    current prediction and its 8 deltas (16,000 deltas), straight into the
 *    tables as the import and correlation modules leave them. The numbers are
 *    invented (our own scenario), deterministic from a fixed seed.
 * 3. Starts the built server and asks GET /api/v1/campaigns/{id}/summary with
 *    20 concurrent clients on loopback for 10 s (autocannon), printing p50,
 *    p95, p99 and requests per second.
 * 4. Baseline, in the same run: the summary's SQL statement alone, 20 at a
 *    time over 20 pg connections for the same duration, p50/p95.
 *
 * Prints the ratio of the two p95s. Targets (issue 6): p95 < 150 ms and
 * within 3× the bare queries.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import autocannon from 'autocannon';
import pg from 'pg';

const root = join(import.meta.dirname, '..');
const RUNS = 2000;
const POINTS_PER_RUN = 50;
const CONFIGURATIONS = 8;
const CONNECTIONS = 20;
const DURATION_S = Number(process.env.SPANLINE_BENCH_SECONDS ?? 10);

function sh(cmd: string, args: string[], env: NodeJS.ProcessEnv = process.env): void {
	const r = spawnSync(cmd, args, { cwd: root, env, stdio: 'inherit' });
	if (r.status !== 0) throw new Error(`${cmd} ${args.join(' ')} failed (${r.status})`);
}

function percentile(sorted: number[], p: number): number {
	if (!sorted.length) return NaN;
	const k = Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1));
	return sorted[k];
}

/** Seed the bench campaign with set-based SQL (generate_series); returns its id. */
export async function seedBenchCampaign(client: pg.Client | pg.PoolClient, tag: string): Promise<number> {
	await client.query('BEGIN');
	await client.query('SELECT setseed(0.26)');
	const { rows: [c] } = await client.query(
		`INSERT INTO campaigns (code, name, kind, planned_runs, status, start_date, tolerances)
		 VALUES ($1, 'Summary benchmark campaign', 'tunnel', 2200, 'active', '2026-09-01', '{"clAtAlpha": 0.03, "cd0Counts": 10}'::jsonb) RETURNING id`,
		[`BENCH-SUM-${tag}`]
	);
	const campaignId = Number(c.id);
	const geometry = JSON.stringify({ span: 1.2, stations: [{ eta: 0, chord: 0.2, twistDeg: 0, a0: 5.9, alphaZeroLiftDeg: -1.8 }, { eta: 1, chord: 0.1, twistDeg: 0, a0: 5.9, alphaZeroLiftDeg: -1.8 }], segments: [] });
	const { rows: configs } = await client.query(
		`INSERT INTO configurations (campaign_id, name, geometry, ref_area, ref_span, ref_chord)
		 SELECT $1, 'Bench wing ' || $2 || ' ' || k, $3::jsonb, 0.18, 1.2, 0.15 FROM generate_series(1, $4) k RETURNING id`,
		[campaignId, tag, geometry, CONFIGURATIONS]
	);
	const configIds = configs.map((r) => Number(r.id));
	// Runs: sequence i, configuration by i mod 8, a test date over 80 days, states spread over the workflow.
	await client.query(
		`INSERT INTO runs (campaign_id, configuration_id, run_number, kind, state, test_date, created_at, conditions)
		 SELECT $1, ($2::bigint[])[1 + (i % $3)], 'B' || lpad(i::text, 5, '0'), 'tunnel',
		        (ARRAY['imported','reduced','reviewed','accepted','accepted','accepted','returned'])[1 + (i % 7)],
		        DATE '2026-09-01' + (i / 25), TIMESTAMPTZ '2026-09-01' + i * interval '10 minutes', '{"mach": 0.09, "reynolds": 300000}'::jsonb
		 FROM generate_series(1, $4) i`,
		[campaignId, configIds, CONFIGURATIONS, RUNS]
	);
	// Every tenth run repeats the run eight before it (same configuration).
	await client.query(
		`UPDATE runs r SET repeat_of_run_id = o.id FROM runs o
		 WHERE r.campaign_id = $1 AND o.campaign_id = $1 AND substr(r.run_number, 2)::int % 10 = 0
		   AND substr(o.run_number, 2)::int = substr(r.run_number, 2)::int - 8`,
		[campaignId]
	);
	await client.query(`INSERT INTO reductions (run_id, version, is_current, settings) SELECT id, 1, true, '{"bench": true}'::jsonb FROM runs WHERE campaign_id = $1`, [campaignId]);
	await client.query(
		`INSERT INTO points (reduction_id, idx, alpha_deg, cl, cd, cm, q_pa, mach, reynolds, uncertainty)
		 SELECT rd.id, k, -6 + k * 0.4, 0.1 + 0.09 * (-6 + k * 0.4) + 0.004 * (random() - 0.5), 0.012 + 0.05 * (0.1 + 0.09 * (-6 + k * 0.4)) ^ 2,
		        -0.05, 600, 0.09, 300000, '{"CL": 0.004, "CD": 0.0002, "alphaDeg": 0.05}'::jsonb
		 FROM reductions rd JOIN runs r ON r.id = rd.run_id, generate_series(0, $2 - 1) k WHERE r.campaign_id = $1`,
		[campaignId, POINTS_PER_RUN]
	);
	await client.query(
		`INSERT INTO predictions (run_id, reduction_id, configuration_id, configuration_version, solver, settings, inputs, outputs, is_current)
		 SELECT r.id, rd.id, r.configuration_id, 1, 'lifting-line', '{}'::jsonb, '{}'::jsonb, '{}'::jsonb, true
		 FROM runs r JOIN reductions rd ON rd.run_id = r.id WHERE r.campaign_id = $1`,
		[campaignId]
	);
	// Deltas: a configuration-dependent bias plus scatter, compared with each quantity's band and a 2σ-like uncertainty.
	await client.query(
		`WITH q(key, unit, tol, bias, spread, u) AS (VALUES
		   ('clAlphaPct', '%', 5, 2.0, 3.0, 1.0), ('alphaZeroLiftDeg', 'deg', 0.5, 0.1, 0.3, 0.1), ('clAtAlpha', '', 0.03, 0.01, 0.02, 0.005),
		   ('clMax', '', 0.05, 0.0, 0.04, 0.02), ('e', '', 0.05, -0.02, 0.03, 0.01), ('cd0Counts', 'counts', 10, 4, 6, 2),
		   ('cdiCounts', 'counts', 10, 1, 5, 2), ('rmsCl', '', 0.02, 0.008, 0.006, 0.003)),
		 v AS (
		   SELECT p.run_id, p.id AS prediction_id, p.reduction_id, q.key, q.unit, q.tol, q.u,
		          CASE WHEN q.key = 'clMax' THEN NULL ELSE q.bias * 0.8 * (p.configuration_id % 4) + q.spread * (random() - 0.5) * 2 END AS value
		   FROM predictions p JOIN runs r ON r.id = p.run_id, q WHERE r.campaign_id = $1)
		 INSERT INTO deltas (run_id, prediction_id, reduction_id, quantity, value, uncertainty, significant, out_of_tolerance, unit, tolerance, is_current)
		 SELECT run_id, prediction_id, reduction_id, key, value, CASE WHEN value IS NULL THEN NULL ELSE u END, abs(value) > u, abs(value) > tol, unit, tol, true FROM v`,
		[campaignId]
	);
	await client.query('COMMIT');
	await client.query('ANALYZE');
	return campaignId;
}

async function main(): Promise<void> {
	const { ensureEnv } = await import('./lib/env.mjs');
	const pgl = await import('./lib/postgres.mjs');
	const fileEnv = ensureEnv();
	await pgl.ensurePostgres({ log: () => {} });
	let url = process.env.SPANLINE_BENCH_URL ?? '';
	let child: ChildProcess | null = null;
	const dbName = 'spanline_bench_summary';
	const databaseUrl = url ? (process.env.DATABASE_URL as string) : pgl.databaseUrl(dbName);
	if (!url) {
		await pgl.recreateDatabase(dbName);
		const env = { ...process.env, DATABASE_URL: databaseUrl };
		sh('npx', ['tsx', 'scripts/migrate.ts', 'up'], env);
		sh('npx', ['tsx', 'scripts/seed.ts'], env);
	}
	process.env.DATABASE_URL = databaseUrl;
	const { getSequelize, closeSequelize } = await import('../src/lib/server/db/index');
	const { createToken } = await import('../src/lib/server/auth/tokens');
	const { SUMMARY_SQL, SNAPSHOT_SQL } = await import('../src/lib/server/summary/queries');
	const pool = new pg.Pool({ connectionString: databaseUrl, max: CONNECTIONS });
	try {
		const tag = Date.now().toString(36);
		const seedClient = await pool.connect();
		const t0 = performance.now();
		const campaignId = await seedBenchCampaign(seedClient, tag);
		seedClient.release();
		const seeded = (performance.now() - t0) / 1000;
		const { rows: [n] } = await pool.query(
			`SELECT (SELECT count(*) FROM runs WHERE campaign_id = $1) AS runs,
			        (SELECT count(*) FROM points p JOIN reductions rd ON rd.id = p.reduction_id JOIN runs r ON r.id = rd.run_id WHERE r.campaign_id = $1) AS points,
			        (SELECT count(*) FROM deltas d JOIN runs r ON r.id = d.run_id WHERE r.campaign_id = $1) AS deltas`,
			[campaignId]
		);

		if (!url) {
			const buildDir = process.env.SPANLINE_BENCH_BUILD ?? join(root, 'build');
			if (!existsSync(join(buildDir, 'index.js'))) sh('npx', ['vite', 'build']);
			const port = 3291;
			url = `http://127.0.0.1:${port}`;
			child = spawn('node', [buildDir], {
				env: { ...process.env, DATABASE_URL: databaseUrl, AUTH_SECRET: fileEnv.AUTH_SECRET, HOST: '127.0.0.1', PORT: String(port), ORIGIN: url, SPANLINE_ENV: 'bench', LOG_LEVEL: 'warn' },
				stdio: ['ignore', 'pipe', 'inherit']
			});
			let out = '';
			child.stdout!.on('data', (d) => (out += d));
			const until = Date.now() + 30_000;
			while (!out.includes('Listening on') && Date.now() < until) await new Promise((r) => setTimeout(r, 100));
		}
		const [user] = (await getSequelize().query(`SELECT id, name, email, role FROM users WHERE role = 'program_manager' LIMIT 1`, { type: 'SELECT' as never })) as unknown as { id: string; name: string; email: string; role: 'program_manager' }[];
		const { token } = await createToken({ actor: user }, { ownerId: user.id, name: `bench summary ${tag}` });
		const path = `/api/v1/campaigns/${campaignId}/summary`;
		const coldStart = performance.now();
		const probe = await fetch(url + path, { headers: { authorization: `Bearer ${token}` } });
		const coldMs = performance.now() - coldStart;
		const probeBody = await probe.text();
		if (probe.status !== 200) throw new Error(`summary answered ${probe.status}: ${probeBody.slice(0, 300)}`);

		// Warm both paths once (plans, caches) before measuring.
		await pool.query(SUMMARY_SQL.replace(/:campaignId/g, '$1'), [campaignId]);

		// Baselines: bare statements, CONNECTIONS at a time for the same duration each —
		// the full summary computation, and the snapshot read the route runs while the data is unchanged.
		const hammer = async (text: string): Promise<number[]> => {
			const times: number[] = [];
			const stopAt = performance.now() + DURATION_S * 1000;
			await Promise.all(
				Array.from({ length: CONNECTIONS }, async () => {
					const c = await pool.connect();
					try {
						while (performance.now() < stopAt) {
							const s = performance.now();
							await c.query(text, [campaignId]);
							times.push(performance.now() - s);
						}
					} finally {
						c.release();
					}
				})
			);
			return times.sort((a, b) => a - b);
		};
		const sqlTimes = await hammer(SUMMARY_SQL.replace(/:campaignId/g, '$1'));
		const snapTimes = await hammer(SNAPSHOT_SQL.replace(/:campaignId/g, '$1'));

		// Every response's latency, for percentiles of our own (autocannon's summary has no p95 bucket).
		const httpTimes: number[] = [];
		const instance = autocannon({ url: url + path, connections: CONNECTIONS, duration: DURATION_S, headers: { authorization: `Bearer ${token}` } });
		instance.on('response', (_client: unknown, _status: number, _bytes: number, ms: number) => httpTimes.push(ms));
		const result = await instance;
		const non2xx = result.non2xx + result.errors + result.timeouts;
		httpTimes.sort((a, b) => a - b);
		const httpP95 = percentile(httpTimes, 95);
		const sqlP95 = percentile(sqlTimes, 95);

		console.log('');
		console.log('campaign summary benchmark');
		console.log(`  data                 ${n.runs} runs, ${Number(n.points).toLocaleString('en-US')} points, ${Number(n.deltas).toLocaleString('en-US')} current deltas over ${CONFIGURATIONS} configurations (seeded in ${seeded.toFixed(1)} s)`);
		console.log(`  response             ${(probeBody.length / 1024).toFixed(0)} KiB JSON`);
		console.log(`  machine              ${(await import('node:os')).cpus().length} CPUs, load ${(await import('node:os')).loadavg().map((l) => l.toFixed(2)).join(' ')}`);
		console.log(`  HTTP (${CONNECTIONS} clients, ${DURATION_S} s) p50 ${percentile(httpTimes, 50).toFixed(1)} ms   p95 ${httpP95.toFixed(1)} ms   p99 ${percentile(httpTimes, 99).toFixed(1)} ms   ${result.requests.average.toFixed(1)} req/s   ${result.requests.total} requests, ${non2xx} not 2xx`);
		const snapP95 = percentile(snapTimes, 95);
		console.log(`  first request (cold: computes and stores the snapshot) ${coldMs.toFixed(0)} ms`);
		console.log(`  bare SQL, full summary statement (${CONNECTIONS} conns)  p50 ${percentile(sqlTimes, 50).toFixed(1)} ms   p95 ${sqlP95.toFixed(1)} ms   ${(sqlTimes.length / DURATION_S).toFixed(1)} queries/s`);
		console.log(`  bare SQL, snapshot read the route runs (${CONNECTIONS} conns)  p50 ${percentile(snapTimes, 50).toFixed(1)} ms   p95 ${snapP95.toFixed(1)} ms   ${(snapTimes.length / DURATION_S).toFixed(1)} queries/s`);
		console.log(`  ratio p95 HTTP / full statement   ${(httpP95 / sqlP95).toFixed(2)}`);
		console.log(`  ratio p95 HTTP / snapshot read    ${(httpP95 / snapP95).toFixed(2)}   (target ≤ 3)`);
		console.log(`  target p95           < 150 ms: ${httpP95 < 150 ? 'met' : 'NOT met'}`);
	} finally {
		await pool.end();
		await closeSequelize();
		if (child) child.kill('SIGTERM');
	}
}

if (process.argv[1] && import.meta.filename === (await import('node:fs')).realpathSync(process.argv[1])) {
	main().catch((e) => {
		console.error(e);
		process.exit(1);
	});
}
