// PostgreSQL lifecycle for Spanline: a private cluster under .data/postgres,
// listening on 127.0.0.1 only, on the project port (SPANLINE_PG_PORT, default
// 55432). Every function is idempotent: a second call reuses the running or
// stopped cluster and keeps its data.
//
// Admin work (roles, databases) goes through the cluster's own unix socket as
// the `postgres` superuser (local trust; the socket folder is private to the
// cluster owner). The application connects over TCP as `spanline` with a
// scram-sha-256 password from .env.
import { spawnSync } from 'node:child_process';
import { chownSync, existsSync, mkdirSync, readFileSync, readdirSync, writeFileSync, appendFileSync } from 'node:fs';
import { createHash } from 'node:crypto';
import { dirname, join } from 'node:path';
import pg from 'pg';
import { ensureEnv, projectRoot } from './env.mjs';

export const HOST = '127.0.0.1';
export const APP_ROLE = 'spanline';
export const SUPERUSER = 'postgres';

export const dataRoot = join(projectRoot, '.data', 'postgres');
export const dataDir = join(dataRoot, 'data');
// Unix socket paths are limited to about 107 bytes; a deep checkout falls back to a
// private folder under /tmp named after the project path.
const socketInTree = join(dataRoot, 'socket');
export const socketDir =
	Buffer.byteLength(join(socketInTree, '.s.PGSQL.65535')) <= 100
		? socketInTree
		: join('/tmp', `spanline-pg-${createHash('sha256').update(projectRoot).digest('hex').slice(0, 12)}`);
export const logFile = join(dataRoot, 'postgres.log');

const isRoot = typeof process.getuid === 'function' && process.getuid() === 0;

/** The project port: SPANLINE_PG_PORT from the environment or .env, default 55432. */
export function pgPort() {
	ensureEnv();
	const port = Number(process.env.SPANLINE_PG_PORT ?? 55432);
	if (!Number.isInteger(port) || port < 1024 || port > 65535) {
		throw new Error(`SPANLINE_PG_PORT must be an integer between 1024 and 65535, got "${process.env.SPANLINE_PG_PORT}"`);
	}
	return port;
}

function password() {
	ensureEnv();
	const pw = process.env.SPANLINE_DB_PASSWORD;
	if (!pw) throw new Error('SPANLINE_DB_PASSWORD is empty; delete the line from .env to regenerate it');
	return pw;
}

/** Connection URL for the application role: postgres://spanline:<pw>@127.0.0.1:<port>/<name>. */
export function databaseUrl(name) {
	checkName(name);
	return `postgres://${APP_ROLE}:${encodeURIComponent(password())}@${HOST}:${pgPort()}/${name}`;
}

function checkName(name) {
	// Database names go into DDL unquoted-safe; keep them to a plain identifier.
	if (typeof name !== 'string' || !/^[a-z_][a-z0-9_]{0,62}$/.test(name)) {
		throw new Error(`invalid database name "${name}" (use lower-case letters, digits and _)`);
	}
}

// ---------------------------------------------------------------- binaries

/** Folder with pg_ctl/initdb: PG_BIN if set, else the newest /usr/lib/postgresql/<v>/bin. */
export function findBinDir() {
	if (process.env.PG_BIN && existsSync(join(process.env.PG_BIN, 'pg_ctl'))) return process.env.PG_BIN;
	const base = '/usr/lib/postgresql';
	if (!existsSync(base)) return null;
	const versions = readdirSync(base)
		.filter((v) => /^\d+$/.test(v) && existsSync(join(base, v, 'bin', 'pg_ctl')))
		.sort((a, b) => Number(b) - Number(a));
	return versions.length ? join(base, versions[0], 'bin') : null;
}

function installBinaries(log) {
	if (!isRoot) {
		throw new Error(
			'PostgreSQL server binaries are missing and this process is not root, so they cannot be installed.\n' +
				'Install them once (Debian/Ubuntu: `sudo apt-get install -y postgresql`) or set PG_BIN to the folder holding pg_ctl.'
		);
	}
	if (!existsSync('/usr/bin/apt-get')) {
		throw new Error('PostgreSQL server binaries are missing and apt-get is not available; install PostgreSQL 15+ and set PG_BIN.');
	}
	// Debian's package would otherwise create and start its own "main" cluster on 5432; we only want the binaries.
	const ccDir = '/etc/postgresql-common';
	const ccFile = join(ccDir, 'createcluster.conf');
	if (!existsSync(ccFile)) {
		mkdirSync(ccDir, { recursive: true });
		writeFileSync(ccFile, '# written by Spanline scripts/lib/postgres.mjs: binaries only, no default cluster\ncreate_main_cluster = false\n');
	}
	const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
	// confold keeps the createcluster.conf written above when the package brings its own.
	const install = ['install', '-y', '--no-install-recommends', '-o', 'Dpkg::Options::=--force-confdef', '-o', 'Dpkg::Options::=--force-confold', 'postgresql'];
	for (const args of [['update'], install]) {
		log(`PostgreSQL binaries missing: running apt-get ${args.join(' ')} …`);
		const r = spawnSync('apt-get', args, { stdio: ['ignore', 'inherit', 'inherit'], env });
		if (r.status !== 0) {
			throw new Error(
				`apt-get ${args[0]} failed (exit ${r.status}). Without network access to the Debian mirrors PostgreSQL cannot be installed; ` +
					'install the `postgresql` package by hand or set PG_BIN.'
			);
		}
	}
	const bin = findBinDir();
	if (!bin) throw new Error('apt-get installed postgresql but no pg_ctl was found under /usr/lib/postgresql/*/bin');
	return bin;
}

