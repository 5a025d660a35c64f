// Users (also the Auth.js users table), the Auth.js adapter tables, invitations,
// sign-in attempts and API tokens. Model names are lower camel case ('user',
// 'account', …) like the adapter's own, so the association it adds
// (Account.belongsTo(User)) resolves to the same `userId` attribute as ours.
import {
	DataTypes,
	Model,
	type CreationOptional,
	type InferAttributes,
	type InferCreationAttributes,
	type Sequelize
} from 'sequelize';
import { bindModel } from './base';

export const ROLES = ['admin', 'test_engineer', 'aerodynamicist', 'program_manager'] as const;
export type Role = (typeof ROLES)[number];
export const UNIT_PREFERENCES = ['SI', 'US'] as const;
export type UnitPreference = (typeof UNIT_PREFERENCES)[number];

export class User extends Model<InferAttributes<User>, InferCreationAttributes<User>> {
	declare id: CreationOptional<string>;
	declare name: string | null;
	declare email: string;
	declare emailVerified: CreationOptional<Date | null>;
	declare image: CreationOptional<string | null>;
	declare role: Role;
	declare passwordHash: CreationOptional<string | null>;
	declare active: CreationOptional<boolean>;
	declare lastSignInAt: CreationOptional<Date | null>;
	declare failedSignIns: CreationOptional<number>;
	declare lockedUntil: CreationOptional<Date | null>;
	declare unitPreference: CreationOptional<UnitPreference>;
	declare createdAt: CreationOptional<Date>;
	declare updatedAt: CreationOptional<Date>;
}

export class Account extends Model<InferAttributes<Account>, InferCreationAttributes<Account>> {
	declare id: CreationOptional<string>;
	declare type: string;
	declare provider: string;
	declare providerAccountId: string;
	declare refresh_token: CreationOptional<string | null>;
	declare access_token: CreationOptional<string | null>;
	declare expires_at: CreationOptional<number | null>;
	declare token_type: CreationOptional<string | null>;
	declare scope: CreationOptional<string | null>;
	declare id_token: CreationOptional<string | null>;
	declare session_state: CreationOptional<string | null>;
	declare userId: string;
}

export class Session extends Model<InferAttributes<Session>, InferCreationAttributes<Session>> {
	declare id: CreationOptional<string>;
	declare expires: Date;
	declare sessionToken: string;
	declare userId: string;
}

export class VerificationToken extends Model<InferAttributes<VerificationToken>, InferCreationAttributes<VerificationToken>> {
	declare token: string;
	declare identifier: string;
	declare expires: Date;
}

export class Invitation extends Model<InferAttributes<Invitation>, InferCreationAttributes<Invitation>> {
	declare id: CreationOptional<number>;
	declare userId: string;
	declare tokenHash: string;
	declare expiresAt: Date;
	declare usedAt: CreationOptional<Date | null>;
	declare createdBy: CreationOptional<string | null>;
	declare createdAt: CreationOptional<Date>;
}

export class SignInAttempt extends Model<InferAttributes<SignInAttempt>, InferCreationAttributes<SignInAttempt>> {
	declare id: CreationOptional<number>;
	declare email: string;
	declare ip: CreationOptional<string | null>;
	declare succeeded: boolean;
	declare at: CreationOptional<Date>;
}

export class ApiToken extends Model<InferAttributes<ApiToken>, InferCreationAttributes<ApiToken>> {
	declare id: CreationOptional<number>;
	declare userId: string;
	declare name: string;
	declare tokenHash: string;
	declare prefix: string;
	declare expiresAt: CreationOptional<Date | null>;
	declare lastUsedAt: CreationOptional<Date | null>;
	declare revokedAt: CreationOptional<Date | null>;
	declare createdAt: CreationOptional<Date>;
}

const uuidPk = { type: DataTypes.UUID, primaryKey: true, defaultValue: DataTypes.UUIDV4 };
const bigPk = { type: DataTypes.BIGINT, primaryKey: true, autoIncrement: true };

