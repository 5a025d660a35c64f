import { createHash } from 'node:crypto';
import { env } from '$env/dynamic/private';
import { getModels } from '$lib/server/db';

export type LinkProblem = 'link_invalid' | 'link_expired';

/**
 * Why a sign-in link cannot work, or null when Auth.js may go on. Auth.js
 * stores SHA-256(token + secret) as hex; an expired token is deleted here,
 * since it can never be used.
 */
export async function linkProblem(token: string | null, email: string | null): Promise<LinkProblem | null> {
	if (!token) return 'link_invalid';
	const hashed = createHash('sha256').update(`${token}${env.AUTH_SECRET ?? ''}`).digest('hex');
	const { VerificationToken } = getModels();
	const row = await VerificationToken.findByPk(hashed);
	if (!row || (email && row.identifier !== email.trim().toLowerCase())) return 'link_invalid';
	if (row.expires.getTime() < Date.now()) {
		await row.destroy();
		return 'link_expired';
	}
	return null;
}
