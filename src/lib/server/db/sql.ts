// Plain parameterised reads for the hottest paths (the token and session
// look-ups on every request, run and campaign detail). They borrow a
// connection from Sequelize's own pool — same limits, timeouts and type
// parsers — but skip sequelize.query()'s replacement rewriting, hooks and
// result formatting, which measured about 90 µs of CPU per statement here
// against about 110 µs for the statement itself through pg.
import type { PoolClient } from 'pg';
import { getSequelize } from './index';
import { reportQuery } from './config';
import { isDatabaseUnavailable } from './errors';

interface Manager {
	getConnection(options?: { type?: string }): Promise<PoolClient & { _invalid?: boolean }>;
	releaseConnection(connection: unknown): void;
}

/** Rows of one parameterised statement ($1, $2, …); values are sent separately, never spliced into the text. */
export async function statement<T = unknown>(text: string, values: readonly unknown[] = []): Promise<T[]> {
	const manager = getSequelize().connectionManager as unknown as Manager;
	const connection = await manager.getConnection({ type: 'SELECT' });
	const started = performance.now();
	try {
		return (await connection.query(text, values as unknown[])).rows as T[];
	} catch (err) {
		// As Sequelize does: a connection that failed at the network level is not handed out again.
		if (isDatabaseUnavailable(err)) connection._invalid = true;
		throw err;
	} finally {
		reportQuery(performance.now() - started);
		manager.releaseConnection(connection);
	}
}
