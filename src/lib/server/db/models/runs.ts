// Runs, their original files, raw samples, versioned reductions and points.
import {
	DataTypes,
	Model,
	type CreationOptional,
	type InferAttributes,
	type InferCreationAttributes,
	type NonAttribute,
	type Sequelize
} from 'sequelize';
import { bindModel } from './base';
import type { Campaign, Configuration } from './campaigns';

export const RUN_STATES = ['imported', 'reduced', 'reviewed', 'accepted', 'returned'] as const;
export type RunState = (typeof RUN_STATES)[number];
export type RunKind = 'tunnel' | 'flight';

/** Nominal run conditions as entered or imported; SI units. */
export interface RunConditions {
	velocityMps?: number;
	qPa?: number;
	staticPressurePa?: number;
	temperatureK?: number;
	altitudeM?: number;
	reynolds?: number;
	mach?: number;
	alphaRangeDeg?: [number, number];
	[key: string]: unknown;
}

export class Run extends Model<InferAttributes<Run>, InferCreationAttributes<Run>> {
	declare id: CreationOptional<number>;
	declare campaignId: number;
	declare configurationId: CreationOptional<number | null>;
	declare runNumber: string;
	declare kind: RunKind;
	declare state: CreationOptional<RunState>;
	declare isTare: CreationOptional<boolean>;
	declare tareRunId: CreationOptional<number | null>;
	declare repeatOfRunId: CreationOptional<number | null>;
	declare conditions: CreationOptional<RunConditions>;
	declare testDate: CreationOptional<string | null>;
	declare notes: CreationOptional<string | null>;
	declare createdBy: CreationOptional<string | null>;
	declare createdAt: CreationOptional<Date>;
	declare updatedAt: CreationOptional<Date>;
	declare campaign?: NonAttribute<Campaign>;
	declare configuration?: NonAttribute<Configuration>;
}

export class SourceFile extends Model<InferAttributes<SourceFile>, InferCreationAttributes<SourceFile>> {
	declare id: CreationOptional<number>;
	declare runId: number;
	declare name: string;
	declare size: number;
	declare sha256: string;
	declare contentType: CreationOptional<string | null>;
	declare storage: CreationOptional<'postgres' | 's3'>;
	declare storageKey: CreationOptional<string | null>;
	declare bytes: CreationOptional<Buffer | null>;
	declare sheet: CreationOptional<string | null>;
	declare columnMapping: CreationOptional<Record<string, unknown> | null>;
	declare createdAt: CreationOptional<Date>;
}

/** One raw row; bulk-loaded with COPY (column list: run_id, source_file_id, row_index, "values"). */
export class Sample extends Model<InferAttributes<Sample>, InferCreationAttributes<Sample>> {
	declare runId: number;
	declare sourceFileId: CreationOptional<number | null>;
	declare rowIndex: number;
	declare values: number[];
}

export class Reduction extends Model<InferAttributes<Reduction>, InferCreationAttributes<Reduction>> {
	declare id: CreationOptional<number>;
	declare runId: number;
	declare version: number;
	declare settings: CreationOptional<Record<string, unknown>>;
	declare fits: CreationOptional<Record<string, unknown> | null>;
	declare corrections: CreationOptional<Record<string, unknown> | null>;
	declare isCurrent: CreationOptional<boolean>;
	declare createdBy: CreationOptional<string | null>;
	declare createdAt: CreationOptional<Date>;
	declare points?: NonAttribute<Point[]>;
}

export class Point extends Model<InferAttributes<Point>, InferCreationAttributes<Point>> {
	declare id: CreationOptional<number>;
	declare reductionId: number;
	declare idx: number;
	declare alphaDeg: CreationOptional<number | null>;
	declare cl: CreationOptional<number | null>;
	declare cd: CreationOptional<number | null>;
	declare cm: CreationOptional<number | null>;
	declare qPa: CreationOptional<number | null>;
	declare velocity: CreationOptional<number | null>;
	declare reynolds: CreationOptional<number | null>;
	declare mach: CreationOptional<number | null>;
	declare values: CreationOptional<Record<string, number | null>>;
	declare uncertainty: CreationOptional<Record<string, number> | null>;
	declare flags: CreationOptional<string[]>;
	declare excluded: CreationOptional<boolean>;
}

