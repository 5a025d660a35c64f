import { createHash, randomBytes } from 'node:crypto';

/**
 * High-entropy one-time secrets (invitation links, API tokens). They are
 * shown once and stored only as SHA-256 hex digests: with 256 random bits a
 * fast hash is enough, unlike passwords (common practice, no source).
 */
export function newSecret(prefix = ''): string {
	return prefix + randomBytes(32).toString('base64url');
}

export function digest(secret: string): string {
	return createHash('sha256').update(secret, 'utf8').digest('hex');
}
