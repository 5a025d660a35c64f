// Predictions (solver inputs and outputs) and deltas (measured minus predicted).
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import { bindModel } from './base';

export class Prediction extends Model<InferAttributes<Prediction>, InferCreationAttributes<Prediction>> {
	declare id: CreationOptional<number>;
	declare runId: CreationOptional<number | null>;
	declare configurationId: number;
	declare configurationVersion: number;
	declare solver: string;
	declare settings: CreationOptional<Record<string, unknown>>;
	declare inputs: CreationOptional<Record<string, unknown>>;
	declare outputs: CreationOptional<Record<string, unknown>>;
	declare createdBy: CreationOptional<string | null>;
	declare createdAt: CreationOptional<Date>;
}

export class Delta extends Model<InferAttributes<Delta>, InferCreationAttributes<Delta>> {
	declare id: CreationOptional<number>;
	declare runId: number;
	declare predictionId: number;
	declare reductionId: number;
	declare quantity: string;
	declare value: CreationOptional<number | null>;
	declare uncertainty: CreationOptional<number | null>;
	declare significant: CreationOptional<boolean | null>;
	declare outOfTolerance: CreationOptional<boolean | null>;
	declare createdAt: CreationOptional<Date>;
}

const bigPk = { type: DataTypes.BIGINT, primaryKey: true, autoIncrement: true };

export function defineCorrelation(sequelize: Sequelize) {
	const PredictionM = bindModel(
		Prediction,
		{
			id: bigPk,
			runId: { type: DataTypes.BIGINT },
			configurationId: { type: DataTypes.BIGINT, allowNull: false },
			configurationVersion: { type: DataTypes.INTEGER, allowNull: false },
			solver: { type: DataTypes.TEXT, allowNull: false },
			settings: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
			inputs: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
			outputs: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
			createdBy: { type: DataTypes.UUID },
			createdAt: DataTypes.DATE
		},
		{ modelName: 'prediction', tableName: 'predictions', updatedAt: false },
		sequelize
	);
	const DeltaM = bindModel(
		Delta,
		{
			id: bigPk,
			runId: { type: DataTypes.BIGINT, allowNull: false },
			predictionId: { type: DataTypes.BIGINT, allowNull: false },
			reductionId: { type: DataTypes.BIGINT, allowNull: false },
			quantity: { type: DataTypes.TEXT, allowNull: false },
			value: { type: DataTypes.DOUBLE },
			uncertainty: { type: DataTypes.DOUBLE },
			significant: { type: DataTypes.BOOLEAN },
			outOfTolerance: { type: DataTypes.BOOLEAN },
			createdAt: DataTypes.DATE
		},
		{ modelName: 'delta', tableName: 'deltas', updatedAt: false },
		sequelize
	);
	return { Prediction: PredictionM, Delta: DeltaM };
}
