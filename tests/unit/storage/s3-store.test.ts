import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import S3rver from 's3rver';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { S3ObjectStore, createObjectStore } from '../../../src/lib/server/storage';
import { objectStoreContract } from './contract';

const BUCKET = 'cairnfield-test';
let server: S3rver;
let dir = '';
let store: S3ObjectStore;
let endpoint = '';

beforeAll(async () => {
	dir = await mkdtemp(path.join(tmpdir(), 'cairnfield-s3rver-'));
	server = new S3rver({ address: '127.0.0.1', port: 0, silent: true, directory: dir, configureBuckets: [{ name: BUCKET }] });
	const addr = await server.run();
	endpoint = `http://127.0.0.1:${addr.port}`;
	// s3rver accepts these fixed credentials (its README); they are no secret.
	const made = createObjectStore({
		STORAGE_BACKEND: 's3',
		S3_ENDPOINT: endpoint,
		S3_REGION: 'us-east-1',
		S3_BUCKET: BUCKET,
		S3_ACCESS_KEY_ID: 'S3RVER',
		S3_SECRET_ACCESS_KEY: 'S3RVER',
		S3_FORCE_PATH_STYLE: 'true'
	});
	if (!(made instanceof S3ObjectStore)) throw new Error('expected the s3 backend');
	store = made;
});

afterAll(async () => {
	store?.client.destroy();
	await server?.close();
	await rm(dir, { recursive: true, force: true });
});

// 11 MiB + a little: two full 5 MiB parts and a short last part of the hand-made multipart upload.
objectStoreContract('s3', () => store, { largeBytes: 11 * 1024 * 1024 + 5 });

describe('S3ObjectStore specifics', () => {
	it('stores the content type given at put', async () => {
		const { HeadObjectCommand } = await import('@aws-sdk/client-s3');
		await store.put('typed/preview.png', new Uint8Array([137, 80, 78, 71]), { contentType: 'image/png' });
		const head = await store.client.send(new HeadObjectCommand({ Bucket: BUCKET, Key: 'typed/preview.png' }));
		expect(head.ContentType).toBe('image/png');
		expect(head.ContentLength).toBe(4);
	});

	it('sends a stream longer than one part as a multipart upload of 8 MiB parts', async () => {
		const { HeadObjectCommand } = await import('@aws-sdk/client-s3');
		const { Readable } = await import('node:stream');
		const parts: number[] = [];
		const send = store.client.send.bind(store.client);
		const spy = vi.spyOn(store.client, 'send').mockImplementation(((command: { constructor: { name: string }; input: { ContentLength?: number } }) => {
			if (command.constructor.name === 'UploadPartCommand') parts.push(command.input.ContentLength ?? -1);
			return send(command as never);
		}) as never);
		try {
			const MiB = 1024 * 1024;
			await store.put('multi/obj', Readable.from([Buffer.alloc(6 * MiB, 1), Buffer.alloc(4 * MiB + 10, 2)]));
		} finally {
			spy.mockRestore();
		}
		// Default part size 8 MiB (above the S3 minimum of 5 MiB for every part but the last,
		// per the AWS S3 multipart upload limits); the last part carries the remainder.
		expect(parts).toEqual([8 * 1024 * 1024, 2 * 1024 * 1024 + 10]);
		const head = await store.client.send(new HeadObjectCommand({ Bucket: BUCKET, Key: 'multi/obj' }));
		expect(head.ContentLength).toBe(10 * 1024 * 1024 + 10);
	});
});
