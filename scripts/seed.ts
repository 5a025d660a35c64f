// Demo data: seeds only a database without users; prints the demo accounts.
// Uses DATABASE_URL, else the project's own `spanline` database.
import { closeSequelize, getSequelize } from '../src/lib/server/db/index';
import { seedDemo } from '../src/lib/server/db/seed-data';

async function main(): Promise<void> {
	if (!process.env.DATABASE_URL) {
		const { ensureEnv } = await import('./lib/env.mjs');
		const { databaseUrl } = await import('./lib/postgres.mjs');
		ensureEnv();
		process.env.DATABASE_URL = databaseUrl('spanline');
	}
	const result = await seedDemo(getSequelize());
	if (!result.seeded) {
		console.log('database already has data; seed skipped');
	} else {
		const c = result.counts ?? {};
		console.log(`demo data seeded: ${Object.entries(c).map(([k, v]) => `${v} ${k}`).join(', ')}`);
	}
	console.log('demo accounts (invented people; change or remove them before real use):');
	for (const a of result.accounts) console.log(`  ${a.role.padEnd(16)} ${a.email.padEnd(30)} ${a.password}`);
}

main()
	.then(() => closeSequelize())
	.catch(async (err) => {
		console.error(`seed: ${err?.original?.message ?? err?.message ?? err}`);
		await closeSequelize().catch(() => {});
		process.exit(1);
	});
