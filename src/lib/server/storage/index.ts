/**
 * Where the original bytes of uploaded run files live. Two backends, chosen
 * by environment:
 *
 * - `SPANLINE_STORAGE=postgres` (default): `source_files.bytes` (bytea,
 *   stored uncompressed). The upload is spooled to a temp file while it is
 *   parsed; the file is then streamed into a temp table by COPY (hex text,
 *   never held whole in this process) and moved into the row with one
 *   UPDATE, inside the import's transaction — so the bytes commit or roll
 *   back with the run.
 * - `SPANLINE_STORAGE=s3`: an S3-compatible bucket through @aws-sdk/client-s3
 *   (S3_ENDPOINT, S3_BUCKET, S3_REGION, S3_ACCESS_KEY_ID,
 *   S3_SECRET_ACCESS_KEY, S3_FORCE_PATH_STYLE). The object key is
 *   `raw/<sha256>`; the object is written before the database commits and
 *   removed again when the transaction rolls back.
 *
 * Raw files are never altered once stored.
 */
import { createReadStream } from 'node:fs';
import { Readable, Transform } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { S3Client, PutObjectCommand, GetObjectCommand, DeleteObjectCommand, HeadObjectCommand } from '@aws-sdk/client-s3';
import { from as copyFrom } from 'pg-copy-streams';
import type { Transaction } from 'sequelize';
import { getSequelize } from '../db';

export type StorageBackend = 'postgres' | 's3';

export interface S3Settings {
	endpoint?: string;
	bucket: string;
	region: string;
	accessKeyId?: string;
	secretAccessKey?: string;
	forcePathStyle: boolean;
}

/** The backend new files go to (existing files are read from the backend recorded with them). */
export function backend(env: NodeJS.ProcessEnv = process.env): StorageBackend {
	const v = (env.SPANLINE_STORAGE ?? 'postgres').trim().toLowerCase();
	if (v === 'postgres' || v === '') return 'postgres';
	if (v === 's3') return 's3';
	throw new Error(`SPANLINE_STORAGE must be 'postgres' or 's3' (got '${v}')`);
}

export function s3Settings(env: NodeJS.ProcessEnv = process.env): S3Settings {
	const bucket = env.S3_BUCKET;
	if (!bucket) throw new Error('SPANLINE_STORAGE=s3 needs S3_BUCKET');
	return {
		endpoint: env.S3_ENDPOINT || undefined,
		bucket,
		region: env.S3_REGION || 'us-east-1',
		accessKeyId: env.S3_ACCESS_KEY_ID || undefined,
		secretAccessKey: env.S3_SECRET_ACCESS_KEY || undefined,
		forcePathStyle: /^(1|true|yes)$/i.test(env.S3_FORCE_PATH_STYLE ?? '')
	};
}

/** A client for the given settings; the caller may keep it for the process (it holds no request state). */
export function s3Client(s: S3Settings): S3Client {
	return new S3Client({
		endpoint: s.endpoint,
		region: s.region,
		forcePathStyle: s.forcePathStyle,
		// Checksums only where S3 requires them: the default streams bodies as aws-chunked with a
		// trailing checksum, which S3-compatible stores such as s3rver keep verbatim.
		requestChecksumCalculation: 'WHEN_REQUIRED',
		responseChecksumValidation: 'WHEN_REQUIRED',
		credentials: s.accessKeyId && s.secretAccessKey ? { accessKeyId: s.accessKeyId, secretAccessKey: s.secretAccessKey } : undefined
	});
}

export function objectKey(sha256: string): string {
	return `raw/${sha256}`;
}

export interface StoredFile {
	storage: StorageBackend;
	storageKey: string | null;
	/** Undo for a rolled-back transaction (removes an object written to S3). */
	discard: () => Promise<void>;
}

