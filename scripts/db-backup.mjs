#!/usr/bin/env node
// `npm run db:backup [-- --db NAME] [--out DIR]`: a pg_dump of one Spanline
// database in PostgreSQL's custom format (compressed, restorable table by
// table with pg_restore) to backups/<db>-<UTC timestamp>.dump.
//
// The database is DATABASE_URL's when set, else the demo database `spanline`.
// pg_dump connects as the application role over 127.0.0.1 with the password
// from .env (PGPASSWORD in the child's environment only, never on a command
// line where `ps` would show it).
import { spawnSync } from 'node:child_process';
import { mkdirSync, renameSync, rmSync, statSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { ensureEnv, projectRoot } from './lib/env.mjs';
import { APP_ROLE, HOST, ensurePostgres, findBinDir, pgPort } from './lib/postgres.mjs';

export const DEMO_DATABASE = 'spanline';

/** Database name of a postgres:// URL (the path without its slash), or null. */
export function databaseFromUrl(url) {
	if (!url) return null;
	try {
		const name = decodeURIComponent(new URL(url).pathname.replace(/^\//, ''));
		return name || null;
	} catch {
		return null;
	}
}

/** 2026-12-02T10:31:07.123Z → 20261202T103107Z (sorts by time, safe in file names). */
export function utcStamp(date = new Date()) {
	return date.toISOString().replace(/\.\d{3}Z$/, 'Z').replace(/[-:]/g, '');
}

function parseArgs(argv) {
	const out = { db: null, outDir: join(projectRoot, 'backups') };
	for (let i = 0; i < argv.length; i++) {
		const a = argv[i];
		if (a === '--db') out.db = argv[++i];
		else if (a === '--out') out.outDir = resolve(argv[++i] ?? '');
		else if (a === '-h' || a === '--help') out.help = true;
		else throw new Error(`unknown argument "${a}"; usage: npm run db:backup [-- --db NAME] [--out DIR]`);
	}
	return out;
}

/**
 * Dump database `db` to `<outDir>/<db>-<stamp>.dump`. Written to a .partial
 * file first and renamed when pg_dump succeeds, so a failed or interrupted
 * backup never leaves a file that looks complete.
 * @returns {{ file: string, bytes: number }}
 */
export function backup({ db, outDir }) {
	if (!/^[a-z_][a-z0-9_]{0,62}$/.test(db)) throw new Error(`invalid database name "${db}"`);
	const bin = findBinDir();
	if (!bin) throw new Error('PostgreSQL client binaries not found (set PG_BIN or install the postgresql package)');
	mkdirSync(outDir, { recursive: true });
	const file = join(outDir, `${db}-${utcStamp()}.dump`);
	const partial = `${file}.partial`;
	const r = spawnSync(
		join(bin, 'pg_dump'),
		['--format=custom', '--compress=6', '--no-password', `--host=${HOST}`, `--port=${pgPort()}`, `--username=${APP_ROLE}`, `--file=${partial}`, db],
		{ encoding: 'utf8', env: { ...process.env, PGPASSWORD: process.env.SPANLINE_DB_PASSWORD } }
	);
	if (r.error || r.status !== 0) {
		rmSync(partial, { force: true });
		throw new Error(`pg_dump of "${db}" failed (exit ${r.status}): ${(r.stderr || r.error?.message || '').trim()}`);
	}
	renameSync(partial, file);
	return { file, bytes: statSync(file).size };
}

async function main() {
	const args = parseArgs(process.argv.slice(2));
	if (args.help) {
		console.log('usage: npm run db:backup [-- --db NAME] [--out DIR]\nWrites backups/<db>-<UTC timestamp>.dump (pg_dump custom format).');
		return;
	}
	ensureEnv();
	await ensurePostgres({ log: () => {} });
	const db = args.db ?? databaseFromUrl(process.env.DATABASE_URL) ?? DEMO_DATABASE;
	const { file, bytes } = backup({ db, outDir: args.outDir });
	console.log(`backup of "${db}" written: ${file} (${(bytes / 1024).toFixed(1)} KiB)`);
}

if (import.meta.url === `file://${process.argv[1]}`) {
	main().catch((err) => {
		console.error(`db:backup: ${err.message}`);
		process.exit(1);
	});
}
