import { deflateSync } from 'node:zlib';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { encodeTiff } from '../../src/bench/support/tiff-writer';
import { DEFAULT_MAX_PIXELS } from '../../src/lib/server/layers';
import { createNetwork } from '../../src/lib/server/services/networks';
import { deleteLayer, layerLimits, layerPreview, listLayerViews, uploadLayer, UploadTooLarge } from '../../src/lib/server/services/layers';
import { saveRecipeVersion } from '../../src/lib/server/services/importance';
import { ServiceError } from '../../src/lib/server/services/errors';
import { createTestDatabase, makeMember, type TestDb } from '../helpers/db';
import { demoFile, geotiffOf, STORES, streamOf, type TestStore } from './layers-support';

const limits = { maxBytes: 10 * 1024 * 1024, maxPixels: 25_000_000 };

// A 4×3 Float32 raster in UTM 33N for refusals built with our TIFF writer.
const geo = { tiepoint: [0, 0, 0, 500000, 5500000, 0], pixelScale: [30, 30, 0], geoKeys: [[1024, 1], [1025, 1], [3072, 32633]] as Array<[number, number]> };
const base = { width: 4, height: 3, bands: [Array.from({ length: 12 }, (_, i) => i)], sampleFormat: 3 as const, bitsPerSample: 32 as const };

describe('layerLimits', () => {
	it('defaults to 500 MB and 250 million pixels, reads LAYER_MAX_BYTES and refuses nonsense', () => {
		expect(layerLimits({})).toEqual({ maxBytes: 524_288_000, maxPixels: 250_000_000, decodeHeapMb: 512 });
		expect(layerLimits({}).maxPixels).toBe(DEFAULT_MAX_PIXELS); // the same default as inspectLayer
		expect(layerLimits({ LAYER_MAX_BYTES: '1000' }).maxBytes).toBe(1000);
		expect(() => layerLimits({ LAYER_MAX_BYTES: '-1' })).toThrow(/LAYER_MAX_BYTES/);
	});
});

