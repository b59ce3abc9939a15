/**
 * Object store on any S3-compatible service through @aws-sdk/client-s3.
 *
 * Uploads stream: a Uint8Array goes up in one PutObject; a Readable is cut into parts of
 * `partSize` bytes (at least 5 MiB, the S3 minimum for every part but the last) and sent as a
 * hand-made multipart upload, so memory stays at about one part whatever the file size. A stream
 * shorter than one part is sent as a single PutObject with its known length. A failed multipart
 * upload is aborted so the service drops its parts.
 */
import {
	AbortMultipartUploadCommand,
	CompleteMultipartUploadCommand,
	CreateMultipartUploadCommand,
	DeleteObjectCommand,
	GetObjectCommand,
	HeadObjectCommand,
	PutObjectCommand,
	S3Client,
	UploadPartCommand,
	type CompletedPart
} from '@aws-sdk/client-s3';
import { Readable } from 'node:stream';
import { checkRange, ObjectNotFound, validateKey, type ObjectStore, type RangeReader, type PutOptions, type PutResult } from './object-store';

export interface S3StoreConfig {
	bucket: string;
	region: string;
	/** e.g. http://127.0.0.1:9000 for a self-hosted service; omit for the provider's default. */
	endpoint?: string;
	accessKeyId?: string;
	secretAccessKey?: string;
	/** Address the bucket in the path (`endpoint/bucket/key`) rather than as a sub-domain. */
	forcePathStyle?: boolean;
	/** Multipart part size in bytes; default 8 MiB, never below 5 MiB. */
	partSize?: number;
}

const MIN_PART = 5 * 1024 * 1024;

export class S3ObjectStore implements ObjectStore {
	readonly bucket: string;
	readonly client: S3Client;
	private readonly partSize: number;

	constructor(config: S3StoreConfig, client?: S3Client) {
		this.bucket = config.bucket;
		this.partSize = Math.max(MIN_PART, config.partSize ?? 8 * 1024 * 1024);
		this.client =
			client ??
			new S3Client({
				region: config.region,
				endpoint: config.endpoint,
				forcePathStyle: config.forcePathStyle ?? false,
				credentials:
					config.accessKeyId && config.secretAccessKey
						? { accessKeyId: config.accessKeyId, secretAccessKey: config.secretAccessKey }
						: undefined
			});
	}

	async put(key: string, body: Readable | Uint8Array, opts?: PutOptions): Promise<PutResult> {
		validateKey(key);
		if (body instanceof Uint8Array) {
			await this.putWhole(key, body, opts);
			return { key, size: body.byteLength };
		}
		return this.putStream(key, body, opts);
	}

	private async putWhole(key: string, bytes: Uint8Array, opts?: PutOptions): Promise<void> {
		await this.client.send(
			new PutObjectCommand({
				Bucket: this.bucket,
				Key: key,
				Body: bytes,
				ContentLength: bytes.byteLength,
				ContentType: opts?.contentType
			})
		);
	}

	private async putStream(key: string, body: Readable, opts?: PutOptions): Promise<PutResult> {
		const parts = chunked(body, this.partSize);
		const first = await parts.next();
		const firstPart = first.done ? new Uint8Array(0) : first.value;
		const second = first.done ? { done: true as const, value: undefined } : await parts.next();
		if (second.done) {
			await this.putWhole(key, firstPart, opts);
			return { key, size: firstPart.byteLength };
		}
		const created = await this.client.send(
			new CreateMultipartUploadCommand({ Bucket: this.bucket, Key: key, ContentType: opts?.contentType })
		);
		const uploadId = created.UploadId;
		if (!uploadId) throw new Error('S3 did not return an upload id for the multipart upload');
		const done: CompletedPart[] = [];
		let size = 0;
		try {
			const sendPart = async (bytes: Uint8Array) => {
				const partNumber = done.length + 1;
				const res = await this.client.send(
					new UploadPartCommand({
						Bucket: this.bucket,
						Key: key,
						UploadId: uploadId,
						PartNumber: partNumber,
						Body: bytes,
						ContentLength: bytes.byteLength
					})
				);
				done.push({ PartNumber: partNumber, ETag: res.ETag });
				size += bytes.byteLength;
			};
			await sendPart(firstPart);
			await sendPart(second.value);
			for (let next = await parts.next(); !next.done; next = await parts.next()) await sendPart(next.value);
			await this.client.send(
				new CompleteMultipartUploadCommand({
					Bucket: this.bucket,
					Key: key,
					UploadId: uploadId,
					MultipartUpload: { Parts: done }
				})
			);
			return { key, size };
		} catch (e) {
			await this.client
				.send(new AbortMultipartUploadCommand({ Bucket: this.bucket, Key: key, UploadId: uploadId }))
				.catch(() => undefined);
			throw e;
		}
	}

