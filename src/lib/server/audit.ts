/**
 * The audit trail: who did what to which entity, when and from which address.
 * Every module that changes state calls `record` inside the transaction of
 * that change, so the event and the change commit or roll back together.
 *
 * Actions are dotted `<area>.<verb>` names: sign_in.succeeded, sign_in.failed,
 * sign_out, person.invited, person.password_set, person.role_changed,
 * person.deactivated, person.reactivated, person.unlocked, token.created,
 * token.revoked, and later run.imported, run.re_reduced, run.signed_off, …
 */
import { QueryTypes, type Transaction } from 'sequelize';
import { getSequelize } from '$lib/server/db';

export interface AuditActor {
	id: string;
	email: string;
}

export interface AuditInput {
	/** The signed-in person, or null for the system or an anonymous visitor. */
	actor: AuditActor | null;
	action: string;
	entityType: string;
	entityId?: string | number | null;
	details?: Record<string, unknown> | null;
	requestId?: string | null;
	/** Client address of the request (adapter-node's getClientAddress). */
	ip?: string | null;
	/** Shown when there is no actor, e.g. the address typed into a failed sign-in. */
	actorLabel?: string | null;
}

export interface AuditEventDto {
	id: number;
	at: string;
	actorUserId: string | null;
	actorLabel: string | null;
	action: string;
	entityType: string;
	entityId: string | null;
	details: Record<string, unknown> | null;
	requestId: string | null;
	ip: string | null;
}

/** Write one audit event; pass the transaction of the change it describes. */
export async function record(event: AuditInput, options: { transaction?: Transaction } = {}): Promise<void> {
	// Raw SQL keeps this module independent of the model class; the column set is the migrations'.
	await getSequelize().query(
		`INSERT INTO audit_events (actor_user_id, actor_label, action, entity_type, entity_id, details, request_id, ip)
		 VALUES (:actorUserId, :actorLabel, :action, :entityType, :entityId, CAST(:details AS jsonb), :requestId, :ip)`,
		{
			replacements: {
				actorUserId: event.actor?.id ?? null,
				actorLabel: event.actor?.email ?? event.actorLabel ?? null,
				action: event.action,
				entityType: event.entityType,
				entityId: event.entityId == null ? null : String(event.entityId),
				details: event.details ? JSON.stringify(event.details) : null,
				requestId: event.requestId ?? null,
				ip: event.ip ?? null
			},
			type: QueryTypes.INSERT,
			transaction: options.transaction
		}
	);
}

export interface AuditFilter {
	action?: string;
	entityType?: string;
	entityId?: string;
	/** Matches the actor's address (actor_label), case-insensitive, partial. */
	actor?: string;
	since?: Date;
	until?: Date;
	limit?: number;
	offset?: number;
}

/** Newest first, filtered; returns the page and the total count for pagination. */
export async function listEvents(filter: AuditFilter = {}): Promise<{ events: AuditEventDto[]; total: number }> {
	const where: string[] = [];
	const r: Record<string, unknown> = {};
	if (filter.action) {
		where.push('action LIKE :action');
		r.action = `${filter.action.replace(/[%_\\]/g, '\\$&')}%`;
	}
	if (filter.entityType) {
		where.push('entity_type = :entityType');
		r.entityType = filter.entityType;
	}
	if (filter.entityId) {
		where.push('entity_id = :entityId');
		r.entityId = filter.entityId;
	}
	if (filter.actor) {
		where.push('actor_label ILIKE :actor');
		r.actor = `%${filter.actor.replace(/[%_\\]/g, '\\$&')}%`;
	}
	if (filter.since) {
		where.push('at >= :since');
		r.since = filter.since;
	}
	if (filter.until) {
		where.push('at < :until');
		r.until = filter.until;
	}
	const clause = where.length ? `WHERE ${where.join(' AND ')}` : '';
	const limit = Math.min(Math.max(filter.limit ?? 100, 1), 500);
	const offset = Math.max(filter.offset ?? 0, 0);
	const sequelize = getSequelize();
	const rows = await sequelize.query<{
		id: string;
		at: Date;
		actor_user_id: string | null;
		actor_label: string | null;
		action: string;
		entity_type: string;
		entity_id: string | null;
		details: Record<string, unknown> | null;
		request_id: string | null;
		ip: string | null;
	}>(`SELECT * FROM audit_events ${clause} ORDER BY at DESC, id DESC LIMIT ${limit} OFFSET ${offset}`, {
		replacements: r,
		type: QueryTypes.SELECT
	});
	const [{ count }] = await sequelize.query<{ count: string }>(`SELECT count(*) AS count FROM audit_events ${clause}`, {
		replacements: r,
		type: QueryTypes.SELECT
	});
	return {
		total: Number(count),
		events: rows.map((row) => ({
			id: Number(row.id),
			at: new Date(row.at).toISOString(),
			actorUserId: row.actor_user_id,
			actorLabel: row.actor_label,
			action: row.action,
			entityType: row.entity_type,
			entityId: row.entity_id,
			details: row.details,
			requestId: row.request_id,
			ip: row.ip
		}))
	};
}

/** The history of one entity, for its own page. */
export function historyOf(entityType: string, entityId: string | number, limit = 50) {
	return listEvents({ entityType, entityId: String(entityId), limit }).then((r) => r.events);
}