const bigPk = { type: DataTypes.BIGINT, primaryKey: true, autoIncrement: true };

export function defineRuns(sequelize: Sequelize) {
	const RunM = bindModel(
		Run,
		{
			id: bigPk,
			campaignId: { type: DataTypes.BIGINT, allowNull: false },
			configurationId: { type: DataTypes.BIGINT },
			runNumber: { type: DataTypes.TEXT, allowNull: false },
			kind: { type: DataTypes.TEXT, allowNull: false },
			state: { type: DataTypes.TEXT, allowNull: false, defaultValue: 'imported' },
			isTare: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
			tareRunId: { type: DataTypes.BIGINT },
			repeatOfRunId: { type: DataTypes.BIGINT },
			conditions: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
			testDate: { type: DataTypes.DATEONLY },
			notes: { type: DataTypes.TEXT },
			createdBy: { type: DataTypes.UUID },
			createdAt: DataTypes.DATE,
			updatedAt: DataTypes.DATE
		},
		{ modelName: 'run', tableName: 'runs' },
		sequelize
	);
	const SourceFileM = bindModel(
		SourceFile,
		{
			id: bigPk,
			runId: { type: DataTypes.BIGINT, allowNull: false },
			name: { type: DataTypes.TEXT, allowNull: false },
			size: { type: DataTypes.BIGINT, allowNull: false },
			sha256: { type: DataTypes.TEXT, allowNull: false },
			contentType: { type: DataTypes.TEXT },
			storage: { type: DataTypes.TEXT, allowNull: false, defaultValue: 'postgres' },
			storageKey: { type: DataTypes.TEXT },
			bytes: { type: DataTypes.BLOB },
			sheet: { type: DataTypes.TEXT },
			columnMapping: { type: DataTypes.JSONB },
			createdAt: DataTypes.DATE
		},
		// `bytes` can be large: list pages should exclude it (attributes: { exclude: ['bytes'] }).
		{ modelName: 'sourceFile', tableName: 'source_files', updatedAt: false },
		sequelize
	);
	const SampleM = bindModel(
		Sample,
		{
			runId: { type: DataTypes.BIGINT, primaryKey: true },
			sourceFileId: { type: DataTypes.BIGINT },
			rowIndex: { type: DataTypes.INTEGER, primaryKey: true },
			values: { type: DataTypes.ARRAY(DataTypes.DOUBLE), allowNull: false }
		},
		{ modelName: 'sample', tableName: 'samples', timestamps: false },
		sequelize
	);
	const ReductionM = bindModel(
		Reduction,
		{
			id: bigPk,
			runId: { type: DataTypes.BIGINT, allowNull: false },
			version: { type: DataTypes.INTEGER, allowNull: false },
			settings: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
			fits: { type: DataTypes.JSONB },
			corrections: { type: DataTypes.JSONB },
			isCurrent: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
			createdBy: { type: DataTypes.UUID },
			createdAt: DataTypes.DATE
		},
		{ modelName: 'reduction', tableName: 'reductions', updatedAt: false },
		sequelize
	);
	const PointM = bindModel(
		Point,
		{
			id: bigPk,
			reductionId: { type: DataTypes.BIGINT, allowNull: false },
			idx: { type: DataTypes.INTEGER, allowNull: false },
			alphaDeg: { type: DataTypes.DOUBLE },
			cl: { type: DataTypes.DOUBLE },
			cd: { type: DataTypes.DOUBLE },
			cm: { type: DataTypes.DOUBLE },
			qPa: { type: DataTypes.DOUBLE },
			velocity: { type: DataTypes.DOUBLE },
			reynolds: { type: DataTypes.DOUBLE },
			mach: { type: DataTypes.DOUBLE },
			values: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
			uncertainty: { type: DataTypes.JSONB },
			flags: { type: DataTypes.ARRAY(DataTypes.TEXT), allowNull: false, defaultValue: [] },
			excluded: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false }
		},
		{ modelName: 'point', tableName: 'points', timestamps: false },
		sequelize
	);
	return { Run: RunM, SourceFile: SourceFileM, Sample: SampleM, Reduction: ReductionM, Point: PointM };
}
