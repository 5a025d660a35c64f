// Audit trail: who did what to which entity, written in the same transaction as the change.
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import { bindModel } from './base';

export class AuditEvent extends Model<InferAttributes<AuditEvent>, InferCreationAttributes<AuditEvent>> {
	declare id: CreationOptional<number>;
	declare at: CreationOptional<Date>;
	declare actorUserId: CreationOptional<string | null>;
	declare actorLabel: CreationOptional<string | null>;
	declare action: string;
	declare entityType: string;
	declare entityId: CreationOptional<string | null>;
	declare details: CreationOptional<Record<string, unknown> | null>;
	declare requestId: CreationOptional<string | null>;
	/** Client address of the request (migration 2026-12-02T0100). */
	declare ip: CreationOptional<string | null>;
}

export function defineAudit(sequelize: Sequelize) {
	const AuditEventM = bindModel(
		AuditEvent,
		{
			id: { type: DataTypes.BIGINT, primaryKey: true, autoIncrement: true },
			at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
			actorUserId: { type: DataTypes.UUID },
			actorLabel: { type: DataTypes.TEXT },
			action: { type: DataTypes.TEXT, allowNull: false },
			entityType: { type: DataTypes.TEXT, allowNull: false },
			entityId: { type: DataTypes.TEXT },
			details: { type: DataTypes.JSONB },
			requestId: { type: DataTypes.TEXT },
			ip: { type: DataTypes.TEXT }
		},
		{ modelName: 'auditEvent', tableName: 'audit_events', timestamps: false },
		sequelize
	);
	return { AuditEvent: AuditEventM };
}
