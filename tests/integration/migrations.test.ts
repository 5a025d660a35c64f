// Schema migrations against the real PostgreSQL: up on an empty database,
// demo seed, the Auth.js Sequelize adapter on our tables, down to empty, up again.
// Runs in its own scratch database so it never disturbs the shared test database.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Model, ModelStatic, Sequelize } from 'sequelize';
import { QueryTypes } from 'sequelize';
import SequelizeAdapter, { models as adapterModels } from '@auth/sequelize-adapter';
import { ensurePostgres, recreateDatabase, dropDatabase, databaseUrl } from '../../scripts/lib/postgres.mjs';
import { createSequelize, initModels, authAdapterModels } from '../../src/lib/server/db/index';
import { createMigrator, MIGRATIONS, MIGRATIONS_TABLE } from '../../src/lib/server/db/migrator';
import { seedDemo, DEMO_ACCOUNTS } from '../../src/lib/server/db/seed-data';

const SCRATCH = 'spanline_migrations_test';

const EXPECTED_TABLES = [
	'users',
	'accounts',
	'sessions',
	'verification_tokens',
	'invitations',
	'sign_in_attempts',
	'api_tokens',
	'mail_outbox',
	'facilities',
	'mapping_profiles',
	'campaigns',
	'configurations',
	'runs',
	'source_files',
	'samples',
	'reductions',
	'points',
	'predictions',
	'deltas',
	'audit_events',
	'calibrations',
	'notification_preferences',
	'digest_deliveries',
	'summary_snapshots',
	'tolerance_notices'
].sort();

let sequelize: Sequelize;

async function tables(): Promise<string[]> {
	// Aliased: Sequelize post-processes a query that starts "SELECT table_name FROM information_schema.tables".
	const rows = await sequelize.query<{ name: string }>(
		"SELECT t.table_name AS name FROM information_schema.tables t WHERE t.table_schema = 'public' AND t.table_type = 'BASE TABLE' ORDER BY 1",
		{ type: QueryTypes.SELECT }
	);
	return rows.map((r) => r.name);
}

async function columns(table: string): Promise<string[]> {
	const rows = await sequelize.query<{ column_name: string }>(
		"SELECT column_name FROM information_schema.columns WHERE table_schema = 'public' AND table_name = :table",
		{ type: QueryTypes.SELECT, replacements: { table } }
	);
	return rows.map((r) => r.column_name);
}

/** Sequelize's own snake_case rule for `underscored: true` (providerAccountId → provider_account_id). */
const snake = (s: string) => s.replace(/([a-z\d])([A-Z])/g, '$1_$2').toLowerCase();

beforeAll(async () => {
	await ensurePostgres({ log: () => {} });
	await recreateDatabase(SCRATCH);
	sequelize = createSequelize(databaseUrl(SCRATCH));
});

afterAll(async () => {
	await sequelize?.close();
	await dropDatabase(SCRATCH);
});

