// Project environment: the git-ignored .env at the project root holds the
// generated secrets (database password, Auth.js secret) and the database port.
// Builtins only, so it runs before `npm ci` has installed anything.
import { randomBytes } from 'node:crypto';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

/** Absolute path of the project root (two levels above this file). */
export const projectRoot = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');

/** Path of the project's .env file. */
export const envPath = join(projectRoot, '.env');

/** Keys the project needs, with a generator for each default value. */
const REQUIRED = [
	// URL-safe alphabet so the password never needs quoting in .env or a URL.
	['SPANLINE_DB_PASSWORD', () => randomBytes(24).toString('base64url')],
	['AUTH_SECRET', () => randomBytes(32).toString('base64url')],
	['SPANLINE_PG_PORT', () => '55432']
];

/** Parse KEY=VALUE lines; '#' comments and blank lines ignored; optional quotes stripped. */
export function parseEnv(text) {
	const out = {};
	for (const raw of text.split(/\r?\n/)) {
		const line = raw.trim();
		if (!line || line.startsWith('#')) continue;
		const m = /^(?:export\s+)?([A-Za-z_][A-Za-z0-9_]*)\s*=\s*(.*)$/.exec(line);
		if (!m) continue;
		let value = m[2];
		if (
			value.length >= 2 &&
			((value.startsWith('"') && value.endsWith('"')) || (value.startsWith("'") && value.endsWith("'")))
		) {
			value = value.slice(1, -1);
		}
		out[m[1]] = value;
	}
	return out;
}

/**
 * Make sure .env exists and holds every required key (existing keys are kept,
 * missing ones are generated and appended), then load it into process.env
 * without overriding variables that are already set.
 * @returns {Record<string, string>} the key/value pairs of .env
 */
export function ensureEnv() {
	const existed = existsSync(envPath);
	const text = existed ? readFileSync(envPath, 'utf8') : '';
	const values = parseEnv(text);
	const added = [];
	for (const [key, make] of REQUIRED) {
		if (values[key] === undefined || values[key] === '') {
			values[key] = make();
			added.push(`${key}=${values[key]}`);
		}
	}
	if (added.length > 0) {
		const header = existed
			? ''
			: '# Spanline local settings: generated on first start, git-ignored. Keep it secret.\n';
		const sep = text && !text.endsWith('\n') ? '\n' : '';
		writeFileSync(envPath, text + sep + header + added.join('\n') + '\n', { mode: 0o600 });
	}
	for (const [key, value] of Object.entries(values)) {
		if (process.env[key] === undefined) process.env[key] = value;
	}
	return values;
}