	async get(key: string): Promise<Readable> {
		validateKey(key);
		try {
			const res = await this.client.send(new GetObjectCommand({ Bucket: this.bucket, Key: key }));
			const body = res.Body;
			if (body instanceof Readable) return body;
			if (body && typeof (body as { transformToByteArray?: unknown }).transformToByteArray === 'function') {
				const bytes = await (body as { transformToByteArray(): Promise<Uint8Array> }).transformToByteArray();
				return Readable.from([Buffer.from(bytes)]);
			}
			throw new Error(`S3 returned no body for ${key}`);
		} catch (e) {
			if (isNotFound(e)) throw new ObjectNotFound(key);
			throw e;
		}
	}

	async getBuffer(key: string): Promise<Buffer> {
		const stream = await this.get(key);
		const chunks: Buffer[] = [];
		for await (const chunk of stream) chunks.push(Buffer.isBuffer(chunk) ? chunk : Buffer.from(chunk as Uint8Array));
		return Buffer.concat(chunks);
	}

	async openRanges(key: string): Promise<RangeReader> {
		validateKey(key);
		if (!(await this.exists(key))) throw new ObjectNotFound(key);
		return {
			read: async (offset, length) => {
				checkRange(offset, length);
				if (length === 0) return new Uint8Array(0);
				try {
					const res = await this.client.send(new GetObjectCommand({ Bucket: this.bucket, Key: key, Range: `bytes=${offset}-${offset + length - 1}` }));
					const body = res.Body as { transformToByteArray?: () => Promise<Uint8Array> } | undefined;
					if (!body?.transformToByteArray) throw new Error(`S3 returned no body for ${key}`);
					return await body.transformToByteArray();
				} catch (e) {
					if (isNotFound(e)) throw new ObjectNotFound(key);
					// A range that starts past the end is not satisfiable: there are no bytes there.
					if ((e as { $metadata?: { httpStatusCode?: number } }).$metadata?.httpStatusCode === 416) return new Uint8Array(0);
					throw e;
				}
			},
			close: async () => undefined
		};
	}

	async exists(key: string): Promise<boolean> {
		validateKey(key);
		try {
			await this.client.send(new HeadObjectCommand({ Bucket: this.bucket, Key: key }));
			return true;
		} catch (e) {
			if (isNotFound(e)) return false;
			throw e;
		}
	}

	async delete(key: string): Promise<void> {
		validateKey(key);
		try {
			await this.client.send(new DeleteObjectCommand({ Bucket: this.bucket, Key: key }));
		} catch (e) {
			if (!isNotFound(e)) throw e;
		}
	}
}

function isNotFound(e: unknown): boolean {
	const err = e as { name?: string; $metadata?: { httpStatusCode?: number } } | null;
	return err?.name === 'NoSuchKey' || err?.name === 'NotFound' || err?.$metadata?.httpStatusCode === 404;
}

/** Re-chunk a byte stream into pieces of exactly `size` bytes (the last may be shorter). */
async function* chunked(stream: Readable, size: number): AsyncGenerator<Uint8Array, void, undefined> {
	let buffer = Buffer.alloc(size);
	let filled = 0;
	for await (const raw of stream) {
		const chunk: Buffer = typeof raw === 'string' ? Buffer.from(raw) : Buffer.isBuffer(raw) ? raw : Buffer.from(raw as Uint8Array);
		let offset = 0;
		while (offset < chunk.length) {
			const n = Math.min(size - filled, chunk.length - offset);
			chunk.copy(buffer, filled, offset, offset + n);
			filled += n;
			offset += n;
			if (filled === size) {
				yield buffer;
				buffer = Buffer.alloc(size);
				filled = 0;
			}
		}
	}
	if (filled > 0) yield buffer.subarray(0, filled);
}
