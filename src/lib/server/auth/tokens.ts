/**
 * API tokens for scripts and data systems: `Authorization: Bearer spl_…` acts
 * with the owner's role. The token is shown once when created; the database
 * keeps only its SHA-256 digest and a short prefix to recognise it by.
 */
import { type Transaction } from 'sequelize';
import { getModels, getSequelize } from '$lib/server/db';
import * as audit from '$lib/server/audit';
import { digest, newSecret } from './secrets';
import { toSessionUser, type SessionUser } from './users';
import { statement } from '$lib/server/db/sql';
import * as identity from './identity-cache';

export const TOKEN_PREFIX = 'spl_';
/** Writing last_used_at on every call would turn each API read into a write; a minute is fine-grained enough. */
const LAST_USED_RESOLUTION_MS = 60_000;

export interface ApiTokenDto {
	id: number;
	name: string;
	/** First characters, to tell tokens apart; never enough to use. */
	prefix: string;
	ownerId: string;
	ownerEmail?: string;
	createdAt: string;
	expiresAt: string | null;
	lastUsedAt: string | null;
	revokedAt: string | null;
	state: 'active' | 'expired' | 'revoked';
}

export interface Context {
	actor: SessionUser;
	requestId?: string;
	ip?: string | null;
}

function toDto(row: {
	id: number;
	name: string;
	prefix: string;
	userId: string;
	createdAt: Date;
	expiresAt: Date | null;
	lastUsedAt: Date | null;
	revokedAt: Date | null;
	user?: { email: string } | null;
}): ApiTokenDto {
	const now = Date.now();
	return {
		id: Number(row.id),
		name: row.name,
		prefix: row.prefix,
		ownerId: row.userId,
		...(row.user ? { ownerEmail: row.user.email } : {}),
		createdAt: row.createdAt.toISOString(),
		expiresAt: row.expiresAt?.toISOString() ?? null,
		lastUsedAt: row.lastUsedAt?.toISOString() ?? null,
		revokedAt: row.revokedAt?.toISOString() ?? null,
		state: row.revokedAt ? 'revoked' : row.expiresAt && row.expiresAt.getTime() <= now ? 'expired' : 'active'
	};
}

export class TokenError extends Error {
	constructor(
		public code: 'not_found' | 'invalid' | 'forbidden',
		message: string,
		public field?: string
	) {
		super(message);
	}
}

/** Create a token for `ownerId`; returns the clear token exactly once. */
export async function createToken(
	ctx: Context,
	input: { ownerId: string; name: string; expiresAt?: Date | null }
): Promise<{ token: string; info: ApiTokenDto }> {
	const { ApiToken, User } = getModels();
	if (input.expiresAt && input.expiresAt.getTime() <= Date.now()) {
		throw new TokenError('invalid', 'The expiry must lie in the future.', 'expiresAt');
	}
	const token = newSecret(TOKEN_PREFIX);
	return getSequelize().transaction(async (transaction) => {
		const owner = await User.findByPk(input.ownerId, { transaction });
		if (!owner) throw new TokenError('not_found', 'No such person.', 'userId');
		if (!owner.active) throw new TokenError('invalid', 'That account is deactivated.', 'userId');
		const row = await ApiToken.create(
			{
				userId: owner.id,
				name: input.name,
				tokenHash: digest(token),
				prefix: token.slice(0, TOKEN_PREFIX.length + 6),
				expiresAt: input.expiresAt ?? null
			},
			{ transaction }
		);
		await audit.record(
			{
				actor: ctx.actor,
				action: 'token.created',
				entityType: 'api_token',
				entityId: row.id,
				details: { name: row.name, prefix: row.prefix, ownerId: owner.id, ownerEmail: owner.email, expiresAt: row.expiresAt },
				requestId: ctx.requestId,
				ip: ctx.ip
			},
			{ transaction }
		);
		return { token, info: toDto({ ...row.get({ plain: true }), user: { email: owner.email } }) };
	});
}