let cachedBin = null;
function binDir(log = console.log) {
	if (!cachedBin) cachedBin = findBinDir() ?? installBinaries(log);
	return cachedBin;
}

// ------------------------------------------------------------ running tools

/** Run a PostgreSQL tool as the cluster owner (the server refuses to run as root). */
function runPg(tool, args, { allowFail = false } = {}) {
	const exe = join(binDir(), tool);
	const [cmd, argv] = isRoot ? ['runuser', ['-u', SUPERUSER, '--', exe, ...args]] : [exe, args];
	const r = spawnSync(cmd, argv, { encoding: 'utf8', cwd: dataRoot });
	if (r.error) throw new Error(`could not run ${tool}: ${r.error.message}`);
	if (r.status !== 0 && !allowFail) {
		throw new Error(`${tool} ${args.join(' ')} failed (exit ${r.status}):\n${r.stdout}${r.stderr}${logTail()}`);
	}
	return r;
}

function logTail(lines = 30) {
	if (!existsSync(logFile)) return '';
	const text = readFileSync(logFile, 'utf8').trimEnd().split('\n').slice(-lines).join('\n');
	return `\n--- last lines of ${logFile} ---\n${text}\n---`;
}

function ownerIds() {
	const id = (flag) => Number(spawnSync('id', [flag, SUPERUSER], { encoding: 'utf8' }).stdout.trim());
	const uid = id('-u');
	const gid = id('-g');
	if (!Number.isInteger(uid) || !Number.isInteger(gid)) {
		throw new Error(`running as root but there is no "${SUPERUSER}" OS user to own the cluster (the Debian package creates it)`);
	}
	return { uid, gid };
}

// The cluster owner must be able to reach .data/postgres. A checkout inside a
// private folder (e.g. /root) would stop it: grant traverse-only permission (o+x,
// no listing) on the ancestors that lack it, and say so.
function ensureTraversable(log) {
	if (!isRoot) return;
	const blocked = [];
	for (let dir = dirname(dataRoot); ; dir = dirname(dir)) {
		if (spawnSync('runuser', ['-u', SUPERUSER, '--', 'test', '-x', dir]).status !== 0) blocked.push(dir);
		if (dir === dirname(dir)) break;
	}
	for (const dir of blocked.reverse()) {
		log(`granting traverse permission (chmod o+x) on ${dir} so the ${SUPERUSER} user can reach the cluster`);
		const r = spawnSync('chmod', ['o+x', dir]);
		if (r.status !== 0) throw new Error(`the ${SUPERUSER} user cannot reach ${dataRoot} and chmod o+x ${dir} failed`);
	}
}

function ensureDirs(log) {
	mkdirSync(join(projectRoot, '.data'), { recursive: true, mode: 0o755 });
	for (const [dir, mode] of [
		[dataRoot, 0o755],
		[socketDir, 0o700]
	]) {
		mkdirSync(dir, { recursive: true, mode });
		if (isRoot) {
			const { uid, gid } = ownerIds();
			chownSync(dir, uid, gid);
		}
	}
}

// Settings rewritten before every start so a changed SPANLINE_PG_PORT takes effect.
function writeSettings(port) {
	const conf = join(dataDir, 'spanline.conf');
	writeFileSync(
		conf,
		[
			'# Managed by scripts/lib/postgres.mjs; rewritten on every start.',
			`listen_addresses = '${HOST}'`,
			`port = ${port}`,
			`unix_socket_directories = '${socketDir.replace(/'/g, "''")}'`,
			"password_encryption = 'scram-sha-256'",
			"timezone = 'UTC'",
			''
		].join('\n')
	);
	if (isRoot) {
		const { uid, gid } = ownerIds();
		chownSync(conf, uid, gid);
	}
}

function initCluster(log) {
	log(`creating PostgreSQL cluster in ${dataDir}`);
	runPg('initdb', [
		'-D',
		dataDir,
		'-U',
		SUPERUSER,
		'--auth-local=trust',
		'--auth-host=scram-sha-256',
		'--encoding=UTF8',
		'--locale=C'
	]);
	appendFileSync(join(dataDir, 'postgresql.conf'), "\n# Spanline settings\ninclude_if_exists = 'spanline.conf'\n");
}

