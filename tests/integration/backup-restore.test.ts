// `npm run db:backup` and `npm run db:restore` end to end against the real
// cluster: a database migrated and seeded with the demo scenario is dumped,
// restored into a fresh database, and every table compared (row count and an
// md5 over the table's rows in a fixed order). Works on its own scratch
// databases; never touches the demo or the shared test database.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import pg from 'pg';
import { ensureEnv, projectRoot } from '../../scripts/lib/env.mjs';
import { databaseUrl, dropDatabase, ensurePostgres, recreateDatabase } from '../../scripts/lib/postgres.mjs';

const SOURCE = 'spanline_backup_src';
const TARGET = 'spanline_backup_dst';
const outDir = mkdtempSync(join(tmpdir(), 'spanline-backup-'));

function run(command: string, args: string[], env: Record<string, string | undefined> = {}) {
	const r = spawnSync(command, args, { cwd: projectRoot, encoding: 'utf8', env: { ...process.env, ...env } });
	return { status: r.status, out: `${r.stdout ?? ''}${r.stderr ?? ''}` };
}

interface TableFingerprint {
	rows: number;
	md5: string;
}

/** Row count and md5 of every base table in the public schema, rows ordered by their text form. */
async function fingerprint(db: string): Promise<Record<string, TableFingerprint>> {
	const client = new pg.Client({ connectionString: databaseUrl(db) });
	await client.connect();
	try {
		const tables = (
			await client.query(
				"SELECT table_name FROM information_schema.tables WHERE table_schema = 'public' AND table_type = 'BASE TABLE' ORDER BY 1"
			)
		).rows.map((r) => r.table_name as string);
		const out: Record<string, TableFingerprint> = {};
		for (const t of tables) {
			const q = client.escapeIdentifier(t);
			const { rows } = await client.query(
				`SELECT count(*)::int AS n, md5(coalesce(string_agg(x::text, E'\\n' ORDER BY x::text), '')) AS h FROM ${q} x`
			);
			out[t] = { rows: rows[0].n, md5: rows[0].h };
		}
		// Sequences too: a restore that loses their positions breaks the next insert.
		const seqs = await client.query('SELECT sequencename, last_value FROM pg_sequences WHERE schemaname = $1 ORDER BY 1', ['public']);
		for (const s of seqs.rows) out[`sequence:${s.sequencename}`] = { rows: 1, md5: String(s.last_value) };
		return out;
	} finally {
		await client.end();
	}
}

beforeAll(async () => {
	ensureEnv();
	await ensurePostgres({ log: () => {} });
	await dropDatabase(TARGET);
	await recreateDatabase(SOURCE);
	const env = { DATABASE_URL: databaseUrl(SOURCE) };
	const migrate = run('npx', ['tsx', 'scripts/migrate.ts', 'up'], env);
	expect(migrate.status, migrate.out).toBe(0);
	const seed = run('npx', ['tsx', 'scripts/seed.ts'], env);
	expect(seed.status, seed.out).toBe(0);
	// The demo seed has no raw data; add a stored file (binary bytes with NULs,
	// a non-ASCII name, JSONB) and 5,000 samples with awkward doubles so the
	// comparison covers the bulk tables and the types a dump could mangle.
	const client = new pg.Client({ connectionString: databaseUrl(SOURCE) });
	await client.connect();
	try {
		const runId = (await client.query('SELECT min(id) AS id FROM runs')).rows[0].id;
		const bytes = Buffer.from(Array.from({ length: 4096 }, (_, i) => (i * 37) % 256));
		const file = await client.query(
			`INSERT INTO source_files (run_id, name, size, sha256, content_type, bytes, column_mapping)
			 VALUES ($1, $2, $3, $4, 'text/csv', $5, $6) RETURNING id`,
			[runId, 'Läufe α=4° – ü.csv', bytes.length, 'f'.repeat(64), bytes, JSON.stringify({ alpha: 'α [deg]', note: 'quote " and \\ backslash' })]
		);
		await client.query(
			`INSERT INTO samples (run_id, source_file_id, row_index, "values")
			 SELECT $1, $2, i, ARRAY[i * 0.1, -0.0, 1e-300, 'NaN'::float8, 'Infinity'::float8, 1.0 / 3.0]
			 FROM generate_series(0, 4999) AS i`,
			[runId, file.rows[0].id]
		);
	} finally {
		await client.end();
	}
});

