// `npm start`: dependencies, PostgreSQL on loopback, migrations, demo data on
// an empty database, the mail fake, a production build, then scripts/serve.mjs (worker processes over build/).
import { ensureDependencies, step, run, build, startChild, waitForHttp, mailEnv, root } from './lib/setup.mjs';
import { join } from 'node:path';

ensureDependencies();
const { ensureEnv } = await import('./lib/env.mjs');
const pg = await import('./lib/postgres.mjs');

const fileEnv = ensureEnv();
step('Starting PostgreSQL on 127.0.0.1');
await pg.ensurePostgres();
await pg.ensureDatabase('spanline');

const port = Number(process.env.SPANLINE_PORT ?? 3000);
const origin = process.env.ORIGIN ?? `http://127.0.0.1:${port}`;
const smtpPort = Number(process.env.SPANLINE_SMTP_PORT ?? 2525);
const mailHttpPort = Number(process.env.SPANLINE_MAIL_HTTP_PORT ?? 2580);
const useFake = !process.env.SMTP_HOST;
const env = {
	...process.env,
	DATABASE_URL: process.env.DATABASE_URL ?? pg.databaseUrl('spanline'),
	AUTH_SECRET: process.env.AUTH_SECRET ?? fileEnv.AUTH_SECRET,
	SPANLINE_ENV: process.env.SPANLINE_ENV ?? 'development',
	...(useFake ? mailEnv(smtpPort, mailHttpPort) : {}),
	HOST: '127.0.0.1',
	PORT: String(port),
	ORIGIN: origin,
	// Uploads are limited per route by the app itself (see imports).
	BODY_SIZE_LIMIT: process.env.BODY_SIZE_LIMIT ?? 'Infinity'
};

step('Migrating the database');
run('npx', ['tsx', 'scripts/migrate.ts', 'up'], { env });
step('Demo data (only into an empty database)');
run('npx', ['tsx', 'scripts/seed.ts'], { env });

build(env);

const children = [];
if (useFake) {
	step(`Starting the local mail fake (SMTP 127.0.0.1:${smtpPort}, captured mail at ${origin}/admin/mail)`);
	children.push(
		await startChild('mail fake', 'node', ['scripts/mail-fake.mjs'], {
			env,
			ready: /mail fake ready/,
			logFile: join(root, '.data', 'logs', 'mail-fake.log')
		})
	);
}
step('Serving the production build');
const server = await startChild('app server', 'node', ['scripts/serve.mjs', 'build'], {
	env,
	ready: /Listening on/,
	logFile: join(root, '.data', 'logs', 'app.log'),
	echo: true
});
children.push(server);
await waitForHttp(`${origin}/api/v1/health`);

console.log(`
Spanline is running at ${origin}
Demo accounts (invented, for this machine only) are printed by the seed step above.
Press Ctrl-C to stop the app; the database keeps its data (npm run db:stop stops PostgreSQL).`);

function stop() {
	for (const child of children) child.kill('SIGTERM');
	setTimeout(() => process.exit(0), 500).unref();
}
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
server.on('exit', (code) => {
	console.log(`app server exited (${code})`);
	for (const child of children) child.kill('SIGTERM');
	process.exit(code ?? 1);
});