// --------------------------------------------------------------- lifecycle

/** True when the cluster's server process is running. */
export function isRunning() {
	if (!existsSync(join(dataDir, 'PG_VERSION'))) return false;
	return runPg('pg_ctl', ['status', '-D', dataDir], { allowFail: true }).status === 0;
}

function adminClient(database = 'postgres') {
	return new pg.Client({ host: socketDir, port: pgPort(), user: SUPERUSER, database, connectionTimeoutMillis: 2000 });
}

async function withAdmin(fn, database = 'postgres') {
	const client = adminClient(database);
	await client.connect();
	try {
		return await fn(client);
	} finally {
		await client.end();
	}
}

async function waitUntilReady(timeoutMs = 30_000) {
	const deadline = Date.now() + timeoutMs;
	let lastError;
	while (Date.now() < deadline) {
		try {
			await withAdmin((c) => c.query('SELECT 1'));
			return;
		} catch (err) {
			lastError = err;
			await new Promise((r) => setTimeout(r, 250));
		}
	}
	throw new Error(`PostgreSQL did not accept connections within ${timeoutMs / 1000} s: ${lastError?.message}${logTail()}`);
}

/**
 * Install the binaries if missing, create the cluster if missing, start it if
 * stopped, wait until it accepts connections, and create or update the
 * application role `spanline` with the password from .env.
 * @returns {Promise<{ host: string, port: number }>}
 */
export async function ensurePostgres({ log = console.log } = {}) {
	ensureEnv();
	const port = pgPort();
	binDir(log);
	ensureDirs(log);
	ensureTraversable(log);
	if (!existsSync(join(dataDir, 'PG_VERSION'))) initCluster(log);
	if (isRunning()) {
		log(`PostgreSQL already running on ${HOST}:${port} (${dataDir})`);
	} else {
		writeSettings(port);
		log(`starting PostgreSQL on ${HOST}:${port}`);
		runPg('pg_ctl', ['start', '-D', dataDir, '-l', logFile, '-w', '-t', '60']);
	}
	await waitUntilReady();
	await ensureRole();
	return { host: HOST, port };
}

async function ensureRole() {
	const pw = password();
	await withAdmin(async (c) => {
		const { rowCount } = await c.query('SELECT 1 FROM pg_roles WHERE rolname = $1', [APP_ROLE]);
		// The server hashes the literal with scram-sha-256 (password_encryption above).
		const verb = rowCount ? 'ALTER' : 'CREATE';
		await c.query(`${verb} ROLE ${APP_ROLE} WITH LOGIN NOSUPERUSER NOCREATEDB NOCREATEROLE PASSWORD ${c.escapeLiteral(pw)}`);
	});
}

/** Create database `name` owned by `spanline` if it does not exist. Returns true when created. */
export async function ensureDatabase(name) {
	checkName(name);
	return withAdmin(async (c) => {
		const { rowCount } = await c.query('SELECT 1 FROM pg_database WHERE datname = $1', [name]);
		if (rowCount) return false;
		await c.query(`CREATE DATABASE ${name} OWNER ${APP_ROLE} ENCODING 'UTF8' TEMPLATE template0`);
		return true;
	});
}

/** Drop database `name` (disconnecting its sessions) if it exists and create it afresh, owned by `spanline`. */
export async function recreateDatabase(name) {
	checkName(name);
	await withAdmin(async (c) => {
		await c.query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`);
		await c.query(`CREATE DATABASE ${name} OWNER ${APP_ROLE} ENCODING 'UTF8' TEMPLATE template0`);
	});
}

/** Drop database `name` if it exists. */
export async function dropDatabase(name) {
	checkName(name);
	await withAdmin((c) => c.query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`));
}

/** Stop the cluster (fast shutdown: open sessions are disconnected). Returns false if it was not running. */
export async function stopPostgres({ log = console.log } = {}) {
	if (!isRunning()) {
		log('PostgreSQL is not running');
		return false;
	}
	runPg('pg_ctl', ['stop', '-D', dataDir, '-m', 'fast', '-w', '-t', '60']);
	log('PostgreSQL stopped (data kept in .data/postgres)');
	return true;
}

/** A short description of the cluster for `db:status`. */
export async function status() {
	const port = pgPort();
	const initialised = existsSync(join(dataDir, 'PG_VERSION'));
	const running = initialised && isRunning();
	let databases = [];
	if (running) {
		databases = await withAdmin(async (c) =>
			(await c.query("SELECT datname FROM pg_database WHERE NOT datistemplate AND datname <> 'postgres' ORDER BY 1")).rows.map(
				(r) => r.datname
			)
		);
	}
	return { initialised, running, host: HOST, port, dataDir, databases };
}
