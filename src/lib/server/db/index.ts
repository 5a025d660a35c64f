// The process's database connection. Created lazily on first use from
// DATABASE_URL; relative imports only, so scripts (tsx) can import it too.
import { Sequelize } from 'sequelize';
import { databaseUrlFromEnv, sequelizeOptions } from './config';
export { observeQueries } from './config';
import { initModels, type Models } from './models';
import './pg-types';

// Model classes and their JSON column types, initModels, authAdapterModels.
export * from './models';
export * from './errors';

let instance: Sequelize | null = null;

/** The shared Sequelize instance (one per process), created on first call. */
export function getSequelize(): Sequelize {
	if (!instance) instance = new Sequelize(databaseUrlFromEnv(), sequelizeOptions());
	return instance;
}

/** Models bound to the shared instance. */
export function getModels(): Models {
	return initModels(getSequelize());
}

/** Close the shared instance's pool (scripts and tests call this before exiting). */
export async function closeSequelize(): Promise<void> {
	const s = instance;
	instance = null;
	if (s) await s.close();
}

/** Create a separate instance for another database URL (tests, scripts); the caller closes it. */
export function createSequelize(url: string): Sequelize {
	return new Sequelize(url, sequelizeOptions());
}

export interface DatabaseCheck {
	ok: boolean;
	latencyMs?: number;
	error?: string;
}

/** SELECT 1 against the database, for the health endpoint. Never throws. */
export async function checkDatabase(): Promise<DatabaseCheck> {
	const started = performance.now();
	try {
		await getSequelize().query('SELECT 1', { raw: true });
		return { ok: true, latencyMs: Math.round((performance.now() - started) * 10) / 10 };
	} catch (err) {
		const e = err as { original?: { message?: string }; message?: string };
		return { ok: false, latencyMs: Math.round(performance.now() - started), error: e.original?.message || e.message || String(err) };
	}
}