export function definePeople(sequelize: Sequelize) {
	const UserM = bindModel(
		User,
		{
			id: uuidPk,
			name: { type: DataTypes.TEXT },
			email: {
				type: DataTypes.TEXT,
				allowNull: false,
				unique: true,
				// Stored lower-cased (a CHECK in the table enforces it) so look-ups are case-insensitive.
				set(value: string) {
					this.setDataValue('email', String(value).trim().toLowerCase());
				}
			},
			emailVerified: { type: DataTypes.DATE },
			image: { type: DataTypes.TEXT },
			role: { type: DataTypes.TEXT, allowNull: false, validate: { isIn: [ROLES as unknown as string[]] } },
			passwordHash: { type: DataTypes.TEXT },
			active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
			lastSignInAt: { type: DataTypes.DATE },
			failedSignIns: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
			lockedUntil: { type: DataTypes.DATE },
			unitPreference: { type: DataTypes.TEXT, allowNull: false, defaultValue: 'SI' },
			createdAt: DataTypes.DATE,
			updatedAt: DataTypes.DATE
		},
		{ modelName: 'user', tableName: 'users' },
		sequelize
	);

	const AccountM = bindModel(
		Account,
		{
			id: uuidPk,
			type: { type: DataTypes.TEXT, allowNull: false },
			provider: { type: DataTypes.TEXT, allowNull: false },
			providerAccountId: { type: DataTypes.TEXT, allowNull: false },
			// Auth.js writes these OAuth fields with their snake_case names; they map to the same columns.
			refresh_token: { type: DataTypes.TEXT },
			access_token: { type: DataTypes.TEXT },
			expires_at: { type: DataTypes.INTEGER },
			token_type: { type: DataTypes.TEXT },
			scope: { type: DataTypes.TEXT },
			id_token: { type: DataTypes.TEXT },
			session_state: { type: DataTypes.TEXT },
			userId: { type: DataTypes.UUID, allowNull: false }
		},
		{ modelName: 'account', tableName: 'accounts', timestamps: false },
		sequelize
	);

	const SessionM = bindModel(
		Session,
		{
			id: uuidPk,
			expires: { type: DataTypes.DATE, allowNull: false },
			sessionToken: { type: DataTypes.TEXT, allowNull: false, unique: true },
			userId: { type: DataTypes.UUID, allowNull: false }
		},
		{ modelName: 'session', tableName: 'sessions', timestamps: false },
		sequelize
	);

	const VerificationTokenM = bindModel(
		VerificationToken,
		{
			token: { type: DataTypes.TEXT, primaryKey: true },
			identifier: { type: DataTypes.TEXT, allowNull: false },
			expires: { type: DataTypes.DATE, allowNull: false }
		},
		{ modelName: 'verificationToken', tableName: 'verification_tokens', timestamps: false },
		sequelize
	);

	const InvitationM = bindModel(
		Invitation,
		{
			id: bigPk,
			userId: { type: DataTypes.UUID, allowNull: false },
			tokenHash: { type: DataTypes.TEXT, allowNull: false, unique: true },
			expiresAt: { type: DataTypes.DATE, allowNull: false },
			usedAt: { type: DataTypes.DATE },
			createdBy: { type: DataTypes.UUID },
			createdAt: DataTypes.DATE
		},
		{ modelName: 'invitation', tableName: 'invitations', updatedAt: false },
		sequelize
	);

	const SignInAttemptM = bindModel(
		SignInAttempt,
		{
			id: bigPk,
			email: { type: DataTypes.TEXT, allowNull: false },
			ip: { type: DataTypes.TEXT },
			succeeded: { type: DataTypes.BOOLEAN, allowNull: false },
			at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW }
		},
		{ modelName: 'signInAttempt', tableName: 'sign_in_attempts', timestamps: false },
		sequelize
	);

	const ApiTokenM = bindModel(
		ApiToken,
		{
			id: bigPk,
			userId: { type: DataTypes.UUID, allowNull: false },
			name: { type: DataTypes.TEXT, allowNull: false },
			tokenHash: { type: DataTypes.TEXT, allowNull: false, unique: true },
			prefix: { type: DataTypes.TEXT, allowNull: false },
			expiresAt: { type: DataTypes.DATE },
			lastUsedAt: { type: DataTypes.DATE },
			revokedAt: { type: DataTypes.DATE },
			createdAt: DataTypes.DATE
		},
		{ modelName: 'apiToken', tableName: 'api_tokens', updatedAt: false },
		sequelize
	);

	return {
		User: UserM,
		Account: AccountM,
		Session: SessionM,
		VerificationToken: VerificationTokenM,
		Invitation: InvitationM,
		SignInAttempt: SignInAttemptM,
		ApiToken: ApiTokenM
	};
}