/** Tokens of one person, or of everyone when ownerId is omitted (admin view). */
export async function listTokens(ownerId?: string): Promise<ApiTokenDto[]> {
	const { ApiToken, User } = getModels();
	const rows = await ApiToken.findAll({
		where: ownerId ? { userId: ownerId } : {},
		include: [{ model: User, as: 'user', attributes: ['email'] }],
		order: [['createdAt', 'DESC']]
	});
	return rows.map((r) => toDto(r.get({ plain: true }) as Parameters<typeof toDto>[0]));
}

/**
 * Revoke a token. Owners revoke their own; `mayRevokeOthers` (admins) any.
 * A token the caller may not touch is reported as not found.
 */
export async function revokeToken(ctx: Context, id: number, mayRevokeOthers: boolean): Promise<ApiTokenDto> {
	const { ApiToken, User } = getModels();
	return getSequelize().transaction(async (transaction: Transaction) => {
		const row = await ApiToken.findByPk(id, {
			transaction,
			lock: transaction.LOCK.UPDATE,
			// Inner join: FOR UPDATE cannot lock the nullable side of an outer join.
			include: [{ model: User, as: 'user', attributes: ['email'], required: true }]
		});
		if (!row || (row.userId !== ctx.actor.id && !mayRevokeOthers)) throw new TokenError('not_found', 'No such token.');
		if (!row.revokedAt) {
			await row.update({ revokedAt: new Date() }, { transaction });
			await audit.record(
				{
					actor: ctx.actor,
					action: 'token.revoked',
					entityType: 'api_token',
					entityId: row.id,
					details: { name: row.name, prefix: row.prefix, ownerId: row.userId },
					requestId: ctx.requestId,
					ip: ctx.ip
				},
				{ transaction }
			);
		}
		return toDto(row.get({ plain: true }) as Parameters<typeof toDto>[0]);
	});
}

/** Record a token's use, at most once per LAST_USED_RESOLUTION_MS; returns the last-use time now on record. */
async function noteUse(tokenId: string, lastUsedAt: number | null): Promise<number> {
	const now = Date.now();
	if (lastUsedAt !== null && now - lastUsedAt <= LAST_USED_RESOLUTION_MS) return lastUsedAt;
	await statement('UPDATE api_tokens SET last_used_at = now() WHERE id = $1', [tokenId]);
	return now;
}

/**
 * The user a bearer token acts for, or null when the token is unknown,
 * revoked, expired or its owner deactivated.
 */
export async function userForToken(token: string): Promise<SessionUser | null> {
	if (!token.startsWith(TOKEN_PREFIX) || token.length > 200) return null;
	const hash = digest(token);
	const known = identity.tokenByHash(hash);
	if (known) {
		known.lastUsedAt = await noteUse(known.tokenId, known.lastUsedAt);
		return known.user;
	}
	// One plain statement: it runs on every API request, so no model instances.
	const [row] = await statement<{ id: string; name: string | null; email: string; role: string; token_id: string; last_used_at: Date | null; expires_at: Date | null }>(
		`SELECT u.id, u.name, u.email, u.role, t.id AS token_id, t.last_used_at, t.expires_at
		   FROM api_tokens t JOIN users u ON u.id = t.user_id
		  WHERE t.token_hash = $1 AND t.revoked_at IS NULL AND (t.expires_at IS NULL OR t.expires_at > now()) AND u.active`,
		[hash]
	);
	if (!row) return null;
	const lastUsedAt = await noteUse(String(row.token_id), row.last_used_at ? new Date(row.last_used_at).getTime() : null);
	const user = toSessionUser(row);
	identity.rememberToken(hash, { user, tokenId: String(row.token_id), expiresAt: row.expires_at ? new Date(row.expires_at).getTime() : null, lastUsedAt });
	return user;
}
