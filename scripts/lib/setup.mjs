// Shared steps of `npm start` and `npm test`: dependencies, build, the mail
// fake and the production server as child processes. Builtins only, so it
// runs before `npm ci` has installed anything.
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, statSync, mkdirSync, createWriteStream } from 'node:fs';
import { join, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';

export const root = join(dirname(fileURLToPath(import.meta.url)), '..', '..');

export function step(message) {
	console.log(`\n\x1b[1m▸ ${message}\x1b[0m`);
}

/** Run a command to completion in the project root; throw with its name on failure. */
export function run(command, args, { env = process.env, quiet = false } = {}) {
	const result = spawnSync(command, args, { cwd: root, env, stdio: quiet ? 'pipe' : 'inherit', encoding: 'utf8' });
	if (result.status !== 0) {
		const tail = quiet ? `\n${(result.stdout ?? '') + (result.stderr ?? '')}`.slice(-4000) : '';
		throw new Error(`'${command} ${args.join(' ')}' failed with exit code ${result.status}${tail}`);
	}
	return result;
}

/** `npm ci` when node_modules is missing or older than the lockfile. */
export function ensureDependencies() {
	const lock = join(root, 'package-lock.json');
	const marker = join(root, 'node_modules', '.package-lock.json');
	if (!existsSync(marker) || statSync(marker).mtimeMs < statSync(lock).mtimeMs) {
		step('Installing dependencies (npm ci)');
		run('npm', ['ci', '--no-audit', '--no-fund']);
	}
}

export function build(env) {
	step('Building the app (vite build)');
	run('npx', ['vite', 'build'], { env, quiet: true });
}

/**
 * Start a long-running child; resolve once a line of its output matches
 * `ready` (or reject on exit / timeout). Output also goes to `logFile`.
 */
export function startChild(name, command, args, { env, ready, logFile, timeoutMs = 30_000, echo = false }) {
	mkdirSync(dirname(logFile), { recursive: true });
	const log = createWriteStream(logFile, { flags: 'a' });
	const child = spawn(command, args, { cwd: root, env, stdio: ['ignore', 'pipe', 'pipe'] });
	let seen = '';
	return new Promise((resolve, reject) => {
		const timer = setTimeout(() => {
			child.kill('SIGTERM');
			reject(new Error(`${name} did not become ready within ${timeoutMs} ms; see ${logFile}\n${seen.slice(-2000)}`));
		}, timeoutMs);
		const onData = (chunk) => {
			log.write(chunk);
			if (echo) process.stdout.write(chunk);
			if (seen !== null) {
				seen += chunk.toString();
				if (ready.test(seen)) {
					seen = null;
					clearTimeout(timer);
					resolve(child);
				} else if (seen.length > 100_000) seen = seen.slice(-10_000);
			}
		};
		child.stdout.on('data', onData);
		child.stderr.on('data', onData);
		child.on('close', () => log.end());
		child.on('exit', (code) => {
			clearTimeout(timer);
			if (seen !== null) reject(new Error(`${name} exited with code ${code} before it was ready; see ${logFile}\n${seen.slice(-2000)}`));
		});
	});
}

/** Poll a URL until it answers 200 (the server is up and reaches the database). */
export async function waitForHttp(url, timeoutMs = 30_000) {
	const until = Date.now() + timeoutMs;
	let last = '';
	while (Date.now() < until) {
		try {
			const res = await fetch(url);
			if (res.ok) return;
			last = `HTTP ${res.status}`;
		} catch (e) {
			last = e.cause?.code ?? e.message;
		}
		await new Promise((r) => setTimeout(r, 250));
	}
	throw new Error(`${url} did not answer 200 within ${timeoutMs} ms (last: ${last})`);
}

/** Environment for the mail fake and for the app's SMTP settings. */
export function mailEnv(smtpPort, httpPort) {
	return {
		SMTP_HOST: process.env.SMTP_HOST ?? '127.0.0.1',
		SMTP_PORT: String(smtpPort),
		SMTP_SECURE: 'false',
		SMTP_IGNORE_TLS: 'true',
		SMTP_USER: '',
		SMTP_PASSWORD: '',
		MAIL_FROM: process.env.MAIL_FROM ?? 'Spanline <spanline@localhost>',
		MAIL_FAKE_URL: `http://127.0.0.1:${httpPort}`,
		MAIL_FAKE_HTTP_PORT: String(httpPort)
	};
}

/**
 * One `npm test` at a time per checkout: runs share the build folder, the test
 * database and the ports. Waits for a running one; a lock whose process is
 * gone is taken over.
 */
export async function acquireTestLock(file, { timeoutMs = 30 * 60_000 } = {}) {
	const { openSync, writeSync, closeSync, readFileSync: read, unlinkSync } = await import('node:fs');
	mkdirSync(dirname(file), { recursive: true });
	const until = Date.now() + timeoutMs;
	let told = false;
	for (;;) {
		try {
			const fd = openSync(file, 'wx');
			writeSync(fd, String(process.pid));
			closeSync(fd);
			const release = () => {
				try {
					if (read(file, 'utf8') === String(process.pid)) unlinkSync(file);
				} catch {}
			};
			process.on('exit', release);
			return release;
		} catch (e) {
			if (e.code !== 'EEXIST') throw e;
			let holder = NaN;
			try {
				holder = Number(read(file, 'utf8'));
			} catch {}
			let alive = false;
			try {
				process.kill(holder, 0);
				alive = true;
			} catch {}
			if (!alive) {
				try {
					unlinkSync(file);
				} catch {}
				continue;
			}
			if (!told) {
				console.log(`waiting for another npm test (pid ${holder}) to finish…`);
				told = true;
			}
			if (Date.now() > until) throw new Error(`another npm test (pid ${holder}) holds ${file}`);
			await new Promise((r) => setTimeout(r, 1000));
		}
	}
}
