/**
 * Facilities and their column-mapping profiles (shared by the whole team):
 * the next file from a facility maps itself by header names.
 */
import { getModels, getSequelize } from '../db';
import * as audit from '../audit';
import { toProfile, type ColumnMapping } from '../imports/mapping';
import { mappingSchema } from '../runs/schemas';
import { RunError } from '../runs/errors';
import type { Actor } from '../runs/store';

export interface MappingProfileDto {
	id: number;
	facilityId: number;
	name: string;
	mapping: ColumnMapping | Record<string, unknown>;
	/** False for a stored profile that is not a version-1 mapping (it is never applied). */
	usable: boolean;
	createdBy: string | null;
	updatedAt: string;
}

export async function facilityExists(id: number): Promise<boolean> {
	return (await getModels().Facility.count({ where: { id } })) > 0;
}

export async function listProfiles(facilityId: number): Promise<MappingProfileDto[]> {
	const rows = await getModels().MappingProfile.findAll({ where: { facilityId }, order: [['name', 'ASC']] });
	return rows.map((p) => ({
		id: Number(p.id),
		facilityId: Number(p.facilityId),
		name: p.name,
		mapping: p.mapping,
		usable: mappingSchema.safeParse(p.mapping).success,
		createdBy: p.createdBy ?? null,
		updatedAt: p.updatedAt.toISOString()
	}));
}

/** Save (create, or replace by name) a profile of the facility. */
export async function saveProfile(actor: Actor, facilityId: number, input: { name: string; mapping: ColumnMapping }): Promise<{ profile: MappingProfileDto; created: boolean }> {
	const { Facility, MappingProfile } = getModels();
	return getSequelize().transaction(async (transaction) => {
		const facility = await Facility.findByPk(facilityId, { transaction });
		if (!facility) throw new RunError(404, 'not_found', 'No such facility.');
		const mapping = toProfile(input.mapping) as unknown as Record<string, unknown>;
		const existing = await MappingProfile.findOne({ where: { facilityId, name: input.name }, transaction, lock: transaction.LOCK.UPDATE });
		const row = existing ? await existing.update({ mapping }, { transaction }) : await MappingProfile.create({ facilityId, name: input.name, mapping, createdBy: actor.id }, { transaction });
		await audit.record(
			{ actor: { id: actor.id, email: actor.email }, action: existing ? 'mapping_profile.updated' : 'mapping_profile.created', entityType: 'mapping_profile', entityId: Number(row.id), details: { facilityId, name: input.name }, requestId: actor.requestId ?? null, ip: actor.ip ?? null },
			{ transaction }
		);
		return {
			created: !existing,
			profile: { id: Number(row.id), facilityId, name: row.name, mapping: row.mapping, usable: true, createdBy: row.createdBy ?? null, updatedAt: row.updatedAt.toISOString() }
		};
	});
}
