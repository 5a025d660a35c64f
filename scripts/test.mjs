// `npm test`: the same set-up as `npm start` against a test database created
// afresh each run, then the whole Vitest suite (unit, integration over real
// HTTP and PostgreSQL, browser tests in Debian's Chromium). The last line
// printed is the runner's summary.
import { existsSync, readFileSync, rmSync, mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { spawn } from 'node:child_process';
import { once } from 'node:events';
import { ensureDependencies, step, run, build, startChild, waitForHttp, mailEnv, root, acquireTestLock } from './lib/setup.mjs';

await acquireTestLock(join(root, '.data', 'npm-test.lock'));
ensureDependencies();
const { ensureEnv } = await import('./lib/env.mjs');
const pg = await import('./lib/postgres.mjs');

const fileEnv = ensureEnv();
const resultsDir = join(root, 'test-results');
rmSync(resultsDir, { recursive: true, force: true });
mkdirSync(resultsDir, { recursive: true });

if (!existsSync('/usr/bin/chromium')) {
	step('Installing Chromium from Debian packages for browser tests');
	if (process.getuid?.() !== 0) throw new Error('Chromium is missing and this is not root: run `sudo apt-get install -y chromium`.');
	run('apt-get', ['update']);
	run('apt-get', ['install', '-y', '--no-install-recommends', 'chromium']);
}

step('Starting PostgreSQL on 127.0.0.1');
await pg.ensurePostgres();
const testDb = 'spanline_test';
await pg.recreateDatabase(testDb);

const port = Number(process.env.SPANLINE_TEST_PORT ?? 3107);
const origin = `http://127.0.0.1:${port}`;
const smtpPort = Number(process.env.SPANLINE_TEST_SMTP_PORT ?? 2526);
const mailHttpPort = Number(process.env.SPANLINE_TEST_MAIL_HTTP_PORT ?? 2581);
const s3Port = Number(process.env.SPANLINE_TEST_S3_PORT ?? 4579);
const env = {
	...process.env,
	DATABASE_URL: pg.databaseUrl(testDb),
	AUTH_SECRET: fileEnv.AUTH_SECRET,
	SPANLINE_ENV: 'test',
	...mailEnv(smtpPort, mailHttpPort),
	HOST: '127.0.0.1',
	PORT: String(port),
	ORIGIN: origin,
	BODY_SIZE_LIMIT: 'Infinity',
	SPANLINE_TEST_URL: origin,
	// Tests give each client its own (documentation-range) address in
	// X-Forwarded-For, so one test's failure lock never blocks another's.
	// Production sets these only behind a trusted proxy.
	ADDRESS_HEADER: 'x-forwarded-for',
	XFF_DEPTH: '1',
	// The S3-compatible fake; the app itself stores raw files in PostgreSQL
	// unless SPANLINE_STORAGE=s3. Tests of the S3 backend use these.
	SPANLINE_TEST_S3_ENDPOINT: `http://127.0.0.1:${s3Port}`,
	S3_FAKE_PORT: String(s3Port),
	S3_FAKE_DIR: join(resultsDir, 's3'),
	S3_BUCKET: 'spanline-raw'
};

step(`Migrating and seeding the test database '${testDb}'`);
run('npx', ['tsx', 'scripts/migrate.ts', 'up'], { env, quiet: true });
run('npx', ['tsx', 'scripts/seed.ts'], { env, quiet: true });

build(env);

const children = [];
let exitCode = 1;
let summary = "Tests: 0 passed, 1 failed";
try {
	step('Starting the mail fake, the S3 fake and the built server');
	children.push(
		await startChild('s3 fake', 'node', ['scripts/s3-fake.mjs'], { env, ready: /s3 fake ready/, logFile: join(resultsDir, 's3-fake.log') })
	);
	children.push(
		await startChild('mail fake', 'node', ['scripts/mail-fake.mjs'], {
			env,
			ready: /mail fake ready/,
			logFile: join(resultsDir, 'mail-fake.log')
		})
	);
	children.push(
		await startChild('app server', 'node', ['build'], { env, ready: /Listening on/, logFile: join(resultsDir, 'server.log') })
	);
	await waitForHttp(`${origin}/api/v1/health`);

	step('Running the test suite (Vitest: unit, integration, e2e)');
	const jsonFile = join(resultsDir, 'vitest.json');
	// Asynchronous on purpose: while Vitest runs, this process must keep
	// draining the server's and fakes' output pipes into their logs (a full
	// pipe would block the server, and its log would be lost).
	const vitest = spawn(
		'npx',
		['vitest', 'run', '--reporter=default', '--reporter=json', `--outputFile.json=${jsonFile}`, ...process.argv.slice(2)],
		{ cwd: root, env, stdio: 'inherit' }
	);
	const [code] = await once(vitest, 'exit');
	exitCode = code ?? 1;
	if (existsSync(jsonFile)) {
		const report = JSON.parse(readFileSync(jsonFile, 'utf8'));
		const failed = report.numFailedTests + (report.numRuntimeErrorTestSuites ?? 0);
		if (report.numTotalTests === 0) exitCode = 1;
		summary = `Tests: ${report.numPassedTests} passed, ${failed} failed` +
			(report.numPendingTests ? `, ${report.numPendingTests} skipped` : '');
	} else {
		summary = "Tests: 0 passed, 1 failed";
	}
} finally {
	for (const child of children) child.kill('SIGTERM');
	await Promise.all(children.map((child) => (child.exitCode === null ? once(child, 'exit') : null)));
}
console.log(summary);
process.exit(exitCode);
