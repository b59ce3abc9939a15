import { deflateSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { encodeTiff } from '../../../src/bench/support/tiff-writer';
import { inspectLayer, LayerRejected, loadLayer, toGridBand, type LayerRejectedCode } from '../../../src/lib/server/layers';
import { geotiffOf } from './helpers';

async function rejected(p: Promise<unknown>): Promise<LayerRejected> {
	const e = await p.then(() => null, (err: unknown) => err);
	expect(e).toBeInstanceOf(LayerRejected);
	return e as LayerRejected;
}

async function expectRejected(p: Promise<unknown>, code: LayerRejectedCode, fragment: RegExp) {
	const e = await rejected(p);
	expect(e.code).toBe(code);
	expect(e.message).toMatch(fragment);
}

describe('inspectLayer: metadata', () => {
	it('describes a UTM 33N raster and puts its footprint where UTM says', async () => {
		// UTM zone 33N: central meridian 15°E, false easting 500 000 m, false northing 0 at the
		// equator (UTM definition, e.g. NGA/DMA TM 8358.2) [from memory]. A raster whose west edge
		// lies on x = 500 000 and south edge on y = 0 has its lower-left corner at exactly (15°E, 0°).
		const w = 10;
		const h = 8;
		const buf = geotiffOf(Array.from({ length: w * h }, (_, i) => 0.1 + i * 0.001), w, h, { epsg: 32633, x0: 500_000, y0: 800, dx: 100, dy: 100 });
		const m = await inspectLayer(new Uint8Array(buf), { name: 'moisture.tif' });
		expect(m).toMatchObject({ width: 10, height: 8, bandCount: 1, band: 1, epsg: 32633, units: 'metre', resolution: { x: 100, y: 100 }, origin: { x: 500_000, y: 800 }, nodata: null });
		const ring = m.footprint.polygon.coordinates[0];
		expect(ring).toHaveLength(5);
		expect(ring[0]).toEqual(ring[4]);
		expect(ring[1][0]).toBeCloseTo(15, 9); // lower-left lon
		expect(ring[1][1]).toBeCloseTo(0, 9); // lower-left lat
		expect(ring[0][0]).toBeCloseTo(15, 9); // upper-left still on the central meridian
		// 1 km east of the central meridian at the equator is about 0.009° (1 km / 111.3 km per degree) [from memory]
		expect(ring[2][0] - 15).toBeCloseTo(1000 / 111_320, 4);
		const [west, south, east, north] = m.footprint.bbox;
		expect(west).toBeCloseTo(15, 9);
		expect(south).toBeCloseTo(0, 9);
		expect(east).toBeGreaterThan(15.008);
		expect(north).toBeCloseTo(800 / 110_574, 4); // 1° of latitude ≈ 110.574 km at the equator (WGS 84) [from memory]
	});

	it('footprint ring of a geographic raster is its corners, counter-clockwise (RFC 7946 §3.1.6)', async () => {
		const buf = geotiffOf([1, 2, 3, 4, 5, 6], 3, 2, { epsg: 4326, x0: -3.5, y0: 54.5, dx: 0.01, dy: 0.01 });
		const m = await inspectLayer(buf);
		expect(m.units).toBe('degree');
		expect(m.footprint.polygon.coordinates[0]).toEqual([
			[-3.5, 54.5],
			[-3.5, 54.48],
			[-3.47, 54.48],
			[-3.47, 54.5],
			[-3.5, 54.5]
		]);
		expect(m.footprint.bbox).toEqual([-3.5, 54.48, -3.47, 54.5]);
		// Shoelace signed area > 0 means counter-clockwise in (lon, lat).
		const r = m.footprint.polygon.coordinates[0];
		let a = 0;
		for (let i = 0; i < r.length - 1; i++) a += r[i][0] * r[i + 1][1] - r[i + 1][0] * r[i][1];
		expect(a).toBeGreaterThan(0);
	});

	it('statistics match a two-pass reference and skip nodata; histogram counts add up to validCount', async () => {
		const w = 23;
		const h = 17;
		const data = Array.from({ length: w * h }, (_, i) => 1000 + Math.sin(i / 7) * 5 + (i % 11) * 0.25);
		for (const i of [0, 5, 77, 200]) data[i] = -9999;
		const m = await inspectLayer(geotiffOf(data, w, h, { epsg: 32630, x0: 400_000, y0: 6_000_000, dx: 30, dy: 30, nodata: -9999 }));
		// Two-pass reference on the Float32-rounded values (mean first, then squared deviations).
		const f32 = Array.from(Float32Array.from(data)).filter((v) => v !== -9999);
		const mean = f32.reduce((s, v) => s + v, 0) / f32.length;
		const std = Math.sqrt(f32.reduce((s, v) => s + (v - mean) ** 2, 0) / f32.length);
		expect(m.nodata).toBe(-9999);
		expect(m.stats.validCount).toBe(w * h - 4);
		expect(m.stats.mean).toBeCloseTo(mean, 9);
		expect(m.stats.std).toBeCloseTo(std, 9);
		expect(m.stats.min).toBe(Math.min(...f32));
		expect(m.stats.max).toBe(Math.max(...f32));
		expect(m.histogram.counts).toHaveLength(32);
		expect(m.histogram.edges).toHaveLength(33);
		expect(m.histogram.counts.reduce((s, c) => s + c, 0)).toBe(m.stats.validCount);
		expect(m.histogram.edges[0]).toBe(m.stats.min);
		expect(m.histogram.edges[32]).toBe(m.stats.max);
	});

	it('1..10: mean 5.5 and population std sqrt(99/12) (discrete uniform, (n²−1)/12) [from memory]', async () => {
		const m = await inspectLayer(geotiffOf([1, 2, 3, 4, 5, 6, 7, 8, 9, 10], 5, 2, { epsg: 32633, x0: 0, y0: 0, dx: 10, dy: 10 }));
		expect(m.stats.mean).toBeCloseTo(5.5, 12);
		expect(m.stats.std).toBeCloseTo(Math.sqrt(99 / 12), 12);
	});

	it('loadLayer returns the band, and toGridBand gives the importance grid', async () => {
		const { band } = await loadLayer(geotiffOf([1, 2, 3, 4], 2, 2, { epsg: 32633, x0: 500_000, y0: 6_000_000, dx: 50, dy: 50 }));
		expect(toGridBand(band).grid).toEqual({ epsg: 32633, width: 2, height: 2, x0: 500_000, y0: 6_000_000, dx: 50, dy: 50, units: 'metre' });
	});
});

describe('inspectLayer: refusals with LayerRejected', () => {
	const geo = { tiepoint: [0, 0, 0, 500000, 5500000, 0], pixelScale: [30, 30, 0], geoKeys: [[1024, 1], [1025, 1], [3072, 32633]] as Array<[number, number]> };
	const base = { width: 4, height: 3, bands: [Array.from({ length: 12 }, (_, i) => i)], sampleFormat: 3 as const, bitsPerSample: 32 as const };

	it('not a TIFF (PNG signature) and an empty file', async () => {
		await expectRejected(inspectLayer(new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0]), { name: 'photo.png' }), 'not-tiff', /photo\.png: not a TIFF/);
		await expectRejected(inspectLayer(new Uint8Array(0), { name: 'empty.tif' }), 'not-tiff', /empty/);
	});
	it('no georeferencing', async () => {
		await expectRejected(inspectLayer(encodeTiff({ ...base })), 'no-georeferencing', /no georeferencing/);
	});
	it('unknown CRS (an EPSG code with no registered definition)', async () => {
		const buf = encodeTiff({ ...base, geo: { ...geo, geoKeys: [[1024, 1], [1025, 1], [3072, 2193]] } });
		await expectRejected(inspectLayer(buf), 'unknown-crs', /EPSG:2193/);
	});
	it('all nodata', async () => {
		const buf = geotiffOf([-9999, -9999, -9999, -9999], 2, 2, { epsg: 32633, x0: 0, y0: 0, dx: 10, dy: 10, nodata: -9999 });
		await expectRejected(inspectLayer(buf, { name: 'blank.tif' }), 'all-nodata', /blank\.tif: every cell of band 1 is nodata \(-9999\)/);
	});
	it('band missing', async () => {
		await expectRejected(inspectLayer(encodeTiff({ ...base, geo }), { band: 2 }), 'band-missing', /band 2 is missing \(the file has 1 band\)/);
	});
	it('dimensions over the limit', async () => {
		await expectRejected(inspectLayer(encodeTiff({ ...base, geo }), { maxPixels: 11 }), 'too-large', /4×3 pixels is over the limit of 11/);
	});
	it('corrupt compression (garbage in a Deflate strip)', async () => {
		const buf = encodeTiff({ ...base, geo, compression: { code: 8, encode: (r) => r.map((_, i) => (i * 37 + 11) & 0xff) } });
		const e = await rejected(inspectLayer(buf));
		expect(['corrupt', 'unsupported']).toContain(e.code);
		expect(e.message).toMatch(/compression|corrupt/i);
	});
	it('reads the requested band of a three-band file', async () => {
		const bands = [0, 1, 2].map((b) => Array.from({ length: 12 }, (_, i) => b * 100 + i));
		const m = await inspectLayer(encodeTiff({ ...base, bands, geo }), { band: 2 });
		expect(m.bandCount).toBe(3);
		expect(m.band).toBe(2);
		expect([m.stats.min, m.stats.max, m.stats.mean]).toEqual([100, 111, 105.5]);
	});
	it('a valid Deflate file is accepted', async () => {
		const m = await inspectLayer(encodeTiff({ ...base, geo, compression: { code: 8, encode: (r) => deflateSync(r) } }));
		expect(m.stats.validCount).toBe(12);
	});
	it('rotated grids (ModelTransformation with shear terms)', async () => {
		const transformation = [30, 5, 0, 500000, 5, -30, 0, 5500000, 0, 0, 0, 0, 0, 0, 0, 1];
		const buf = encodeTiff({ ...base, geo: { transformation, geoKeys: geo.geoKeys } });
		await expectRejected(inspectLayer(buf), 'rotated', /rotated/);
	});
	it('unsupported compression (JPEG 2000 tag)', async () => {
		const buf = encodeTiff({ ...base, geo, compression: { code: 34712, encode: (r) => r } });
		await expectRejected(inspectLayer(buf), 'unsupported', /compression/i);
	});
});
