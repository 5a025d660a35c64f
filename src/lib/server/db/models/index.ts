// All models of one Sequelize instance, defined once per instance (cached) and
// associated. Tables are created by the migrations, never by sync().
import type { Sequelize } from 'sequelize';
import type { SequelizeAdapterOptions } from '@auth/sequelize-adapter';
import { associate } from '../associations';
import { defineAudit } from './audit';
import { defineCampaigns } from './campaigns';
import { defineCorrelation } from './correlation';
import { defineFacilities } from './facilities';
import { defineMail } from './mail';
import { definePeople } from './people';
import { defineRuns } from './runs';
import '../pg-types';

export * from './audit';
export * from './campaigns';
export * from './correlation';
export * from './facilities';
export * from './mail';
export * from './people';
export * from './runs';

function defineAll(sequelize: Sequelize) {
	return {
		...definePeople(sequelize),
		...defineMail(sequelize),
		...defineFacilities(sequelize),
		...defineCampaigns(sequelize),
		...defineRuns(sequelize),
		...defineCorrelation(sequelize),
		...defineAudit(sequelize)
	};
}

/** The bound model classes of one Sequelize instance. */
export type Models = ReturnType<typeof defineAll>;

// Keyed by instance, so the cache dies with the instance (no process-wide registry).
const bound = new WeakMap<Sequelize, Models>();

/** Define and associate every model on `sequelize` (once; later calls return the same set). */
export function initModels(sequelize: Sequelize): Models {
	let models = bound.get(sequelize);
	if (!models) {
		models = defineAll(sequelize);
		associate(models);
		bound.set(sequelize, models);
	}
	return models;
}

/**
 * The four models in the shape `SequelizeAdapter`'s `models` option takes
 * (model classes, the same kind of object `sequelize.define` returns):
 *
 *   import SequelizeAdapter from '@auth/sequelize-adapter';
 *   const adapter = SequelizeAdapter(sequelize, { synchronize: false, models: authAdapterModels(sequelize) });
 *
 * Our User model carries the adapter's columns (id, name, email, emailVerified,
 * image) plus role, password hash and the rest; the adapter returns whole rows
 * (`get({ plain: true })`), so map them to a DTO before they reach a page
 * (never expose passwordHash). The adapter's own `Account.belongsTo(User)`
 * lands on the same `userId` attribute as our association.
 */
export function authAdapterModels(sequelize: Sequelize): NonNullable<SequelizeAdapterOptions['models']> {
	const { User, Account, Session, VerificationToken } = initModels(sequelize);
	// The adapter types its models with its own instance interfaces; ours are structurally wider.
	return { User, Account, Session, VerificationToken } as unknown as NonNullable<SequelizeAdapterOptions['models']>;
}
