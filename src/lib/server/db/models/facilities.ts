// Facilities (tunnels, and one "flight" entry per flight-test organisation)
// and the column-mapping profiles remembered per facility.
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import { bindModel } from './base';

export type FacilityKind = 'closed_jet' | 'open_jet' | 'flight';

/** Test-section geometry, SI units (m, m²). */
export interface TestSection {
	shape: 'rectangular' | 'octagonal' | 'circular' | 'elliptic' | 'none';
	widthM?: number;
	heightM?: number;
	areaM2?: number;
}

/** Wall-correction factors of the facility (dimensionless); see src/lib/aero/tunnel-corrections.ts. */
export interface FacilityCorrections {
	/** Lift-interference boundary-correction factor δ. */
	delta?: number;
	/** Streamline-curvature factor τ2. */
	tau2?: number;
	/** Solid-blockage body-shape × tunnel factor K1·τ1. */
	k1tau1?: number;
	/** How wake blockage is estimated, e.g. 'maskell' or 'thom'. */
	wakeMethod?: string;
	[key: string]: unknown;
}

export class Facility extends Model<InferAttributes<Facility>, InferCreationAttributes<Facility>> {
	declare id: CreationOptional<number>;
	declare name: string;
	declare code: string;
	declare kind: FacilityKind;
	declare testSection: CreationOptional<TestSection | null>;
	declare corrections: CreationOptional<FacilityCorrections | null>;
	declare notes: CreationOptional<string | null>;
	declare createdAt: CreationOptional<Date>;
	declare updatedAt: CreationOptional<Date>;
}

export class MappingProfile extends Model<InferAttributes<MappingProfile>, InferCreationAttributes<MappingProfile>> {
	declare id: CreationOptional<number>;
	declare facilityId: number;
	declare name: string;
	declare mapping: Record<string, unknown>;
	declare createdBy: CreationOptional<string | null>;
	declare createdAt: CreationOptional<Date>;
	declare updatedAt: CreationOptional<Date>;
}

export function defineFacilities(sequelize: Sequelize) {
	const FacilityM = bindModel(
		Facility,
		{
			id: { type: DataTypes.BIGINT, primaryKey: true, autoIncrement: true },
			name: { type: DataTypes.TEXT, allowNull: false },
			code: { type: DataTypes.TEXT, allowNull: false, unique: true },
			kind: { type: DataTypes.TEXT, allowNull: false },
			testSection: { type: DataTypes.JSONB },
			corrections: { type: DataTypes.JSONB },
			notes: { type: DataTypes.TEXT },
			createdAt: DataTypes.DATE,
			updatedAt: DataTypes.DATE
		},
		{ modelName: 'facility', tableName: 'facilities' },
		sequelize
	);
	const MappingProfileM = bindModel(
		MappingProfile,
		{
			id: { type: DataTypes.BIGINT, primaryKey: true, autoIncrement: true },
			facilityId: { type: DataTypes.BIGINT, allowNull: false },
			name: { type: DataTypes.TEXT, allowNull: false },
			mapping: { type: DataTypes.JSONB, allowNull: false },
			createdBy: { type: DataTypes.UUID },
			createdAt: DataTypes.DATE,
			updatedAt: DataTypes.DATE
		},
		{ modelName: 'mappingProfile', tableName: 'mapping_profiles' },
		sequelize
	);
	return { Facility: FacilityM, MappingProfile: MappingProfileM };
}
