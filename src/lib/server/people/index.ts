/**
 * People: invitations, passwords set from an invitation link, roles,
 * deactivation and unlocking. Every change and its audit event share one
 * transaction; the invitation mail joins it through the outbox.
 */
import type { Transaction } from 'sequelize';
import { getModels, getSequelize } from '$lib/server/db';
import * as audit from '$lib/server/audit';
import * as mail from '$lib/server/mail';
import { ROLE_LABELS, type Role } from '$lib/server/auth/roles';
import { digest, newSecret } from '$lib/server/auth/secrets';
import { hashPassword, passwordProblem } from '$lib/server/auth/password';
import { normaliseEmail, type SessionUser } from '$lib/server/auth/users';

/** An invitation link works for three days (common practice, no source). */
export const INVITATION_VALID_MS = 72 * 60 * 60_000;

export interface Context {
	actor: SessionUser;
	requestId?: string;
	ip?: string | null;
	/** The app's public origin, for links in mail (ORIGIN). */
	origin: string;
}

export type PersonState = 'invited' | 'active' | 'locked' | 'deactivated';

export interface PersonDto {
	id: string;
	name: string | null;
	email: string;
	role: Role;
	roleLabel: string;
	active: boolean;
	state: PersonState;
	hasPassword: boolean;
	lastSignInAt: string | null;
	lockedUntil: string | null;
	createdAt: string;
	unitPreference: 'SI' | 'US';
}

export class PeopleError extends Error {
	constructor(
		public code: 'not_found' | 'conflict' | 'invalid' | 'last_admin',
		message: string,
		public field?: string
	) {
		super(message);
	}
}

type UserRow = InstanceType<ReturnType<typeof getModels>['User']>;

export function toPersonDto(u: UserRow): PersonDto {
	const locked = !!u.lockedUntil && u.lockedUntil.getTime() > Date.now();
	const state: PersonState = !u.active ? 'deactivated' : locked ? 'locked' : !u.passwordHash && !u.lastSignInAt ? 'invited' : 'active';
	return {
		id: u.id,
		name: u.name,
		email: u.email,
		role: u.role,
		roleLabel: ROLE_LABELS[u.role],
		active: u.active,
		state,
		hasPassword: !!u.passwordHash,
		lastSignInAt: u.lastSignInAt?.toISOString() ?? null,
		lockedUntil: locked ? u.lockedUntil!.toISOString() : null,
		createdAt: u.createdAt.toISOString(),
		unitPreference: u.unitPreference
	};
}

export async function listPeople(): Promise<PersonDto[]> {
	const { User } = getModels();
	const rows = await User.findAll({ order: [['email', 'ASC']] });
	return rows.map(toPersonDto);
}

export async function getPerson(id: string): Promise<PersonDto | null> {
	const { User } = getModels();
	const row = await User.findByPk(id);
	return row ? toPersonDto(row) : null;
}

/**
 * Invite someone (or invite again: an earlier unused link stops working).
 * Returns the person; the mail is queued in the same transaction.
 */
export async function invite(
	ctx: Context,
	input: { email: string; name?: string | null; role: Role }
): Promise<{ person: PersonDto; mail: Promise<mail.SendResult> }> {
	const { User, Invitation } = getModels();
	const email = normaliseEmail(input.email);
	const token = newSecret();
	const expires = new Date(Date.now() + INVITATION_VALID_MS);
	let sent!: Promise<mail.SendResult>;
	const person = await getSequelize().transaction(async (transaction) => {
		let user = await User.findOne({ where: { email }, transaction, lock: transaction.LOCK.UPDATE });
		if (user && (user.passwordHash || user.lastSignInAt)) {
			throw new PeopleError('conflict', 'This person already has an account.', 'email');
		}
		if (user && !user.active) throw new PeopleError('conflict', 'This account is deactivated; reactivate it instead.', 'email');
		const reinvite = !!user;
		if (user) {
			await user.update({ role: input.role, name: input.name ?? user.name }, { transaction });
			await Invitation.update(
				{ usedAt: new Date() },
				{ where: { userId: user.id, usedAt: null }, transaction }
			);
		} else {
			user = await User.create({ email, name: input.name || null, role: input.role }, { transaction });
		}
		await Invitation.create(
			{ userId: user.id, tokenHash: digest(token), expiresAt: expires, createdBy: ctx.actor.id },
			{ transaction }
		);
		await audit.record(
			{
				actor: ctx.actor,
				action: 'person.invited',
				entityType: 'user',
				entityId: user.id,
				details: { email, role: input.role, reinvite, expiresAt: expires.toISOString() },
				requestId: ctx.requestId,
				ip: ctx.ip
			},
			{ transaction }
		);
		const message = mail.messages.invitationMessage({
			inviterName: ctx.actor.name ?? ctx.actor.email,
			roleLabel: ROLE_LABELS[input.role],
			url: `${ctx.origin}/invite/${token}`,
			expires
		});
		sent = (await mail.queueMail({ to: email, kind: 'invitation', ...message }, { transaction })).delivery;
		return toPersonDto(user);
	});
	return { person, mail: sent };
}

