// Campaigns and versioned wing configurations.
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
import type { Facility } from './facilities';

export type CampaignKind = 'tunnel' | 'flight';
export type CampaignStatus = 'planned' | 'active' | 'closed';

/** Tolerance bands per quantity (absolute, in the quantity's own unit; coefficients are dimensionless). */
export type Tolerances = Partial<Record<'cl' | 'cd' | 'cm' | 'clAlpha' | 'alphaZeroLiftDeg' | 'e' | string, number>>;

/** One spanwise station of the wing, from root (eta 0) to tip (eta 1). SI units. */
export interface WingStation {
	/** Spanwise position 2y/b, 0 at the root, 1 at the tip. */
	eta: number;
	/** Local chord, m. */
	chord: number;
	/** Geometric twist, degrees (positive nose up). */
	twistDeg: number;
	/** Section lift-curve slope, 1/rad. */
	a0: number;
	/** Section zero-lift angle, degrees. */
	alphaZeroLiftDeg: number;
}

/** A movable or changed span segment (flap, aileron), between two eta values. */
export interface WingSegment {
	name: string;
	kind: 'flap' | 'aileron' | 'other';
	etaStart: number;
	etaEnd: number;
	deflectionDeg: number;
	/** Change of the section zero-lift angle over the segment, degrees (negative for a trailing-edge-down flap). */
	deltaAlphaZeroLiftDeg?: number;
	chordFraction?: number;
}

export interface WingGeometry {
	/** Full span b, m. */
	span: number;
	/** Half-wing stations, symmetric about the root. */
	stations: WingStation[];
	segments: WingSegment[];
}

/** Moment reference point, m, in body axes from the model's datum. */
export interface MomentReference {
	x: number;
	y: number;
	z: number;
	[key: string]: unknown;
}

export class Campaign extends Model<InferAttributes<Campaign>, InferCreationAttributes<Campaign>> {
	declare id: CreationOptional<number>;
	declare code: string;
	declare name: string;
	declare description: CreationOptional<string | null>;
	declare kind: CampaignKind;
	declare facilityId: CreationOptional<number | null>;
	declare plannedRuns: CreationOptional<number | null>;
	declare tolerances: CreationOptional<Tolerances>;
	declare status: CreationOptional<CampaignStatus>;
	declare startDate: CreationOptional<string | null>;
	declare endDate: CreationOptional<string | null>;
	declare createdBy: CreationOptional<string | null>;
	declare createdAt: CreationOptional<Date>;
	declare updatedAt: CreationOptional<Date>;
	declare facility?: NonAttribute<Facility>;
}

export class Configuration extends Model<InferAttributes<Configuration>, InferCreationAttributes<Configuration>> {
	declare id: CreationOptional<number>;
	declare campaignId: CreationOptional<number | null>;
	declare name: string;
	declare version: CreationOptional<number>;
	declare parentId: CreationOptional<number | null>;
	declare geometry: WingGeometry;
	declare refArea: CreationOptional<number | null>;
	declare refSpan: CreationOptional<number | null>;
	declare refChord: CreationOptional<number | null>;
	declare momentRef: CreationOptional<MomentReference | null>;
	declare notes: CreationOptional<string | null>;
	declare createdBy: CreationOptional<string | null>;
	declare createdAt: CreationOptional<Date>;
	declare updatedAt: CreationOptional<Date>;
}

export function defineCampaigns(sequelize: Sequelize) {
	const CampaignM = bindModel(
		Campaign,
		{
			id: { type: DataTypes.BIGINT, primaryKey: true, autoIncrement: true },
			code: { type: DataTypes.TEXT, allowNull: false, unique: true },
			name: { type: DataTypes.TEXT, allowNull: false },
			description: { type: DataTypes.TEXT },
			kind: { type: DataTypes.TEXT, allowNull: false },
			facilityId: { type: DataTypes.BIGINT },
			plannedRuns: { type: DataTypes.INTEGER },
			tolerances: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
			status: { type: DataTypes.TEXT, allowNull: false, defaultValue: 'planned' },
			startDate: { type: DataTypes.DATEONLY },
			endDate: { type: DataTypes.DATEONLY },
			createdBy: { type: DataTypes.UUID },
			createdAt: DataTypes.DATE,
			updatedAt: DataTypes.DATE
		},
		{ modelName: 'campaign', tableName: 'campaigns' },
		sequelize
	);
	const ConfigurationM = bindModel(
		Configuration,
		{
			id: { type: DataTypes.BIGINT, primaryKey: true, autoIncrement: true },
			campaignId: { type: DataTypes.BIGINT },
			name: { type: DataTypes.TEXT, allowNull: false },
			version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
			parentId: { type: DataTypes.BIGINT },
			geometry: { type: DataTypes.JSONB, allowNull: false },
			refArea: { type: DataTypes.DOUBLE },
			refSpan: { type: DataTypes.DOUBLE },
			refChord: { type: DataTypes.DOUBLE },
			momentRef: { type: DataTypes.JSONB },
			notes: { type: DataTypes.TEXT },
			createdBy: { type: DataTypes.UUID },
			createdAt: DataTypes.DATE,
			updatedAt: DataTypes.DATE
		},
		{ modelName: 'configuration', tableName: 'configurations' },
		sequelize
	);
	return { Campaign: CampaignM, Configuration: ConfigurationM };
}
