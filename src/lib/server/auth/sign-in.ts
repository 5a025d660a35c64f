/**
 * Password and e-mail-link sign-in decisions, with the repeated-failure
 * limit: FAILURE_LIMIT failed attempts within FAILURE_WINDOW lock the
 * account for LOCK_DURATION, and the same number from one client address
 * blocks that address until its oldest counted failure leaves the window.
 * 10 in 15 minutes with a 15-minute lock is common practice, no source.
 * Every attempt is kept in sign_in_attempts and audited.
 */
import { Op, QueryTypes, type Transaction } from 'sequelize';
import { getModels, getSequelize } from '$lib/server/db';
import * as audit from '$lib/server/audit';
import { verifyPassword } from './password';
import { normaliseEmail, toSessionUser, type SessionUser } from './users';
import { statement } from '$lib/server/db/sql';

export const FAILURE_LIMIT = 10;
export const FAILURE_WINDOW_MS = 15 * 60_000;
export const LOCK_DURATION_MS = 15 * 60_000;

export type RefusalReason =
	| 'unknown'
	| 'deactivated'
	| 'wrong_password'
	| 'no_password'
	| 'locked'
	| 'address_blocked';

export type SignInDecision =
	| { ok: true; user: SessionUser }
	| { ok: false; reason: RefusalReason; until?: Date; remaining?: number };

export interface AttemptContext {
	ip: string | null;
	requestId?: string;
}

/** Until when the client address is blocked, or null when it is not. */
export async function addressBlockedUntil(ip: string | null, transaction?: Transaction): Promise<Date | null> {
	if (!ip) return null;
	const since = new Date(Date.now() - FAILURE_WINDOW_MS);
	const rows = await getSequelize().query<{ at: Date }>(
		`SELECT at FROM sign_in_attempts WHERE ip = :ip AND NOT succeeded AND at > :since ORDER BY at DESC LIMIT :limit`,
		{ replacements: { ip, since, limit: FAILURE_LIMIT }, type: QueryTypes.SELECT, transaction }
	);
	if (rows.length < FAILURE_LIMIT) return null;
	// The block lifts when the oldest of the last FAILURE_LIMIT failures leaves the window.
	return new Date(new Date(rows[FAILURE_LIMIT - 1].at).getTime() + FAILURE_WINDOW_MS);
}

async function noteAttempt(
	email: string,
	succeeded: boolean,
	ctx: AttemptContext,
	detail: { method: 'password' | 'link'; reason?: RefusalReason; userId?: string | null },
	transaction: Transaction
) {
	const { SignInAttempt } = getModels();
	await SignInAttempt.create({ email, ip: ctx.ip, succeeded }, { transaction });
	await audit.record(
		{
			actor: succeeded && detail.userId ? { id: detail.userId, email } : null,
			actorLabel: email,
			action: succeeded ? 'sign_in.succeeded' : 'sign_in.failed',
			entityType: 'user',
			entityId: detail.userId ?? null,
			details: { method: detail.method, ...(detail.reason ? { reason: detail.reason } : {}) },
			requestId: ctx.requestId,
			ip: ctx.ip
		},
		{ transaction }
	);
}

/** Checks shared by both methods before any secret is looked at. */
async function precheck(
	email: string,
	ctx: AttemptContext,
	transaction: Transaction
): Promise<{ refusal: Exclude<SignInDecision, { ok: true }> | null; user: InstanceType<ReturnType<typeof getModels>['User']> | null }> {
	const { User } = getModels();
	const blockedUntil = await addressBlockedUntil(ctx.ip, transaction);
	if (blockedUntil) return { refusal: { ok: false, reason: 'address_blocked', until: blockedUntil }, user: null };
	const user = await User.findOne({ where: { email }, transaction, lock: transaction.LOCK.UPDATE });
	if (!user) return { refusal: { ok: false, reason: 'unknown' }, user: null };
	if (!user.active) return { refusal: { ok: false, reason: 'deactivated' }, user };
	if (user.lockedUntil && user.lockedUntil.getTime() > Date.now()) {
		return { refusal: { ok: false, reason: 'locked', until: user.lockedUntil }, user };
	}
	return { refusal: null, user };
}