/** Hex-encode bytes for bytea input inside COPY text format (`\\x…`, the backslash escaped for COPY). */
function hexCopyLine(sourceFileId: number): Transform {
	let first = true;
	return new Transform({
		transform(chunk: Buffer, _enc, done) {
			const head = first ? `${sourceFileId}\t\\\\x` : '';
			first = false;
			done(null, head + chunk.toString('hex'));
		},
		flush(done) {
			done(null, (first ? `${sourceFileId}\t\\\\x` : '') + '\n');
		}
	});
}

/**
 * Store the spooled upload at `path` for source file `sourceFileId`, inside
 * `transaction` for the postgres backend.
 */
export async function putFile(input: {
	sourceFileId: number;
	sha256: string;
	path: string;
	size: number;
	contentType?: string | null;
	transaction: Transaction;
	backend?: StorageBackend;
}): Promise<StoredFile> {
	const which = input.backend ?? backend();
	if (which === 'postgres') {
		const sequelize = getSequelize();
		const t = input.transaction;
		await sequelize.query('CREATE TEMP TABLE IF NOT EXISTS spanline_upload_bytes (id bigint, bytes bytea) ON COMMIT DROP', { transaction: t });
		const client = (t as unknown as { connection: import('pg').PoolClient }).connection;
		const copy = client.query(copyFrom('COPY spanline_upload_bytes (id, bytes) FROM STDIN'));
		await pipeline(createReadStream(input.path, { highWaterMark: 1 << 20 }), hexCopyLine(input.sourceFileId), copy);
		await sequelize.query(
			`UPDATE source_files s SET bytes = u.bytes, storage = 'postgres', storage_key = NULL
			   FROM spanline_upload_bytes u WHERE u.id = s.id AND s.id = :id`,
			{ replacements: { id: input.sourceFileId }, transaction: t }
		);
		await sequelize.query('DELETE FROM spanline_upload_bytes WHERE id = :id', { replacements: { id: input.sourceFileId }, transaction: t });
		return { storage: 'postgres', storageKey: null, discard: async () => {} };
	}
	const settings = s3Settings();
	const client = s3Client(settings);
	const key = objectKey(input.sha256);
	let existed = false;
	try {
		await client.send(new HeadObjectCommand({ Bucket: settings.bucket, Key: key }));
		existed = true; // same bytes (same SHA-256) already there, e.g. after a rolled-back import
	} catch {
		existed = false;
	}
	if (!existed) {
		await client.send(
			new PutObjectCommand({
				Bucket: settings.bucket,
				Key: key,
				Body: createReadStream(input.path),
				ContentLength: input.size,
				ContentType: input.contentType ?? 'application/octet-stream',
				Metadata: { sha256: input.sha256 }
			})
		);
	}
	await getSequelize().query(`UPDATE source_files SET storage = 's3', storage_key = :key, bytes = NULL WHERE id = :id`, {
		replacements: { id: input.sourceFileId, key },
		transaction: input.transaction
	});
	return {
		storage: 's3',
		storageKey: key,
		discard: async () => {
			if (existed) return;
			await client.send(new DeleteObjectCommand({ Bucket: settings.bucket, Key: key })).catch(() => {});
		}
	};
}

/** The original bytes of a stored file as a stream. */
export async function openFile(file: { id: number; storage: string; storageKey: string | null }): Promise<Readable> {
	if (file.storage === 's3') {
		if (!file.storageKey) throw new Error(`source file ${file.id} has no storage key`);
		const settings = s3Settings();
		const res = await s3Client(settings).send(new GetObjectCommand({ Bucket: settings.bucket, Key: file.storageKey }));
		return res.Body as Readable;
	}
	// bytea comes back whole; raw files here are what the database already holds in one value.
	const rows = await getSequelize().query<{ bytes: Buffer | null }>('SELECT bytes FROM source_files WHERE id = :id', {
		replacements: { id: file.id },
		type: 'SELECT' as never
	});
	const bytes = rows[0]?.bytes;
	if (!bytes) throw new Error(`source file ${file.id} has no stored bytes`);
	return Readable.from([bytes]);
}