afterAll(async () => {
	await dropDatabase(SOURCE);
	await dropDatabase(TARGET);
	await dropDatabase(`${TARGET}_restoring`);
	rmSync(outDir, { recursive: true, force: true });
});

describe('database backup and restore', () => {
	let dumpFile = '';

	it('writes a timestamped custom-format dump with npm run db:backup', () => {
		const r = run('npm', ['run', '--silent', 'db:backup', '--', '--db', SOURCE, '--out', outDir]);
		expect(r.status, r.out).toBe(0);
		const files = readdirSync(outDir);
		expect(files).toHaveLength(1);
		expect(files[0]).toMatch(new RegExp(`^${SOURCE}-\\d{8}T\\d{6}Z\\.dump$`));
		dumpFile = join(outDir, files[0]);
		// pg_dump's custom format starts with the magic bytes "PGDMP".
		expect(readFileSync(dumpFile).subarray(0, 5).toString('latin1')).toBe('PGDMP');
		expect(r.out).toContain(dumpFile);
	});

	it('restores into a fresh database with every table, row and sequence identical', async () => {
		const r = run('npm', ['run', '--silent', 'db:restore', '--', dumpFile, '--into', TARGET]);
		expect(r.status, r.out).toBe(0);
		const [before, after] = [await fingerprint(SOURCE), await fingerprint(TARGET)];
		// The seed fills users, campaigns, runs…: a comparison of empty tables would prove nothing.
		expect(Object.keys(before).length).toBeGreaterThan(10);
		expect(before.users.rows).toBeGreaterThanOrEqual(4);
		expect(before.samples.rows).toBe(5000);
		expect(before.source_files.rows).toBe(1);
		expect(after).toEqual(before);
	});

	it('gives a restored database that the app role can write to', async () => {
		const client = new pg.Client({ connectionString: databaseUrl(TARGET) });
		await client.connect();
		try {
			const before = (await client.query('SELECT count(*)::int AS n FROM facilities')).rows[0].n;
			await client.query('BEGIN');
			await client.query('DELETE FROM audit_events');
			await client.query('ROLLBACK');
			expect((await client.query('SELECT count(*)::int AS n FROM facilities')).rows[0].n).toBe(before);
		} finally {
			await client.end();
		}
	});

	it('refuses to overwrite an existing database without --force, and leaves it unchanged', async () => {
		const before = await fingerprint(TARGET);
		const r = run('npm', ['run', '--silent', 'db:restore', '--', dumpFile, '--into', TARGET]);
		expect(r.status).not.toBe(0);
		expect(r.out).toMatch(/already exists; refusing to overwrite it.*--force/s);
		expect(await fingerprint(TARGET)).toEqual(before);
	});

	it('refuses the demo database by name without --force, whether or not it exists', () => {
		const r = run('npm', ['run', '--silent', 'db:restore', '--', dumpFile, '--into', 'spanline']);
		expect(r.status).not.toBe(0);
		expect(r.out).toMatch(/"spanline" is the demo database; refusing to overwrite it/);
	});

	it('rejects a truncated dump and keeps the existing target intact, even with --force', async () => {
		const before = await fingerprint(TARGET);
		const bytes = readFileSync(dumpFile);
		const cut = join(outDir, 'truncated.dump');
		writeFileSync(cut, bytes.subarray(0, Math.floor(bytes.length * 0.6)));
		const r = run('npm', ['run', '--silent', 'db:restore', '--', cut, '--into', TARGET, '--force']);
		expect(r.status).not.toBe(0);
		expect(r.out).toMatch(/pg_restore|not a readable pg_dump/);
		expect(await fingerprint(TARGET)).toEqual(before);
	});

	it('replaces an existing database with --force', async () => {
		const client = new pg.Client({ connectionString: databaseUrl(TARGET) });
		await client.connect();
		await client.query('DELETE FROM audit_events');
		await client.end();
		const r = run('npm', ['run', '--silent', 'db:restore', '--', dumpFile, '--into', TARGET, '--force']);
		expect(r.status, r.out).toBe(0);
		expect(r.out).toMatch(/replaced the existing database/);
		expect(await fingerprint(TARGET)).toEqual(await fingerprint(SOURCE));
	});
});