/** Decide a password sign-in and record it (attempt row, audit, counters). */
export async function checkPassword(rawEmail: string, password: string, ctx: AttemptContext): Promise<SignInDecision> {
	const email = normaliseEmail(rawEmail);
	return getSequelize().transaction(async (transaction) => {
		const { refusal, user } = await precheck(email, ctx, transaction);
		if (refusal) {
			await noteAttempt(email, false, ctx, { method: 'password', reason: refusal.reason, userId: user?.id }, transaction);
			return refusal;
		}
		const u = user!;
		const good = await verifyPassword(password, u.passwordHash);
		if (good) {
			await u.update({ lastSignInAt: new Date(), failedSignIns: 0, lockedUntil: null }, { transaction });
			await noteAttempt(email, true, ctx, { method: 'password', userId: u.id }, transaction);
			return { ok: true, user: toSessionUser(u) };
		}
		const reason: RefusalReason = u.passwordHash ? 'wrong_password' : 'no_password';
		await noteAttempt(email, false, ctx, { method: 'password', reason, userId: u.id }, transaction);
		// Count failures since the last success or the end of the last lock, within the window.
		const floor = Math.max(
			Date.now() - FAILURE_WINDOW_MS,
			u.lastSignInAt?.getTime() ?? 0,
			u.lockedUntil?.getTime() ?? 0
		);
		const { SignInAttempt } = getModels();
		const failures = await SignInAttempt.count({
			where: { email, succeeded: false, at: { [Op.gt]: new Date(floor) } },
			transaction
		});
		if (failures >= FAILURE_LIMIT) {
			const until = new Date(Date.now() + LOCK_DURATION_MS);
			await u.update({ failedSignIns: failures, lockedUntil: until }, { transaction });
			await audit.record(
				{
					actor: null,
					actorLabel: email,
					action: 'person.locked',
					entityType: 'user',
					entityId: u.id,
					details: { failures, until: until.toISOString() },
					requestId: ctx.requestId,
					ip: ctx.ip
				},
				{ transaction }
			);
			return { ok: false, reason: 'locked', until };
		}
		await u.update({ failedSignIns: failures }, { transaction });
		return { ok: false, reason, remaining: FAILURE_LIMIT - failures };
	});
}

/**
 * May a sign-in link be sent to this address? Refusals are recorded as
 * failed attempts (they count towards the address block); a permitted
 * request is not yet a sign-in and records nothing.
 */
export async function checkLinkRequest(rawEmail: string, ctx: AttemptContext): Promise<SignInDecision> {
	const email = normaliseEmail(rawEmail);
	return getSequelize().transaction(async (transaction) => {
		const { refusal, user } = await precheck(email, ctx, transaction);
		if (refusal) {
			await noteAttempt(email, false, ctx, { method: 'link', reason: refusal.reason, userId: user?.id }, transaction);
			return refusal;
		}
		return { ok: true, user: toSessionUser(user!) };
	});
}

/** The link was valid: one more check of the account, then record the sign-in. */
export async function completeLinkSignIn(rawEmail: string, ctx: AttemptContext): Promise<SignInDecision> {
	const email = normaliseEmail(rawEmail);
	return getSequelize().transaction(async (transaction) => {
		const { User } = getModels();
		const user = await User.findOne({ where: { email }, transaction, lock: transaction.LOCK.UPDATE });
		let refusal: Exclude<SignInDecision, { ok: true }> | null = null;
		if (!user) refusal = { ok: false, reason: 'unknown' };
		else if (!user.active) refusal = { ok: false, reason: 'deactivated' };
		else if (user.lockedUntil && user.lockedUntil.getTime() > Date.now()) refusal = { ok: false, reason: 'locked', until: user.lockedUntil };
		if (refusal) {
			await noteAttempt(email, false, ctx, { method: 'link', reason: refusal.reason, userId: user?.id }, transaction);
			return refusal;
		}
		await user!.update({ lastSignInAt: new Date(), failedSignIns: 0, emailVerified: user!.emailVerified ?? new Date() }, { transaction });
		await noteAttempt(email, true, ctx, { method: 'link', userId: user!.id }, transaction);
		return { ok: true, user: toSessionUser(user!) };
	});
}

/** The signed-in person as the hook sees them on each request: null when gone or deactivated. */
export async function activeUser(id: string): Promise<SessionUser | null> {
	// Runs on every signed-in page request: one plain statement, no model instance.
	if (!UUID.test(id)) return null;
	const [user] = await statement<{ id: string; name: string | null; email: string; role: string }>('SELECT id, name, email, role FROM users WHERE id = $1 AND active', [id]);
	return user ? toSessionUser(user) : null;
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** Wording of each refusal, for the sign-in page and the API. */
export function refusalMessage(d: Exclude<SignInDecision, { ok: true }>): string {
	const when = d.until ? formatTime(d.until) : '';
	switch (d.reason) {
		case 'unknown':
			return 'There is no Spanline account for this address. Ask an admin of your team for an invitation.';
		case 'deactivated':
			return 'This account has been deactivated. An admin of your team can reactivate it.';
		case 'wrong_password':
			return d.remaining != null && d.remaining <= 3
				? `Wrong password. ${d.remaining} more ${d.remaining === 1 ? 'try' : 'tries'} before the account is locked for 15 minutes.`
				: 'Wrong password. Check it, or have a sign-in link e-mailed to you.';
		case 'no_password':
			return 'This account has no password yet. Use the link in your invitation, or have a sign-in link e-mailed to you.';
		case 'locked':
			return `Too many failed attempts: this account is locked until ${when}. Try again then, or ask an admin to unlock it.`;
		case 'address_blocked':
			return `Too many failed attempts from your network address: sign-in from it is paused until ${when}.`;
	}
}

export function formatTime(d: Date): string {
	return d.toISOString().replace('T', ' ').slice(0, 16) + ' UTC';
}
