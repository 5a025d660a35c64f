// Connection settings, from the environment only (scripts run this code through
// tsx, where SvelteKit's $env modules do not exist).
import type { Options } from 'sequelize';
import pg from 'pg';

/** DATABASE_URL, or a clear error when it is missing. */
export function databaseUrlFromEnv(env: NodeJS.ProcessEnv = process.env): string {
	const url = env.DATABASE_URL;
	if (!url) {
		throw new Error(
			'DATABASE_URL is not set. `npm start` sets it; by hand use e.g. postgres://spanline:<password>@127.0.0.1:55432/spanline (password in .env).'
		);
	}
	return url;
}

type QueryObserver = (ms: number) => void;
let observer: QueryObserver | null = null;

/** Report every finished statement's duration (the request log counts them per request). */
export function observeQueries(fn: QueryObserver | null): void {
	observer = fn;
}

/** Tell the observer about a statement run outside Sequelize's query() (see sql.ts). */
export function reportQuery(ms: number): void {
	observer?.(ms);
}

function poolMax(env: NodeJS.ProcessEnv = process.env): number {
	const n = Number(env.SPANLINE_DB_POOL_MAX);
	return Number.isInteger(n) && n > 0 && n <= 80 ? n : 10;
}

/** Sequelize options shared by the app, the scripts and the tests. */
export function sequelizeOptions(): Options {
	return {
		dialect: 'postgres',
		// Passed explicitly so the bundler includes pg and Sequelize does not require() it dynamically.
		dialectModule: pg,
		// No SQL text is logged (it can carry user values); only each statement's duration is observed.
		logging: (_sql: string, ms?: number) => observer?.(typeof ms === 'number' ? ms : 0),
		benchmark: true,
		define: { underscored: true },
		// A down database must be reported within about 2 s, not hang a request.
		dialectOptions: { connectionTimeoutMillis: 2000, statement_timeout: 30_000 },
		// SPANLINE_DB_POOL_MAX connections per process (default 10); processes × pool must stay below PostgreSQL's max_connections (100).
		pool: { max: poolMax(), min: 0, acquire: 3000, idle: 10_000 },
		retry: { max: 0 }
	};
}
