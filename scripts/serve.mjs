// Serves the production build (`build/`) as `npm start` does: a small
// supervising primary and worker processes (node:cluster). The primary holds
// the listening socket and hands connections to the workers; it restarts a
// worker that dies and passes SIGTERM/SIGINT on, so in-flight requests finish
// (adapter-node's graceful shutdown) before it exits. Sessions are JWT cookies
// and all shared state lives in PostgreSQL (sign-in limits, the mail outbox
// with its lease, the digest schedule under an advisory lock), so any worker
// can answer any request.
//
//   node scripts/serve.mjs [build-folder]
//
// SPANLINE_WORKERS: number of workers. Default: one core less than the machine
// has (PostgreSQL on the same machine keeps a core), at least 1, at most 4 —
// on 2 cores two workers measured slower than one with `npm run bench:load`.
// SPANLINE_NODE_FLAGS: V8 flags for the workers, default
// `--max-semi-space-size=32`: a larger young generation makes the many
// short-lived objects of a request cheaper to collect (≈ 7 % more requests/s
// in `npm run bench:load` on the development machine).
import cluster from 'node:cluster';
import { availableParallelism } from 'node:os';
import { resolve } from 'node:path';
import { pathToFileURL } from 'node:url';

const buildDir = resolve(process.argv[2] ?? 'build');

if (cluster.isWorker) {
	// adapter-node emits this once its server has closed and in-flight requests
	// are answered; the IPC channel to the primary would keep the worker alive.
	process.once('sveltekit:shutdown', () => setImmediate(() => cluster.worker?.disconnect()));
	await import(pathToFileURL(resolve(buildDir, 'index.js')).href);
} else {
	const requested = Number(process.env.SPANLINE_WORKERS);
	const workers = Number.isInteger(requested) && requested > 0 ? requested : Math.max(1, Math.min(availableParallelism() - 1, 4));
	const flags = (process.env.SPANLINE_NODE_FLAGS ?? '--max-semi-space-size=32').split(/\s+/).filter(Boolean);
	cluster.setupPrimary({ execArgv: [...process.execArgv, ...flags], args: [buildDir] });

	let stopping = false;
	let announced = false;
	const restarts = [];
	cluster.on('listening', (_worker, address) => {
		const ready = Object.values(cluster.workers ?? {}).length >= workers;
		if (!announced && ready) {
			announced = true;
			const host = address.address?.includes(':') ? `[${address.address}]` : address.address;
			console.log(`Listening on http://${host}:${address.port} (${workers} worker process${workers === 1 ? '' : 'es'}, supervisor pid ${process.pid})`);
		}
	});
	cluster.on('exit', (worker, code, signal) => {
		if (stopping) {
			if (Object.keys(cluster.workers ?? {}).length === 0) process.exit(0);
			return;
		}
		const now = Date.now();
		while (restarts.length && now - restarts[0] > 60_000) restarts.shift();
		if (restarts.length >= 5) {
			console.error(`worker ${worker.process.pid} exited (${signal ?? code}); 5 restarts within a minute, giving up`);
			process.exit(1);
		}
		restarts.push(now);
		console.error(`worker ${worker.process.pid} exited (${signal ?? code}); starting a new one`);
		cluster.fork();
	});
	const stop = (sig) => {
		if (stopping) return;
		stopping = true;
		const alive = Object.values(cluster.workers ?? {});
		if (alive.length === 0) process.exit(0);
		for (const w of alive) w?.process.kill(sig);
	};
	process.on('SIGTERM', () => stop('SIGTERM'));
	process.on('SIGINT', () => stop('SIGINT'));
	for (let i = 0; i < workers; i++) cluster.fork();
}