for (const makeStore of STORES) {
	describe(`layers service (${makeStore.name})`, () => {
		let t: TestDb;
		let s: TestStore;
		let ctx: { networkId: number; organisationId: number; actorId: number };
		beforeAll(async () => {
			t = await createTestDatabase();
			s = await makeStore();
			const analyst = await makeMember(t.db, 'analyst');
			const networkId = await createNetwork(t.db, analyst.organisationId, analyst.userId, { name: `Layers ${s.name}`, description: '', crsEpsg: 32632, publicText: '' });
			ctx = { networkId, organisationId: analyst.organisationId, actorId: analyst.userId };
		});
		afterAll(async () => {
			await s?.close();
			await t?.drop();
		});

		const meta = (over: Record<string, unknown> = {}) => ({ name: 'Soil moisture, March', kind: 'soil_moisture', units: 'm³/m³', acquiredOn: '2026-03-14', platform: 'satellite', band: '1', fileName: 'soil-moisture.tif', ...over });

		async function expectNothingLeft(run: () => Promise<unknown>, status: number, code: string | null, message: RegExp) {
			const before = { rows: (await t.db('layers').count({ n: '*' }))[0].n, keys: (await s.keys()).length };
			const err = await run().then(() => null, (e: unknown) => e);
			expect(err, 'the upload must be refused').toBeTruthy();
			const e = err as ServiceError | UploadTooLarge;
			expect(e.status).toBe(status);
			if (code) expect(e.code).toBe(code);
			expect(e.message).toMatch(message);
			expect((await t.db('layers').count({ n: '*' }))[0].n).toBe(before.rows);
			expect((await s.keys()).length).toBe(before.keys);
		}

		it('uploads the demo soil moisture GeoTIFF: ready, metadata as the demo README says, preview stored', async () => {
			const bytes = await demoFile('soil-moisture.tif');
			const layer = await uploadLayer(t.db, s.store, ctx, meta(), streamOf(bytes), limits);
			expect(layer.status).toBe('ready');
			// data/demo/README.md: 40 × 30 cells of 1 km, EPSG:32754, nodata −9999, values 0.02–0.17.
			expect([layer.width, layer.height, layer.epsg, layer.nodata]).toEqual([40, 30, 32754, -9999]);
			expect(layer.resolution).toEqual({ x: 1000, y: 1000 });
			expect(layer.sizeBytes).toBe(bytes.length);
			expect(layer.stats!.min).toBeGreaterThanOrEqual(0.02 - 1e-6);
			expect(layer.stats!.max).toBeLessThanOrEqual(0.17 + 1e-6);
			expect(layer.stats!.validCount).toBeLessThan(40 * 30); // the reservoir is nodata
			expect(layer.histogram!.counts.reduce((a, b) => a + b, 0)).toBe(layer.stats!.validCount);
			expect(layer.acquiredOn).toBe('2026-03-14');
			const png = await layerPreview(t.db, s.store, ctx.networkId, layer.id);
			expect([...png.subarray(0, 8)]).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]); // PNG signature (PNG spec §5.2)
			const row = await t.db('layers').where({ id: layer.id }).first();
			expect(await s.store.exists(row.storage_key)).toBe(true);
			expect(Buffer.compare(await s.store.getBuffer(row.storage_key), bytes)).toBe(0);
			expect(await t.db('audit_log').where({ action: 'layer.create', object_id: String(layer.id) }).first()).toBeTruthy();
			expect((await listLayerViews(t.db, ctx.networkId)).map((l) => l.id)).toContain(layer.id);
		});

		it('refuses a file over LAYER_MAX_BYTES with 413 while streaming, leaving nothing', async () => {
			const bytes = await demoFile('vegetation-index.tif');
			await expectNothingLeft(() => uploadLayer(t.db, s.store, ctx, meta(), streamOf(bytes), { ...limits, maxBytes: 50_000 }), 413, 'too_large', /larger than the limit of 48\.8 kB/);
		});
		it('refuses a file that is not a TIFF, leaving nothing', async () => {
			await expectNothingLeft(() => uploadLayer(t.db, s.store, ctx, meta({ fileName: 'notes.txt' }), streamOf(new TextEncoder().encode('site,lon,lat\nA,1,2\n')), limits), 422, 'not-tiff', /notes\.txt: not a TIFF/);
		});
		it('refuses a TIFF without georeferencing, leaving nothing', async () => {
			await expectNothingLeft(() => uploadLayer(t.db, s.store, ctx, meta({ fileName: 'scan.tif' }), streamOf(new Uint8Array(encodeTiff({ ...base }))), limits), 422, 'no-georeferencing', /no georeferencing/);
		});
		it('refuses an unknown CRS, leaving nothing', async () => {
			const buf = encodeTiff({ ...base, geo: { ...geo, geoKeys: [[1024, 1], [1025, 1], [3072, 2193]] } });
			await expectNothingLeft(() => uploadLayer(t.db, s.store, ctx, meta(), streamOf(new Uint8Array(buf)), limits), 422, 'unknown-crs', /EPSG:2193/);
		});
		it('refuses an all-nodata raster, leaving nothing', async () => {
			const buf = geotiffOf([-9999, -9999, -9999, -9999], 2, 2, { epsg: 32633, x0: 0, y0: 0, dx: 10, dy: 10, nodata: -9999 });
			await expectNothingLeft(() => uploadLayer(t.db, s.store, ctx, meta({ fileName: 'blank.tif' }), streamOf(buf), limits), 422, 'all-nodata', /every cell of band 1 is nodata/);
		});
		it('refuses a missing band, leaving nothing', async () => {
			await expectNothingLeft(() => uploadLayer(t.db, s.store, ctx, meta({ band: '2' }), streamOf(new Uint8Array(encodeTiff({ ...base, geo }))), limits), 422, 'band-missing', /band 2 is missing/);
		});
		it('refuses dimensions over the pixel limit, leaving nothing', async () => {
			await expectNothingLeft(() => uploadLayer(t.db, s.store, ctx, meta(), streamOf(new Uint8Array(encodeTiff({ ...base, geo }))), { ...limits, maxPixels: 11 }), 422, 'too-large', /over the limit of 11/);
		});
		it('refuses corrupt compression, leaving nothing', async () => {
			const buf = encodeTiff({ ...base, geo, compression: { code: 8, encode: (r) => r.map((_, i) => (i * 37 + 11) & 0xff) } });
			await expectNothingLeft(() => uploadLayer(t.db, s.store, ctx, meta(), streamOf(new Uint8Array(buf)), limits), 422, null, /compression|corrupt/i);
		});
		it('refuses bad metadata before storing anything', async () => {
			await expectNothingLeft(() => uploadLayer(t.db, s.store, ctx, meta({ kind: 'rainfall' }), streamOf(new Uint8Array(encodeTiff({ ...base, geo }))), limits), 400, 'invalid_input', /Choose what the layer measures/);
			await expectNothingLeft(() => uploadLayer(t.db, s.store, ctx, meta({ acquiredOn: '14/03/2026' }), streamOf(new Uint8Array(encodeTiff({ ...base, geo }))), limits), 400, 'invalid_input', /YYYY-MM-DD/);
		});
		it('accepts a Deflate-compressed file', async () => {
			const buf = encodeTiff({ ...base, geo, compression: { code: 8, encode: (r) => deflateSync(r) } });
			const layer = await uploadLayer(t.db, s.store, ctx, meta({ name: 'Deflate', kind: 'other' }), streamOf(new Uint8Array(buf)), limits);
			expect(layer.stats!.validCount).toBe(12);
		});

		it('delete removes row and objects; it is refused while a recipe version cites the layer', async () => {
			const layer = await uploadLayer(t.db, s.store, ctx, meta({ name: 'To delete' }), streamOf(await demoFile('soil-moisture.tif')), limits);
			const kept = await uploadLayer(t.db, s.store, ctx, meta({ name: 'Cited' }), streamOf(await demoFile('soil-moisture.tif')), limits);
			const row = await t.db('layers').where({ id: layer.id }).first();
			await deleteLayer(t.db, s.store, ctx, layer.id);
			expect(await t.db('layers').where({ id: layer.id }).first()).toBeUndefined();
			expect(await s.store.exists(row.storage_key)).toBe(false);
			expect(await s.store.exists(row.preview_key)).toBe(false);

			await saveRecipeVersion(t.db, s.store, ctx.networkId, ctx.organisationId, ctx.actorId, { name: `Cites ${kept.id}`, definition: { layers: [{ layerId: String(kept.id), transform: 'identity', weight: 1 }] } });
			await expect(deleteLayer(t.db, s.store, ctx, kept.id)).rejects.toMatchObject({ status: 409, code: 'layer_in_use' });
			expect(await t.db('layers').where({ id: kept.id }).first()).toBeTruthy();
			await expect(deleteLayer(t.db, s.store, ctx, 999999)).rejects.toMatchObject({ status: 404 });
		});
	});
}
