#!/usr/bin/env node
// PostgreSQL lifecycle CLI: start | stop | status | recreate <name>.
import { ensureEnv } from './lib/env.mjs';
import { ensureDatabase, ensurePostgres, recreateDatabase, status, stopPostgres } from './lib/postgres.mjs';

const [command = 'status', arg] = process.argv.slice(2);

async function main() {
	ensureEnv();
	switch (command) {
		case 'start': {
			const { host, port } = await ensurePostgres();
			const created = await ensureDatabase('spanline');
			console.log(`database "spanline" ${created ? 'created' : 'present'} on ${host}:${port}`);
			break;
		}
		case 'stop':
			await stopPostgres();
			break;
		case 'status': {
			const s = await status();
			if (!s.initialised) console.log(`no cluster yet (${s.dataDir}); run npm run db:start`);
			else if (!s.running) console.log(`PostgreSQL stopped (cluster in ${s.dataDir}, port ${s.port})`);
			else console.log(`PostgreSQL running on ${s.host}:${s.port}; databases: ${s.databases.join(', ') || '(none)'}`);
			break;
		}
		case 'recreate': {
			if (!arg) throw new Error('usage: node scripts/db.mjs recreate <database-name>');
			await ensurePostgres();
			await recreateDatabase(arg);
			console.log(`database "${arg}" recreated`);
			break;
		}
		default:
			throw new Error(`unknown command "${command}"; use start | stop | status | recreate <name>`);
	}
}

main().catch((err) => {
	console.error(`db: ${err.message}`);
	process.exit(1);
});
