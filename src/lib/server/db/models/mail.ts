// Outgoing mail queue: mail is written in the same transaction as the change
// that causes it and sent by a worker with retries.
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import { bindModel } from './base';

export type MailStatus = 'queued' | 'sent' | 'failed';

export class MailOutbox extends Model<InferAttributes<MailOutbox>, InferCreationAttributes<MailOutbox>> {
	declare id: CreationOptional<number>;
	declare to: string;
	declare subject: string;
	declare text: CreationOptional<string | null>;
	declare html: CreationOptional<string | null>;
	declare kind: string;
	declare status: CreationOptional<MailStatus>;
	declare attempts: CreationOptional<number>;
	declare lastError: CreationOptional<string | null>;
	declare nextAttemptAt: CreationOptional<Date>;
	declare sentAt: CreationOptional<Date | null>;
	declare createdAt: CreationOptional<Date>;
}

export function defineMail(sequelize: Sequelize) {
	const MailOutboxM = bindModel(
		MailOutbox,
		{
			id: { type: DataTypes.BIGINT, primaryKey: true, autoIncrement: true },
			to: { type: DataTypes.TEXT, allowNull: false },
			subject: { type: DataTypes.TEXT, allowNull: false },
			text: { type: DataTypes.TEXT },
			html: { type: DataTypes.TEXT },
			kind: { type: DataTypes.TEXT, allowNull: false },
			status: { type: DataTypes.TEXT, allowNull: false, defaultValue: 'queued' },
			attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
			lastError: { type: DataTypes.TEXT },
			nextAttemptAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
			sentAt: { type: DataTypes.DATE },
			createdAt: DataTypes.DATE
		},
		{ modelName: 'mailOutbox', tableName: 'mail_outbox', updatedAt: false },
		sequelize
	);
	return { MailOutbox: MailOutboxM };
}
