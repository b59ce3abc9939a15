import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { FsObjectStore, S3ObjectStore, StorageConfigError, createObjectStore, newObjectKey, validateKey, InvalidObjectKey } from '../../../src/lib/server/storage';

describe('createObjectStore(env)', () => {
	it('defaults to the file system under data/objects', () => {
		const store = createObjectStore({});
		expect(store).toBeInstanceOf(FsObjectStore);
		expect((store as FsObjectStore).root).toBe(path.resolve('data/objects'));
	});
	it('honours STORAGE_DIR', () => {
		const store = createObjectStore({ STORAGE_BACKEND: 'fs', STORAGE_DIR: '/tmp/cf-objects' });
		expect((store as FsObjectStore).root).toBe('/tmp/cf-objects');
	});
	it('builds an S3 store from the S3_* variables', () => {
		const store = createObjectStore({ STORAGE_BACKEND: 'S3', S3_BUCKET: 'b', S3_ENDPOINT: 'http://127.0.0.1:1', S3_FORCE_PATH_STYLE: '1' });
		expect(store).toBeInstanceOf(S3ObjectStore);
		expect((store as S3ObjectStore).bucket).toBe('b');
		(store as S3ObjectStore).client.destroy();
	});
	it('refuses an unknown backend, a missing bucket, half credentials and a bad boolean', () => {
		expect(() => createObjectStore({ STORAGE_BACKEND: 'ftp' })).toThrow(StorageConfigError);
		expect(() => createObjectStore({ STORAGE_BACKEND: 's3' })).toThrow(/S3_BUCKET/);
		expect(() => createObjectStore({ STORAGE_BACKEND: 's3', S3_BUCKET: 'b', S3_ACCESS_KEY_ID: 'k' })).toThrow(/both/);
		expect(() => createObjectStore({ STORAGE_BACKEND: 's3', S3_BUCKET: 'b', S3_FORCE_PATH_STYLE: 'maybe' })).toThrow(/S3_FORCE_PATH_STYLE/);
	});
});

describe('newObjectKey(prefix)', () => {
	it('puts a random UUID under the prefix, different every call', () => {
		const a = newObjectKey('layers/');
		const b = newObjectKey('layers');
		expect(a).toMatch(/^layers\/[0-9a-f]{8}-[0-9a-f]{4}-4[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/);
		expect(a).not.toBe(b);
		expect(validateKey(a)).toBe(a);
	});
	it('refuses a prefix that is not a valid key', () => {
		expect(() => newObjectKey('../x')).toThrow(InvalidObjectKey);
	});
	it('allows an empty prefix', () => {
		expect(newObjectKey('')).toMatch(/^[0-9a-f-]{36}$/);
	});
});