export type InvitationCheck =
	| { ok: true; email: string; name: string | null; roleLabel: string; expiresAt: string }
	| { ok: false; reason: 'invalid' | 'used' | 'expired' | 'deactivated' };

/** Look at an invitation link without using it (the set-password page). */
export async function checkInvitation(token: string, transaction?: Transaction): Promise<InvitationCheck> {
	const { Invitation, User } = getModels();
	const inv = await Invitation.findOne({
		where: { tokenHash: digest(token) },
		// Inner join: FOR UPDATE cannot lock the nullable side of an outer join.
		include: [{ model: User, as: 'user', required: true }],
		transaction,
		lock: transaction ? transaction.LOCK.UPDATE : undefined
	});
	if (!inv) return { ok: false, reason: 'invalid' };
	const user = (inv as unknown as { user: UserRow }).user;
	if (inv.usedAt) return { ok: false, reason: 'used' };
	if (inv.expiresAt.getTime() < Date.now()) return { ok: false, reason: 'expired' };
	if (!user.active) return { ok: false, reason: 'deactivated' };
	return { ok: true, email: user.email, name: user.name, roleLabel: ROLE_LABELS[user.role], expiresAt: inv.expiresAt.toISOString() };
}

/** Use an invitation link: set the password (and name); the link then stops working. */
export async function acceptInvitation(
	token: string,
	input: { password: string; name?: string | null },
	meta: { requestId?: string; ip?: string | null }
): Promise<{ email: string }> {
	const { Invitation, User } = getModels();
	return getSequelize().transaction(async (transaction) => {
		const check = await checkInvitation(token, transaction);
		if (!check.ok) throw new PeopleError('invalid', invitationProblemMessage(check.reason), 'token');
		const problem = passwordProblem(input.password, check.email);
		if (problem) throw new PeopleError('invalid', problem, 'password');
		const inv = (await Invitation.findOne({ where: { tokenHash: digest(token) }, transaction }))!;
		const user = (await User.findByPk(inv.userId, { transaction, lock: transaction.LOCK.UPDATE }))!;
		await user.update(
			{
				passwordHash: await hashPassword(input.password),
				name: input.name?.trim() ? input.name.trim() : user.name,
				emailVerified: user.emailVerified ?? new Date(),
				failedSignIns: 0,
				lockedUntil: null
			},
			{ transaction }
		);
		await inv.update({ usedAt: new Date() }, { transaction });
		await audit.record(
			{
				actor: { id: user.id, email: user.email },
				action: 'person.password_set',
				entityType: 'user',
				entityId: user.id,
				details: { via: 'invitation', invitationId: Number(inv.id) },
				requestId: meta.requestId,
				ip: meta.ip
			},
			{ transaction }
		);
		return { email: user.email };
	});
}

export function invitationProblemMessage(reason: Exclude<InvitationCheck, { ok: true }>['reason']): string {
	switch (reason) {
		case 'invalid':
			return 'This invitation link is not valid. Check that you copied all of it.';
		case 'used':
			return 'This invitation link has already been used. Sign in with your password, or ask an admin for a new invitation.';
		case 'expired':
			return 'This invitation link has expired. Ask an admin of your team for a new invitation.';
		case 'deactivated':
			return 'This account has been deactivated. An admin of your team can reactivate it.';
	}
}

