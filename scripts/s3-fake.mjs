// Local S3-compatible object store for tests and development (the `s3rver`
// package), on 127.0.0.1 only. Env: S3_FAKE_PORT (default 4569),
// S3_FAKE_DIR (default .data/s3), S3_BUCKET (default spanline-raw).
import S3rver from 's3rver';
import { mkdirSync } from 'node:fs';
import { join, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const port = Number(process.env.S3_FAKE_PORT ?? 4569);
const directory = process.env.S3_FAKE_DIR ?? join(root, '.data', 's3');
const bucket = process.env.S3_BUCKET ?? 'spanline-raw';
mkdirSync(directory, { recursive: true });

const server = new S3rver({ address: '127.0.0.1', port, silent: true, directory, configureBuckets: [{ name: bucket }] });
await server.run();
console.log(`s3 fake ready on http://127.0.0.1:${port} (bucket ${bucket})`);

const stop = () => server.close().finally(() => process.exit(0));
process.on('SIGTERM', stop);
process.on('SIGINT', stop);
