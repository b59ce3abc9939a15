/**
 * Shared set-up of the layer and recipe integration tests: both object-store backends (a
 * temporary directory, and s3rver on a free loopback port as in tests/unit/storage), a way to
 * list every stored key, and small GeoTIFFs.
 */
import { readFile, readdir, mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';
import S3rver from 's3rver';
import { ListObjectsV2Command } from '@aws-sdk/client-s3';
import { writeArrayBuffer } from 'geotiff';
import { createObjectStore, FsObjectStore, S3ObjectStore, type ObjectStore } from '../../src/lib/server/storage';

export interface TestStore {
	name: 'fs' | 's3';
	store: ObjectStore;
	keys(): Promise<string[]>;
	close(): Promise<void>;
}

async function walk(root: string, dir = root): Promise<string[]> {
	const out: string[] = [];
	let entries;
	try {
		entries = await readdir(dir, { withFileTypes: true });
	} catch {
		return out;
	}
	for (const e of entries) {
		const p = path.join(dir, e.name);
		if (e.isDirectory()) out.push(...(await walk(root, p)));
		else out.push(path.relative(root, p).split(path.sep).join('/'));
	}
	return out;
}

export async function fsTestStore(): Promise<TestStore> {
	const dir = await mkdtemp(path.join(tmpdir(), 'cairnfield-layers-fs-'));
	const store = new FsObjectStore(dir);
	return { name: 'fs', store, keys: () => walk(dir), close: () => rm(dir, { recursive: true, force: true }) };
}

export async function s3TestStore(): Promise<TestStore> {
	const dir = await mkdtemp(path.join(tmpdir(), 'cairnfield-layers-s3-'));
	const bucket = 'cairnfield-layers';
	const server = new S3rver({ address: '127.0.0.1', port: 0, silent: true, directory: dir, configureBuckets: [{ name: bucket }] });
	const addr = await server.run();
	// s3rver accepts these fixed credentials (its README); they are no secret.
	const store = createObjectStore({
		STORAGE_BACKEND: 's3',
		S3_ENDPOINT: `http://127.0.0.1:${addr.port}`,
		S3_BUCKET: bucket,
		S3_ACCESS_KEY_ID: 'S3RVER',
		S3_SECRET_ACCESS_KEY: 'S3RVER',
		S3_FORCE_PATH_STYLE: 'true'
	}) as S3ObjectStore;
	return {
		name: 's3',
		store,
		async keys() {
			const res = await store.client.send(new ListObjectsV2Command({ Bucket: bucket }));
			return (res.Contents ?? []).map((o) => o.Key!).filter(Boolean);
		},
		async close() {
			store.client.destroy();
			await server.close();
			await rm(dir, { recursive: true, force: true });
		}
	};
}

export const STORES: Array<() => Promise<TestStore>> = [fsTestStore, s3TestStore];

const demoDir = path.resolve(import.meta.dirname, '../../data/demo');
export const demoFile = (name: string) => readFile(path.join(demoDir, name));

/** A body as the upload route hands it over: a stream of chunks of at most 1 kB. */
export function streamOf(bytes: Uint8Array, chunk = 1024): Readable {
	const parts: Uint8Array[] = [];
	for (let i = 0; i < bytes.length; i += chunk) parts.push(bytes.subarray(i, i + chunk));
	return Readable.from(parts);
}

/** A single-band Float32 GeoTIFF written by the geotiff package's own writer (not our code). */
export function geotiffOf(data: number[], width: number, height: number, geo: { epsg: number; x0: number; y0: number; dx: number; dy: number; nodata?: number }): Uint8Array {
	return new Uint8Array(
		writeArrayBuffer(Float32Array.from(data), {
			width,
			height,
			ModelPixelScale: [geo.dx, geo.dy, 0],
			ModelTiepoint: [0, 0, 0, geo.x0, geo.y0, 0],
			GTModelTypeGeoKey: 1,
			GTRasterTypeGeoKey: 1,
			ProjectedCSTypeGeoKey: geo.epsg,
			...(geo.nodata !== undefined ? { GDAL_NODATA: String(geo.nodata) } : {})
		})
	);
}
