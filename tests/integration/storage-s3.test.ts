/**
 * The S3 storage backend, end to end: a second instance of the built server
 * with SPANLINE_STORAGE=s3 against the s3rver fake that `npm test` starts,
 * the same fixture imported through it, and the object read back from the
 * fake with the AWS SDK. The instance also runs with a 1 MB upload limit to
 * check the 413 answer.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import { once } from 'node:events';
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { QueryTypes } from 'sequelize';
import { S3Client, GetObjectCommand } from '@aws-sdk/client-s3';
import { tokenFor } from '../support/auth';
import { closeSequelize, getSequelize } from '../../src/lib/server/db';
import { cl } from '../../fixtures/scenario';

const endpoint = process.env.SPANLINE_TEST_S3_ENDPOINT;
const bucket = process.env.S3_BUCKET ?? 'spanline-raw';
const port = 3230 + Math.floor(Math.random() * 40);
const url = `http://127.0.0.1:${port}`;
const tag = Date.now().toString(36);
const s3env = { S3_ENDPOINT: endpoint, S3_BUCKET: bucket, S3_REGION: 'us-east-1', S3_ACCESS_KEY_ID: 'S3RVER', S3_SECRET_ACCESS_KEY: 'S3RVER', S3_FORCE_PATH_STYLE: 'true' };
let child: ChildProcess;
let token: string;
let campaignId: number;
let configurationId: number;

beforeAll(async () => {
	if (!endpoint) throw new Error('SPANLINE_TEST_S3_ENDPOINT is not set: run the suite with `npm test`.');
	token = await tokenFor('test_engineer');
	const [{ id }] = await getSequelize().query<{ id: string }>(
		`INSERT INTO campaigns (code, name, kind, status) VALUES (:code, 'S3 storage test campaign', 'tunnel', 'active') RETURNING id`,
		{ replacements: { code: `IT-S3-${tag}` }, type: QueryTypes.SELECT }
	);
	campaignId = Number(id);
	const [cfg] = await getSequelize().query<{ id: string }>(
		`INSERT INTO configurations (campaign_id, name, geometry, ref_area, ref_span, ref_chord) VALUES (:c, :n, '{"span":1.2,"stations":[],"segments":[]}', 0.18, 1.2, 0.15) RETURNING id`,
		{ replacements: { c: campaignId, n: `S3 test wing ${tag}` }, type: QueryTypes.SELECT }
	);
	configurationId = Number(cfg.id);
	child = spawn('node', [process.env.SPANLINE_TEST_BUILD ?? 'build'], {
		env: { ...process.env, PORT: String(port), ORIGIN: url, SPANLINE_STORAGE: 's3', SPANLINE_MAX_UPLOAD_MB: '1', ...s3env },
		stdio: ['ignore', 'pipe', 'pipe']
	});
	let out = '';
	child.stdout!.on('data', (d) => (out += d));
	child.stderr!.on('data', (d) => (out += d));
	const until = Date.now() + 20_000;
	while (!out.includes('Listening on') && Date.now() < until) await new Promise((r) => setTimeout(r, 100));
	if (!out.includes('Listening on')) throw new Error(`the S3 instance did not start:\n${out}`);
});

afterAll(async () => {
	child?.kill('SIGTERM');
	if (child) await once(child, 'exit');
	await closeSequelize();
});

function upload(name: string, body: Buffer | string, params: Record<string, string> = {}) {
	const sp = new URLSearchParams({ name, ...params });
	return fetch(`${url}/api/v1/campaigns/${campaignId}/runs?${sp}`, { method: 'POST', body: typeof body === 'string' ? body : new Uint8Array(body), headers: { authorization: `Bearer ${token}`, 'content-type': 'text/csv' } });
}

describe('S3 storage backend', () => {
	it('imports through the S3 instance, keeps the bytes as raw/<sha256> in the bucket and serves them back', async () => {
		// The clean polar with a unique note line above it, so this pass's bytes are new to the database.
		const bytes = Buffer.concat([Buffer.from(`Note,s3 round trip ${tag}\n`), readFileSync(join(process.cwd(), 'fixtures', 'tunnel-clean-polar.csv'))]);
		const sha = createHash('sha256').update(bytes).digest('hex');
		const res = await upload('s3-polar.csv', bytes, { runNumber: `S3-${tag}`, configurationId: String(configurationId) });
		const body = await res.json();
		expect(res.status, JSON.stringify(body)).toBe(201);
		const f = body.run.sourceFiles[0];
		expect(f).toMatchObject({ storage: 's3', sha256: sha, size: bytes.length });
		const [row] = await getSequelize().query<{ storage_key: string; has_bytes: boolean }>(
			'SELECT storage_key, bytes IS NOT NULL AS has_bytes FROM source_files WHERE id = :id',
			{ replacements: { id: f.id }, type: QueryTypes.SELECT }
		);
		expect(row).toEqual({ storage_key: `raw/${sha}`, has_bytes: false });
		const s3 = new S3Client({ endpoint, region: 'us-east-1', forcePathStyle: true, credentials: { accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' } });
		const obj = await s3.send(new GetObjectCommand({ Bucket: bucket, Key: `raw/${sha}` }));
		const back = Buffer.from(await obj.Body!.transformToByteArray());
		expect(back.equals(bytes)).toBe(true);
		const dl = await fetch(`${url}/api/v1/runs/${body.run.id}/files/${f.id}`, { headers: { authorization: `Bearer ${token}` } });
		expect(Buffer.from(await dl.arrayBuffer()).equals(bytes)).toBe(true);
		expect(body.run.currentReduction.version).toBe(1);
		const pts = await (await fetch(`${url}/api/v1/runs/${body.run.id}/points`, { headers: { authorization: `Bearer ${token}` } })).json();
		expect(pts.points[8].CL).toBeCloseTo(cl(2), 6); // no facility, so no boundary corrections: the polar itself
	});

	it('a file above SPANLINE_MAX_UPLOAD_MB is refused with 413 file_too_large and nothing is stored', async () => {
		const [before] = await getSequelize().query<{ n: string }>('SELECT count(*) AS n FROM runs', { type: QueryTypes.SELECT });
		const line = `${cl(2).toFixed(6)},0.05,2.0\n`;
		const big = 'CL,CD,Alpha [deg]\n' + line.repeat(Math.ceil((1.2 * 1024 * 1024) / line.length));
		const res = await upload('big.csv', big);
		expect(res.status).toBe(413);
		const body = await res.json();
		expect(body.error.code).toBe('file_too_large');
		expect(body.error.message).toMatch(/1 MB/);
		const [after] = await getSequelize().query<{ n: string }>('SELECT count(*) AS n FROM runs', { type: QueryTypes.SELECT });
		expect(after.n).toBe(before.n);
	});
});
