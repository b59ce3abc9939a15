/**
 * Picks the object-store backend from environment variables.
 *
 *   STORAGE_BACKEND       `fs` (default) or `s3`
 *   STORAGE_DIR           fs: root directory of stored objects (default `data/objects`,
 *                         relative to the working directory)
 *   S3_BUCKET             s3: bucket name (required)
 *   S3_REGION             s3: region (default `us-east-1`; most self-hosted services ignore it)
 *   S3_ENDPOINT           s3: service URL, e.g. `http://127.0.0.1:9000`; omit for the provider default
 *   S3_ACCESS_KEY_ID      s3: access key; with S3_SECRET_ACCESS_KEY, otherwise the SDK's
 *   S3_SECRET_ACCESS_KEY      default credential chain applies
 *   S3_FORCE_PATH_STYLE   s3: `true`/`1` to address buckets as `endpoint/bucket` (needed by most
 *                         self-hosted services); default false
 */
import { FsObjectStore } from './fs-store';
import type { ObjectStore } from './object-store';
import { S3ObjectStore } from './s3-store';

export type StorageEnv = Record<string, string | undefined>;

export class StorageConfigError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'StorageConfigError';
	}
}

export const DEFAULT_STORAGE_DIR = 'data/objects';

export function createObjectStore(env: StorageEnv): ObjectStore {
	const backend = (env.STORAGE_BACKEND ?? 'fs').trim().toLowerCase() || 'fs';
	if (backend === 'fs') return new FsObjectStore(env.STORAGE_DIR?.trim() || DEFAULT_STORAGE_DIR);
	if (backend === 's3') {
		const bucket = env.S3_BUCKET?.trim();
		if (!bucket) throw new StorageConfigError('STORAGE_BACKEND=s3 needs S3_BUCKET');
		const accessKeyId = env.S3_ACCESS_KEY_ID?.trim() || undefined;
		const secretAccessKey = env.S3_SECRET_ACCESS_KEY?.trim() || undefined;
		if (Boolean(accessKeyId) !== Boolean(secretAccessKey)) {
			throw new StorageConfigError('Set both S3_ACCESS_KEY_ID and S3_SECRET_ACCESS_KEY, or neither');
		}
		return new S3ObjectStore({
			bucket,
			region: env.S3_REGION?.trim() || 'us-east-1',
			endpoint: env.S3_ENDPOINT?.trim() || undefined,
			accessKeyId,
			secretAccessKey,
			forcePathStyle: parseBool(env.S3_FORCE_PATH_STYLE, 'S3_FORCE_PATH_STYLE')
		});
	}
	throw new StorageConfigError(`STORAGE_BACKEND must be "fs" or "s3", not ${JSON.stringify(env.STORAGE_BACKEND)}`);
}

function parseBool(value: string | undefined, name: string): boolean {
	if (value === undefined || value.trim() === '') return false;
	const v = value.trim().toLowerCase();
	if (v === 'true' || v === '1' || v === 'yes') return true;
	if (v === 'false' || v === '0' || v === 'no') return false;
	throw new StorageConfigError(`${name} must be true or false, not ${JSON.stringify(value)}`);
}