async function lockedPerson(id: string, transaction: Transaction): Promise<UserRow> {
	const { User } = getModels();
	const user = await User.findByPk(id, { transaction, lock: transaction.LOCK.UPDATE });
	if (!user) throw new PeopleError('not_found', 'No such person.');
	return user;
}

/** Lock every active admin row, then count: two concurrent demotions cannot both pass. */
async function activeAdminCount(transaction: Transaction): Promise<number> {
	const { User } = getModels();
	const admins = await User.findAll({
		where: { role: 'admin', active: true },
		attributes: ['id'],
		transaction,
		lock: transaction.LOCK.UPDATE
	});
	return admins.length;
}

export async function changeRole(ctx: Context, id: string, role: Role): Promise<PersonDto> {
	return getSequelize().transaction(async (transaction) => {
		const admins = await activeAdminCount(transaction);
		const user = await lockedPerson(id, transaction);
		if (user.role === role) return toPersonDto(user);
		if (user.role === 'admin' && user.active && admins <= 1) {
			throw new PeopleError('last_admin', 'This is the last admin: make someone else admin first.', 'role');
		}
		const from = user.role;
		await user.update({ role }, { transaction });
		await audit.record(
			{
				actor: ctx.actor,
				action: 'person.role_changed',
				entityType: 'user',
				entityId: user.id,
				details: { email: user.email, from, to: role },
				requestId: ctx.requestId,
				ip: ctx.ip
			},
			{ transaction }
		);
		return toPersonDto(user);
	});
}

/** Deactivate (sign-in refused, sessions and tokens stop at their next request) or reactivate. */
export async function setActive(ctx: Context, id: string, active: boolean): Promise<PersonDto> {
	return getSequelize().transaction(async (transaction) => {
		const admins = await activeAdminCount(transaction);
		const user = await lockedPerson(id, transaction);
		if (user.active === active) return toPersonDto(user);
		if (!active) {
			if (user.id === ctx.actor.id) throw new PeopleError('invalid', 'You cannot deactivate your own account; ask another admin.', 'active');
			if (user.role === 'admin' && admins <= 1) {
				throw new PeopleError('last_admin', 'This is the last admin: make someone else admin first.', 'active');
			}
		}
		await user.update({ active }, { transaction });
		await audit.record(
			{
				actor: ctx.actor,
				action: active ? 'person.reactivated' : 'person.deactivated',
				entityType: 'user',
				entityId: user.id,
				details: { email: user.email },
				requestId: ctx.requestId,
				ip: ctx.ip
			},
			{ transaction }
		);
		return toPersonDto(user);
	});
}

/** Lift a failure lock before it runs out. */
export async function unlock(ctx: Context, id: string): Promise<PersonDto> {
	return getSequelize().transaction(async (transaction) => {
		const user = await lockedPerson(id, transaction);
		if (!user.lockedUntil || user.lockedUntil.getTime() <= Date.now()) return toPersonDto(user);
		await user.update({ lockedUntil: new Date(), failedSignIns: 0 }, { transaction });
		await audit.record(
			{
				actor: ctx.actor,
				action: 'person.unlocked',
				entityType: 'user',
				entityId: user.id,
				details: { email: user.email },
				requestId: ctx.requestId,
				ip: ctx.ip
			},
			{ transaction }
		);
		return toPersonDto(user);
	});
}

export async function updateOwnProfile(
	userId: string,
	input: { name?: string | null; unitPreference?: 'SI' | 'US' }
): Promise<PersonDto> {
	const { User } = getModels();
	const user = await User.findByPk(userId);
	if (!user) throw new PeopleError('not_found', 'No such person.');
	await user.update({
		...(input.name !== undefined ? { name: input.name?.trim() || null } : {}),
		...(input.unitPreference ? { unitPreference: input.unitPreference } : {})
	});
	return toPersonDto(user);
}

