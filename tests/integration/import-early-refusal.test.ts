/**
 * An upload refused before its body has been read (a 413 for a header line
 * over the limit, a campaign that does not exist, a caller without a token)
 * must still reach Node's fetch as the JSON answer: the server reads and
 * drops the rest of the body (up to a bound) before answering, instead of
 * answering and closing mid-upload, which undici reports as a network error.
 * Real HTTP against the built server.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { QueryTypes } from 'sequelize';
import { baseUrl } from '../support/env';
import { tokenFor } from '../support/auth';
import { closeSequelize, getSequelize } from '../../src/lib/server/db';

const MB = 1024 * 1024;
const tag = Date.now().toString(36);
let token: string;
let campaign: number;

beforeAll(async () => {
	token = await tokenFor('test_engineer');
	const [row] = await getSequelize().query<{ id: string }>(
		`INSERT INTO campaigns (code, name, kind, status) VALUES (:code, 'Early refusal test campaign', 'tunnel', 'active') RETURNING id`,
		{ replacements: { code: `IT-ER-${tag}` }, type: QueryTypes.SELECT }
	);
	campaign = Number(row.id);
});

afterAll(async () => {
	await getSequelize().query('DELETE FROM runs WHERE campaign_id = :id', { replacements: { id: campaign } });
	await getSequelize().query('DELETE FROM campaigns WHERE id = :id', { replacements: { id: campaign } });
	await closeSequelize();
});

/** A CSV whose header line is 70,000 characters (the limit is 64 KiB), followed by `tail` bytes of rows. */
function longHeaderCsv(tail: number): Buffer {
	const header = Buffer.from(`${'alpha,'.repeat(11_667)}CL\n`);
	const row = Buffer.from('1.0,0.2\n');
	return Buffer.concat([header, Buffer.alloc(tail, row.toString())]);
}

function post(path: string, body: Buffer, auth = true): Promise<Response> {
	return fetch(`${baseUrl()}${path}`, {
		method: 'POST',
		headers: { 'content-type': 'text/csv', ...(auth ? { authorization: `Bearer ${token}` } : {}) },
		body: new Uint8Array(body)
	});
}

describe('early refusal of an upload reaches fetch', () => {
	it('413 for a header line over the limit, with 16 MB still unsent', async () => {
		const res = await post(`/api/v1/campaigns/${campaign}/runs?name=long-header.csv`, longHeaderCsv(16 * MB));
		expect(res.status).toBe(413);
		const body = (await res.json()) as { error: { code: string; message: string } };
		expect(body.error.code).toBe('file_too_large');
		expect(body.error.message).toMatch(/longer than the limit/);
	});

	it('404 for a campaign that does not exist, before any byte is read', async () => {
		const res = await post(`/api/v1/campaigns/999999999/runs?name=run.csv`, longHeaderCsv(8 * MB));
		expect(res.status).toBe(404);
		expect(((await res.json()) as { error: { code: string } }).error.code).toBe('not_found');
	});

	it('401 without a token, body under the 1 MB drain bound for refused callers', async () => {
		const res = await post(`/api/v1/campaigns/${campaign}/runs?name=run.csv`, longHeaderCsv(900 * 1024), false);
		expect(res.status).toBe(401);
		await res.text();
	});

	it('the server still imports a good file afterwards', async () => {
		const csv = Buffer.from('alpha [deg],CL,CD\n0,0.2,0.02\n2,0.4,0.025\n4,0.6,0.032\n6,0.8,0.041\n');
		const res = await post(`/api/v1/campaigns/${campaign}/runs?name=after-refusals.csv`, csv);
		expect(res.status, await res.clone().text()).toBe(201);
	});
});
