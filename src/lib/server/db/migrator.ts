// Schema migrations with umzug. The list is static (each file imported by
// name) because the production bundle cannot scan the file system. Each
// migration's up/down runs inside its own transaction: a failing migration
// leaves no half-built schema behind. Applied names are kept in
// `schema_migrations`.
import type { Sequelize } from 'sequelize';
import { SequelizeStorage, Umzug } from 'umzug';
import * as m20261201T2320 from './migrations/2026-12-01T2320-create-users-and-auth';
import * as m20261201T2330 from './migrations/2026-12-01T2330-create-facilities-campaigns-configurations';
import * as m20261201T2340 from './migrations/2026-12-01T2340-create-runs-and-measurements';
import * as m20261201T2350 from './migrations/2026-12-01T2350-create-predictions-deltas-audit';
import * as m20261202T0100 from './migrations/2026-12-02T0100-audit-client-address';
import * as m20261202T0300 from './migrations/2026-12-02T0300-source-file-layout';
import * as m20261202T0310 from './migrations/2026-12-02T0310-correlation-current-and-calibrations';
import * as m20261202T0400 from './migrations/2026-12-02T0400-notification-preferences-and-digests';
import * as m20261202T0500 from './migrations/2026-12-02T0500-samples-without-row-checks';
import * as m20261202T0600 from './migrations/2026-12-02T0600-auth-change-notices';
import type { MigrationModule } from './migrations/types';

/** Append new migrations at the end, in timestamp order. */
export const MIGRATIONS: ReadonlyArray<{ name: string; module: MigrationModule }> = [
	{ name: '2026-12-01T2320-create-users-and-auth', module: m20261201T2320 },
	{ name: '2026-12-01T2330-create-facilities-campaigns-configurations', module: m20261201T2330 },
	{ name: '2026-12-01T2340-create-runs-and-measurements', module: m20261201T2340 },
	{ name: '2026-12-01T2350-create-predictions-deltas-audit', module: m20261201T2350 },
	{ name: '2026-12-02T0100-audit-client-address', module: m20261202T0100 },
	{ name: '2026-12-02T0300-source-file-layout', module: m20261202T0300 },
	{ name: '2026-12-02T0310-correlation-current-and-calibrations', module: m20261202T0310 },
	{ name: '2026-12-02T0400-notification-preferences-and-digests', module: m20261202T0400 },
	{ name: '2026-12-02T0500-samples-without-row-checks', module: m20261202T0500 },
	{ name: '2026-12-02T0600-auth-change-notices', module: m20261202T0600 }
];

export const MIGRATIONS_TABLE = 'schema_migrations';

export interface MigratorContext {
	sequelize: Sequelize;
}

export function createMigrator(sequelize: Sequelize, { log }: { log?: (message: string) => void } = {}) {
	const queryInterface = sequelize.getQueryInterface();
	return new Umzug<MigratorContext>({
		context: { sequelize },
		storage: new SequelizeStorage({ sequelize, tableName: MIGRATIONS_TABLE }),
		logger: log
			? {
					info: (m) => log(describe(m)),
					warn: (m) => log(describe(m)),
					error: (m) => log(describe(m)),
					debug: () => {}
				}
			: undefined,
		migrations: MIGRATIONS.map(({ name, module }) => ({
			name,
			up: () => sequelize.transaction((transaction) => module.up({ sequelize, queryInterface, transaction })),
			down: () => sequelize.transaction((transaction) => module.down({ sequelize, queryInterface, transaction }))
		}))
	});
}

function describe(m: Record<string, unknown>): string {
	const event = String(m.event ?? '');
	const name = String(m.name ?? '');
	const ms = typeof m.durationSeconds === 'number' ? ` (${Math.round(m.durationSeconds * 1000)} ms)` : '';
	return `${event} ${name}${ms}`.trim();
}
