import type { QueryInterface, Sequelize, Transaction } from 'sequelize';

/** What every migration's `up` and `down` receive: the migrator opens one transaction per migration. */
export interface MigrationContext {
	queryInterface: QueryInterface;
	sequelize: Sequelize;
	transaction: Transaction;
}

export type MigrationFn = (ctx: MigrationContext) => Promise<void>;

export interface MigrationModule {
	up: MigrationFn;
	down: MigrationFn;
}

/** Run a block of DDL inside the migration's transaction. */
export async function sql(ctx: MigrationContext, text: string): Promise<void> {
	await ctx.sequelize.query(text, { transaction: ctx.transaction });
}
