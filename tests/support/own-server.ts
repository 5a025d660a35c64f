// A copy of the production build on a port of its own, for tests that need
// their own server (another ORIGIN, another database, faults). Its output goes
// to a log file the test can read; `ownServer` resolves once
// /api/v1/health answers 200.
import { spawn, type ChildProcess } from 'node:child_process';
import { once } from 'node:events';
import { closeSync, mkdirSync, openSync, readFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { dirname } from 'node:path';
import { projectRoot } from '../../scripts/lib/env.mjs';

export interface OwnServer {
	process: ChildProcess;
	/** http://127.0.0.1:<port>, where to connect (the app's ORIGIN may differ). */
	url: string;
	logPath: string;
	/** SIGTERM, then wait for the exit (no-op when it has already exited). */
	stop(): Promise<void>;
}

export async function ownServer(opts: { port: number; logPath: string; env?: Record<string, string>; args?: string[]; append?: boolean }): Promise<OwnServer> {
	const url = `http://127.0.0.1:${opts.port}`;
	mkdirSync(dirname(opts.logPath), { recursive: true });
	const fd = openSync(opts.logPath, opts.append ? 'a' : 'w');
	const child = spawn('node', opts.args ?? ['build'], {
		cwd: projectRoot,
		env: { ...process.env, PORT: String(opts.port), HOST: '127.0.0.1', ORIGIN: url, ...opts.env },
		stdio: ['ignore', fd, fd]
	});
	closeSync(fd);
	for (const until = Date.now() + 30_000; ; ) {
		if (child.exitCode !== null) throw new Error(`own server exited with ${child.exitCode}: ${readFileSync(opts.logPath, 'utf8').slice(-2000)}`);
		try {
			if ((await fetch(`${url}/api/v1/health`)).ok) break;
		} catch {
			/* not listening yet */
		}
		if (Date.now() > until) throw new Error(`own server did not start; see ${opts.logPath}`);
		await new Promise((r) => setTimeout(r, 200));
	}
	return {
		process: child,
		url,
		logPath: opts.logPath,
		async stop() {
			if (child.exitCode !== null || child.signalCode !== null) return;
			const exited = once(child, 'exit');
			child.kill('SIGTERM');
			await exited;
		}
	};
}

/** A free loopback port in [from, from + 100): each test that needs one keeps to its own range. */
export async function freePort(from: number): Promise<number> {
	for (let attempt = 0; attempt < 50; attempt++) {
		const port = from + Math.floor(Math.random() * 100);
		const free = await new Promise<boolean>((resolve) => {
			const probe = createServer();
			probe.once('error', () => resolve(false));
			probe.listen(port, '127.0.0.1', () => probe.close(() => resolve(true)));
		});
		if (free) return port;
	}
	throw new Error(`no free port in ${from}–${from + 99}`);
}