describe('migrations', () => {
	it('apply every migration on an empty database and create every table', async () => {
		expect(await tables()).toEqual([]);
		const applied = await createMigrator(sequelize).up();
		expect(applied.map((m) => m.name)).toEqual(MIGRATIONS.map((m) => m.name));
		expect(await tables()).toEqual([...EXPECTED_TABLES, MIGRATIONS_TABLE].sort());
		expect(await createMigrator(sequelize).pending()).toEqual([]);
	});

	it('give the Auth.js tables every column @auth/sequelize-adapter maps under underscored: true', async () => {
		const expected: Record<string, Record<string, unknown>> = {
			users: adapterModels.User,
			accounts: adapterModels.Account,
			sessions: adapterModels.Session,
			verification_tokens: adapterModels.VerificationToken
		};
		for (const [table, attrs] of Object.entries(expected)) {
			const have = await columns(table);
			for (const attr of Object.keys(attrs)) expect(have, `${table}.${snake(attr)}`).toContain(snake(attr));
		}
	});

	it('match every model attribute to a column of its table', async () => {
		const models = initModels(sequelize);
		for (const model of Object.values(models) as ModelStatic<Model>[]) {
			const have = await columns(model.getTableName() as string);
			for (const attr of Object.values(model.getAttributes())) {
				expect(have, `${model.getTableName()}.${attr.field}`).toContain(attr.field);
			}
		}
	});

	it('seed the demo scenario once', async () => {
		const first = await seedDemo(sequelize);
		expect(first.seeded).toBe(true);
		expect(first.counts).toEqual({ users: 4, facilities: 2, campaigns: 2, configurations: 4, runs: 7 });
		const second = await seedDemo(sequelize);
		expect(second.seeded).toBe(false);

		const m = initModels(sequelize);
		expect(await m.User.count()).toBe(4);
		const roles = (await m.User.findAll({ order: [['email', 'ASC']] })).map((u) => u.role).sort();
		expect(roles).toEqual(['admin', 'aerodynamicist', 'program_manager', 'test_engineer']);
		const states = new Set((await m.Run.findAll()).map((r) => r.state));
		for (const s of ['imported', 'reduced', 'reviewed', 'accepted']) expect(states).toContain(s);
		expect(DEMO_ACCOUNTS.map((a) => a.email)).toContain('admin@spanline.test');
	});

	it('enforce the constraints the schema promises', async () => {
		const m = initModels(sequelize);
		// Role CHECK (bypassing the model's own validation).
		await expect(
			sequelize.query("INSERT INTO users (email, role) VALUES ('x@spanline.test', 'pilot')")
		).rejects.toThrow(/users_role_check/);
		// Lower-cased e-mail CHECK.
		await expect(
			sequelize.query("INSERT INTO users (email, role) VALUES ('Upper@Spanline.test', 'admin')")
		).rejects.toThrow(/users_email_lower_case/);
		// The model lower-cases on the way in.
		const u = await m.User.create({ email: '  Mixed.Case@Spanline.TEST ', name: 'Case Check', role: 'program_manager' });
		expect(u.email).toBe('mixed.case@spanline.test');
		await u.destroy();

		const run = (await m.Run.findOne({ where: { runNumber: 'R002' } }))!;
		expect(typeof run.id).toBe('number');
		// Run numbers are unique per campaign.
		await expect(
			m.Run.create({ campaignId: run.campaignId, runNumber: 'R002', kind: 'tunnel' })
		).rejects.toMatchObject({
			name: 'SequelizeUniqueConstraintError',
			original: { constraint: 'runs_campaign_run_number_key' }
		});
		// State CHECK.
		await expect(sequelize.query(`UPDATE runs SET state = 'done' WHERE id = ${run.id}`)).rejects.toThrow(/runs_state_check/);

		// Samples and points go with their run; the raw double precision[] round-trips.
		const extra = await m.Run.create({ campaignId: run.campaignId, runNumber: 'R999', kind: 'tunnel' });
		await m.Sample.bulkCreate([
			{ runId: extra.id, rowIndex: 0, values: [0, 1.5, -2.25] },
			{ runId: extra.id, rowIndex: 1, values: [1, 1.75, -2.5] }
		]);
		const red = await m.Reduction.create({ runId: extra.id, version: 1, isCurrent: true });
		await m.Point.create({ reductionId: red.id, idx: 0, alphaDeg: 2, cl: 0.45, flags: ['repeat'] });
		const back = await m.Sample.findOne({ where: { runId: extra.id, rowIndex: 0 } });
		expect(back!.values).toEqual([0, 1.5, -2.25]);
		// Only one current reduction per run.
		await expect(m.Reduction.create({ runId: extra.id, version: 2, isCurrent: true })).rejects.toMatchObject({
			name: 'SequelizeUniqueConstraintError',
			original: { constraint: 'reductions_one_current_per_run' }
		});
		await extra.destroy();
		expect(await m.Sample.count({ where: { runId: extra.id } })).toBe(0);
		expect(await m.Point.count({ where: { reductionId: red.id } })).toBe(0);

		// A campaign with runs cannot be deleted (raw data is never lost by accident).
		await expect(sequelize.query(`DELETE FROM campaigns WHERE id = ${run.campaignId}`)).rejects.toThrow(/foreign key/);
	});

	it('serve the Auth.js Sequelize adapter with our models', async () => {
		const adapter = SequelizeAdapter(sequelize, { synchronize: false, models: authAdapterModels(sequelize) });
		const user = await adapter.getUserByEmail!('aero@spanline.test');
		expect(user).toMatchObject({ email: 'aero@spanline.test', role: 'aerodynamicist' });

		const expires = new Date(Date.now() + 3600_000);
		await adapter.createSession!({ sessionToken: 'session-token-1', userId: user!.id, expires });
		const both = await adapter.getSessionAndUser!('session-token-1');
		expect(both?.user.email).toBe('aero@spanline.test');
		expect(both?.session.expires.getTime()).toBe(expires.getTime());

		await adapter.linkAccount!({ userId: user!.id, type: 'oidc', provider: 'demo-idp', providerAccountId: 'abc-123' });
		const linked = await adapter.getUserByAccount!({ provider: 'demo-idp', providerAccountId: 'abc-123' });
		expect(linked?.id).toBe(user!.id);

		await adapter.createVerificationToken!({ identifier: 'aero@spanline.test', token: 'hashed-token', expires });
		const used = await adapter.useVerificationToken!({ identifier: 'aero@spanline.test', token: 'hashed-token' });
		expect(used?.token).toBe('hashed-token');
		expect(await adapter.useVerificationToken!({ identifier: 'aero@spanline.test', token: 'hashed-token' })).toBeNull();

		await adapter.deleteSession!('session-token-1');
		expect(await adapter.getSessionAndUser!('session-token-1')).toBeNull();
	});

	it('revert every migration down to an empty schema', async () => {
		const reverted = await createMigrator(sequelize).down({ to: 0 });
		expect(reverted.map((m) => m.name)).toEqual(MIGRATIONS.map((m) => m.name).reverse());
		expect(await tables()).toEqual([MIGRATIONS_TABLE]);
		expect(await createMigrator(sequelize).executed()).toEqual([]);
	});

	it('apply every migration again after a full revert', async () => {
		await createMigrator(sequelize).up();
		expect(await tables()).toEqual([...EXPECTED_TABLES, MIGRATIONS_TABLE].sort());
	});
});
