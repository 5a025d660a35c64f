#!/usr/bin/env node
// `npm run db:restore FILE [-- --into NAME] [--force]`: restore a backup made
// by `npm run db:backup` (pg_dump custom format) into a fresh database.
//
// The target is --into NAME, else the database named in the file name
// (backups/<db>-<stamp>.dump). An existing database is never overwritten
// unless --force is given; the demo database `spanline` gets its own warning.
// The dump is restored into a scratch database first, in one transaction, and
// only renamed to the target once pg_restore has succeeded — a corrupt or
// truncated file leaves the existing target untouched.
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { basename, join, resolve } from 'node:path';
import pg from 'pg';
import { ensureEnv } from './lib/env.mjs';
import { APP_ROLE, HOST, SUPERUSER, dropDatabase, ensurePostgres, findBinDir, pgPort, recreateDatabase, socketDir } from './lib/postgres.mjs';

export const DEMO_DATABASE = 'spanline';
const NAME = /^[a-z_][a-z0-9_]{0,62}$/;

/** `spanline_test-20261202T103107Z.dump` → `spanline_test`; null when the name does not follow that pattern. */
export function databaseFromFileName(file) {
	const m = /^([a-z_][a-z0-9_]{0,62})-\d{8}T\d{6}Z\.dump$/.exec(basename(file));
	return m ? m[1] : null;
}

/**
 * Both `npm run db:restore -- FILE --into NAME --force` and the shorter
 * `npm run db:restore FILE --into NAME --force` work: without `--`, npm takes
 * --into and --force as its own flags (npm_config_into / npm_config_force =
 * "true") and passes only the positional words, so a second word is the target.
 */
function parseArgs(argv, env = process.env) {
	const out = { file: null, into: null, force: env.npm_config_force === 'true' };
	const npmInto = env.npm_config_into === 'true';
	for (let i = 0; i < argv.length; i++) {
		const a = argv[i];
		if (a === '--into') out.into = argv[++i] ?? '';
		else if (a === '--force') out.force = true;
		else if (a === '-h' || a === '--help') out.help = true;
		else if (a.startsWith('--')) throw new Error(`unknown option "${a}"`);
		else if (!out.file) out.file = a;
		else if (npmInto && out.into === null) out.into = a;
		else throw new Error(`unexpected argument "${a}"`);
	}
	return out;
}

async function withAdmin(fn) {
	const client = new pg.Client({ host: socketDir, port: pgPort(), user: SUPERUSER, database: 'postgres', connectionTimeoutMillis: 5000 });
	await client.connect();
	try {
		return await fn(client);
	} finally {
		await client.end();
	}
}

async function databaseExists(name) {
	return withAdmin(async (c) => (await c.query('SELECT 1 FROM pg_database WHERE datname = $1', [name])).rowCount > 0);
}

function pgTool(tool, args) {
	const bin = findBinDir();
	if (!bin) throw new Error('PostgreSQL client binaries not found (set PG_BIN or install the postgresql package)');
	return spawnSync(join(bin, tool), args, {
		encoding: 'utf8',
		maxBuffer: 64 * 1024 * 1024,
		env: { ...process.env, PGPASSWORD: process.env.SPANLINE_DB_PASSWORD }
	});
}

/**
 * Restore `file` into database `into`. Throws (leaving any existing `into`
 * as it was) when the file is unreadable, the target exists without `force`,
 * or pg_restore fails.
 * @returns {Promise<{ database: string, replaced: boolean }>}
 */
export async function restore({ file, into, force = false }) {
	if (!NAME.test(into)) throw new Error(`invalid target database name "${into}" (lower-case letters, digits and _)`);
	if (!existsSync(file)) throw new Error(`backup file not found: ${file}`);
	// Reading the table of contents checks the format before anything is dropped or created.
	const list = pgTool('pg_restore', ['--list', file]);
	if (list.status !== 0) throw new Error(`${file} is not a readable pg_dump custom-format file: ${list.stderr.trim()}`);

	// The demo database is refused by name, whether or not it exists yet.
	if (into === DEMO_DATABASE && !force) {
		throw new Error(`"${into}" is the demo database; refusing to overwrite it. Restore elsewhere with --into NAME, or pass --force.`);
	}
	const exists = await databaseExists(into);
	if (exists && !force) {
		throw new Error(`database "${into}" already exists; refusing to overwrite it. Restore elsewhere with --into NAME, or pass --force to replace it.`);
	}

	const scratch = `${into.slice(0, 50)}_restoring`;
	await recreateDatabase(scratch);
	const r = pgTool('pg_restore', [
		'--no-password',
		`--host=${HOST}`,
		`--port=${pgPort()}`,
		`--username=${APP_ROLE}`,
		`--dbname=${scratch}`,
		// Objects belong to the application role whoever made the dump.
		'--no-owner',
		'--no-privileges',
		'--single-transaction',
		'--exit-on-error',
		file
	]);
	if (r.status !== 0) {
		await dropDatabase(scratch);
		throw new Error(`pg_restore failed (exit ${r.status}); "${into}" was not changed:\n${r.stderr.trim()}`);
	}
	await withAdmin(async (c) => {
		if (exists) await c.query(`DROP DATABASE ${into} WITH (FORCE)`);
		await c.query(`ALTER DATABASE ${scratch} RENAME TO ${into}`);
	});
	return { database: into, replaced: exists };
}

async function main() {
	const args = parseArgs(process.argv.slice(2));
	if (args.help || !args.file) {
		console.log('usage: npm run db:restore FILE [-- --into NAME] [--force]');
		if (!args.help) process.exitCode = 2;
		return;
	}
	ensureEnv();
	const file = resolve(args.file);
	const into = args.into ?? databaseFromFileName(file);
	if (!into) throw new Error(`cannot tell the database from the file name "${basename(file)}"; pass --into NAME`);
	await ensurePostgres({ log: () => {} });
	const { database, replaced } = await restore({ file, into, force: args.force });
	console.log(`restored ${file} into "${database}"${replaced ? ' (replaced the existing database)' : ''}`);
}

if (import.meta.url === `file://${process.argv[1]}`) {
	main().catch((err) => {
		console.error(`db:restore: ${err.message}`);
		process.exit(1);
	});
}
