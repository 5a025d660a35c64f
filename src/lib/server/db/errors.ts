import { BaseError, ConnectionError, ConnectionAcquireTimeoutError, TimeoutError } from 'sequelize';

/** Network-level failures that mean "PostgreSQL is not there right now". */
const NETWORK_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'ETIMEDOUT', 'EPIPE', 'EHOSTUNREACH', 'ENOTCONN']);
/** SQLSTATE classes 08 (connection exception) and 57P0x (admin/crash shutdown, cannot connect now). */
const SQLSTATE = /^(08\d{3}|57P0[1-3])$/;

/**
 * True when an error means the database is unreachable (refused, reset,
 * timed out, shutting down) rather than a bug or a bad query: such requests
 * are answered 503, not 500.
 */
export function isDatabaseUnavailable(err: unknown): boolean {
	if (err instanceof ConnectionError || err instanceof ConnectionAcquireTimeoutError || err instanceof TimeoutError) return true;
	let e: unknown = err;
	for (let depth = 0; e && typeof e === 'object' && depth < 4; depth++) {
		const { code, message } = e as { code?: unknown; message?: unknown };
		if (typeof code === 'string' && (NETWORK_CODES.has(code) || SQLSTATE.test(code))) return true;
		if (typeof message === 'string' && /Connection terminated|connection timeout|Client has encountered a connection error/i.test(message)) return true;
		e = (e as { original?: unknown; parent?: unknown; cause?: unknown }).original ?? (e as { parent?: unknown }).parent ?? (e as { cause?: unknown }).cause;
	}
	return err instanceof BaseError && err.name === 'SequelizeConnectionError';
}
