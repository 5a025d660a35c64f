// Schema migrations: `up` (default), `down` (all the way to an empty schema, or
// `--to <name|0>`), `status`. Uses DATABASE_URL, else the project's own
// `spanline` database (the cluster must be running: npm run db:start).
import { closeSequelize, getSequelize } from '../src/lib/server/db/index';
import { createMigrator } from '../src/lib/server/db/migrator';

async function resolveDatabaseUrl(): Promise<void> {
	if (process.env.DATABASE_URL) return;
	const { ensureEnv } = await import('./lib/env.mjs');
	const { databaseUrl } = await import('./lib/postgres.mjs');
	ensureEnv();
	process.env.DATABASE_URL = databaseUrl('spanline');
}

function maskedUrl(): string {
	return (process.env.DATABASE_URL ?? '').replace(/\/\/([^:/@]+):[^@]*@/, '//$1:***@');
}

async function main(): Promise<void> {
	const args = process.argv.slice(2);
	// The last bare word wins, so `npm run db:migrate -- status` (argv "up status") does what it says.
	const words = args.filter((a, i) => !a.startsWith('--') && args[i - 1] !== '--to');
	const command = words.at(-1) ?? 'up';
	const rest = args;
	await resolveDatabaseUrl();
	const log = (m: string) => console.log(`  ${m}`);
	const migrator = createMigrator(getSequelize(), { log });
	console.log(`migrate ${command}: ${maskedUrl()}`);
	switch (command) {
		case 'up': {
			const done = await migrator.up();
			console.log(done.length ? `applied ${done.length} migration(s)` : 'schema is up to date');
			break;
		}
		case 'down': {
			const i = rest.indexOf('--to');
			const to = i >= 0 ? rest[i + 1] : 0;
			if (i >= 0 && !to) throw new Error('--to needs a migration name or 0');
			const done = await migrator.down({ to: to === '0' || to === 0 ? 0 : (to as string) });
			console.log(done.length ? `reverted ${done.length} migration(s)` : 'nothing to revert');
			break;
		}
		case 'status': {
			const executed = await migrator.executed();
			const pending = await migrator.pending();
			for (const m of executed) console.log(`  applied  ${m.name}`);
			for (const m of pending) console.log(`  pending  ${m.name}`);
			console.log(`${executed.length} applied, ${pending.length} pending`);
			break;
		}
		default:
			throw new Error(`unknown command "${command}"; use up | down [--to <name|0>] | status`);
	}
}

main()
	.then(() => closeSequelize())
	.catch(async (err) => {
		console.error(`migrate: ${err?.original?.message ?? err?.message ?? err}`);
		await closeSequelize().catch(() => {});
		process.exit(1);
	});
