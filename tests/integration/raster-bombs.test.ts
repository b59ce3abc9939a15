/**
 * Decompression bombs sent as layer uploads: each is refused with a clear message, leaves no row
 * and no stored object, and the server's event loop keeps turning while it is handled (decoding
 * happens in a worker thread with memory limits).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { encodeTiff } from '../../src/bench/support/tiff-writer';
import { createNetwork } from '../../src/lib/server/services/networks';
import { uploadLayer } from '../../src/lib/server/services/layers';
import type { ServiceError } from '../../src/lib/server/services/errors';
import { createTestDatabase, makeMember, type TestDb } from '../helpers/db';
import { lzwZeroBomb, patchTiffTag, zlibZeroBomb } from '../helpers/bombs';
import { fsTestStore, streamOf, type TestStore } from './layers-support';

const geo = { tiepoint: [0, 0, 0, 500000, 5500000, 0], pixelScale: [30, 30, 0], geoKeys: [[1024, 1], [1025, 1], [3072, 32633]] as Array<[number, number]> };
const meta = { name: 'Suspicious raster', kind: 'other', fileName: 'bomb.tif' };

/** Runs `fn` while a 20 ms timer measures the longest pause of the event loop. */
async function longestPause<T>(fn: () => Promise<T>): Promise<{ result: T | Error; pauseMs: number }> {
	let last = performance.now();
	let pauseMs = 0;
	const timer = setInterval(() => {
		const now = performance.now();
		pauseMs = Math.max(pauseMs, now - last);
		last = now;
	}, 20);
	try {
		const result = await fn().catch((e: Error) => e);
		return { result, pauseMs };
	} finally {
		clearInterval(timer);
	}
}

/** A georeferenced TIFF of one strip whose stored bytes are `stream`, whatever the pixels. */
function oneStrip(width: number, height: number, sample: { format: 1 | 3; bits: 8 | 32; code: number }, stream: Uint8Array): Uint8Array {
	const bands = [sample.bits === 8 ? new Uint8Array(width * height) : new Float32Array(width * height)];
	const layout = { kind: 'strips' as const, rowsPerStrip: height };
	return new Uint8Array(encodeTiff({ width, height, bands, sampleFormat: sample.format, bitsPerSample: sample.bits, layout, compression: { code: sample.code, encode: () => stream }, geo }));
}

describe('raster decompression bombs', () => {
	let t: TestDb;
	let s: TestStore;
	let ctx: { networkId: number; organisationId: number; actorId: number };
	beforeAll(async () => {
		t = await createTestDatabase();
		s = await fsTestStore();
		const analyst = await makeMember(t.db, 'analyst');
		const networkId = await createNetwork(t.db, analyst.organisationId, analyst.userId, { name: 'Bombs', description: '', crsEpsg: 32633, publicText: '' });
		ctx = { networkId, organisationId: analyst.organisationId, actorId: analyst.userId };
	});
	afterAll(async () => {
		await s?.close();
		await t?.drop();
	});

	async function refused(bytes: Uint8Array, message: RegExp, limits = { maxBytes: 64 * 1024 * 1024, maxPixels: 25_000_000, decodeHeapMb: 512 }) {
		const { result, pauseMs } = await longestPause(() => uploadLayer(t.db, s.store, ctx, meta, streamOf(bytes, 64 * 1024), limits));
		expect(result).toBeInstanceOf(Error);
		const e = result as ServiceError;
		expect(e.status).toBe(422);
		expect(e.code).toBe('unsafe-blocks');
		expect(e.message).toMatch(message);
		expect(await t.db('layers').count({ n: '*' }).first()).toEqual({ n: 0 });
		expect(await s.keys()).toEqual([]);
		return pauseMs;
	}

	it('refuses tiles declared too large to decode, from the header alone', async () => {
		const small = encodeTiff({ width: 32, height: 32, bands: [new Float64Array(32 * 32)], sampleFormat: 3, bitsPerSample: 64, layout: { kind: 'tiles', tileWidth: 16, tileHeight: 16 }, geo });
		// TileWidth (322) and TileLength (323) rewritten to 4096: 128 MiB a tile of 64-bit samples.
		const bomb = patchTiffTag(patchTiffTag(small, 322, 4096), 323, 4096);
		await refused(new Uint8Array(bomb), /bomb\.tif: each tile would decode to 128 MB, over the limit of 64 MB/);
	});

	it('refuses a 6.7 MB Deflate strip that inflates to 1 GiB, and the event loop keeps turning', async () => {
		// 2048 × 2048 Float32 in one strip: it must inflate to 16 MiB; the stream inflates to 1 + 258 · 4 162 000 bytes ≈ 1.07 GB.
		const stream = zlibZeroBomb(4_162_000);
		expect(stream.byteLength).toBeLessThan(7 * 1024 * 1024);
		const tiff = oneStrip(2048, 2048, { format: 3, bits: 32, code: 8 }, stream);
		const pauseMs = await refused(tiff, /compressed block inflates to more than the block can hold/);
		// Decoding runs in a worker: the main thread never stalls for long (a 1 GB inflate on it takes seconds).
		expect(pauseMs).toBeLessThan(1500);
	});

	it('refuses an LZW strip that decodes to far more than its block', async () => {
		// 1024 × 1024 bytes in one strip (1 MiB); 60 string tables of LZW (about 330 kB) decode to about 420 MB.
		const stream = lzwZeroBomb(60);
		const tiff = oneStrip(1024, 1024, { format: 1, bits: 8, code: 5 }, stream);
		await refused(tiff, /compressed block inflates to more than the block can hold/);
	});

	it('ends the decoding worker, not the server, when decoding runs out of memory', async () => {
		// An honest file, but a heap limit far too small to decode anything: the worker dies, the upload is refused.
		const tiff = encodeTiff({ width: 64, height: 64, bands: [new Float32Array(64 * 64).fill(1)], sampleFormat: 3, bitsPerSample: 32, geo });
		await refused(new Uint8Array(tiff), /decoding it needed more than the 4 MB allowed/, { maxBytes: 1e6, maxPixels: 1e6, decodeHeapMb: 4 });
	});

	it('still takes an honest upload afterwards', async () => {
		const tiff = encodeTiff({ width: 4, height: 3, bands: [Array.from({ length: 12 }, (_, i) => i)], sampleFormat: 3, bitsPerSample: 32, geo });
		const layer = await uploadLayer(t.db, s.store, ctx, meta, streamOf(new Uint8Array(tiff)), { maxBytes: 1e6, maxPixels: 1e6, decodeHeapMb: 512 });
		expect(layer.status).toBe('ready');
	});
});
