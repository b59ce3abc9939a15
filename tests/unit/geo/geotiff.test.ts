import { describe, expect, it } from 'vitest';
import { deflateSync } from 'node:zlib';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { writeArrayBuffer } from 'geotiff';
import { readGeoTiff, RasterError, pixelToCrs, crsToPixel, storedNodata } from '../../../src/lib/geo/geotiff';
import { encodeTiff, type TiffWriteOptions } from '../../../src/bench/support/tiff-writer';

// GeoKey ids from the GeoTIFF 1.0 specification, section 6.2 (GTModelType 1024, GTRasterType 1025,
// GeographicType 2048, ProjectedCSType 3072).
const WGS84_KEYS: Array<[number, number]> = [
	[1024, 2],
	[1025, 1],
	[2048, 4326]
];
const UTM33_KEYS: Array<[number, number]> = [
	[1024, 1],
	[1025, 1],
	[3072, 32633]
];

function ramp(n: number, f: (i: number) => number): number[] {
	return Array.from({ length: n }, (_, i) => f(i));
}

function baseOpts(over: Partial<TiffWriteOptions>): TiffWriteOptions {
	const width = 7;
	const height = 5;
	return {
		width,
		height,
		bands: [ramp(width * height, (i) => i)],
		sampleFormat: 3,
		bitsPerSample: 32,
		geo: { tiepoint: [0, 0, 0, 500000, 5500000, 0], pixelScale: [30, 30, 0], geoKeys: UTM33_KEYS },
		...over
	};
}

/** PackBits (TIFF 6.0, section 9) with literal runs only: a valid, simple encoder. */
function packBits(raw: Uint8Array): Uint8Array {
	const out: number[] = [];
	for (let i = 0; i < raw.length; i += 128) {
		const n = Math.min(128, raw.length - i);
		out.push(n - 1);
		for (let k = 0; k < n; k++) out.push(raw[i + k]);
	}
	return Uint8Array.from(out);
}

async function expectRasterError(p: Promise<unknown>, reason: string, fragment: RegExp, file = 'field.tif') {
	const err = await p.then(
		() => null,
		(e: unknown) => e
	);
	expect(err).toBeInstanceOf(RasterError);
	const re = err as RasterError;
	expect(re.reason).toBe(reason);
	expect(re.file).toBe(file);
	expect(re.message).toContain(file);
	expect(re.message).toMatch(fragment);
}

describe('readGeoTiff round trips (written by geotiff.writeArrayBuffer, the reference writer)', () => {
	const width = 6;
	const height = 4;
	const cases: Array<[string, ArrayLike<number> & { length: number }, number, number]> = [
		['Float32', Float32Array.from(ramp(24, (i) => i * 0.25 - 2)), 3, 32],
		['Float64', Float64Array.from(ramp(24, (i) => i * 1e-9 + 1 / 3)), 3, 64],
		['Byte', Uint8Array.from(ramp(24, (i) => (i * 11) % 256)), 1, 8],
		['UInt16', Uint16Array.from(ramp(24, (i) => i * 2000)), 1, 16]
	];
	for (const [label, values, fmt, bits] of cases) {
		it(`reads ${label} samples, tie point + pixel scale and the geographic CRS`, async () => {
			const buf = writeArrayBuffer(values as Float32Array, {
				width,
				height,
				ModelPixelScale: [0.01, 0.02, 0],
				ModelTiepoint: [0, 0, 0, 14.5, 48.25, 0],
				GeographicTypeGeoKey: 4326,
				GTModelTypeGeoKey: 2
			});
			const band = await readGeoTiff(buf, { name: 'a.tif' });
			expect(band.width).toBe(width);
			expect(band.height).toBe(height);
			expect(band.epsg).toBe(4326);
			expect(band.sampleFormat).toBe(fmt);
			expect(band.bitsPerSample).toBe(bits);
			expect(band.bandCount).toBe(1);
			expect(band.transform).toEqual([14.5, 0.01, 0, 48.25, 0, -0.02]);
			expect(Array.from(band.data)).toEqual(Array.from(values));
			expect(band.data instanceof (bits === 64 ? Float64Array : Float32Array)).toBe(true);
		});
	}

	it('reads GDAL_NODATA written by geotiff', async () => {
		const buf = writeArrayBuffer(Float32Array.from([1, -9999, 3, 4]), {
			width: 2,
			height: 2,
			ModelPixelScale: [1, 1, 0],
			ModelTiepoint: [0, 0, 0, 10, 50, 0],
			GeographicTypeGeoKey: 4326,
			GTModelTypeGeoKey: 2,
			GDAL_NODATA: '-9999'
		});
		const band = await readGeoTiff(buf);
		expect(band.nodata).toBe(-9999);
		expect(band.data[1]).toBe(-9999);
	});
});

describe('readGeoTiff on layouts written by the independent encoder', () => {
	const n = 35;
	const formats: Array<[string, 1 | 2 | 3, 8 | 16 | 32 | 64, number[], typeof Float32Array | typeof Float64Array]> = [
		['Byte', 1, 8, ramp(n, (i) => (i * 7) % 256), Float32Array],
		['Int16', 2, 16, ramp(n, (i) => (i - 17) * 1000), Float32Array],
		['UInt16', 1, 16, ramp(n, (i) => 65535 - i * 1800), Float32Array],
		['Int32', 2, 32, ramp(n, (i) => (i - 17) * 123456789), Float64Array],
		['Float32', 3, 32, ramp(n, (i) => Math.fround(Math.sin(i) * 1e3)), Float32Array],
		['Float64', 3, 64, ramp(n, (i) => Math.sin(i) * 1e-7 + 1e6), Float64Array]
	];
	const layouts: Array<[string, Partial<TiffWriteOptions>]> = [
		['stripped, uncompressed', { layout: { kind: 'strips', rowsPerStrip: 2 } }],
		['tiled 16×16, uncompressed', { layout: { kind: 'tiles', tileWidth: 16, tileHeight: 16 } }],
		['stripped, Deflate', { layout: { kind: 'strips', rowsPerStrip: 3 }, compression: { code: 8, encode: (r) => deflateSync(r) } }],
		['tiled, Deflate', { layout: { kind: 'tiles', tileWidth: 16, tileHeight: 16 }, compression: { code: 8, encode: (r) => deflateSync(r) } }],
		['stripped, PackBits', { layout: { kind: 'strips', rowsPerStrip: 1 }, compression: { code: 32773, encode: packBits } }]
	];
	for (const [label, fmt, bits, values, Kind] of formats) {
		for (const [lname, lopts] of layouts) {
			it(`${label} ${lname} round-trips exactly`, async () => {
				const buf = encodeTiff(baseOpts({ bands: [values], sampleFormat: fmt, bitsPerSample: bits, ...lopts }));
				const band = await readGeoTiff(buf, { name: 'x.tif' });
				expect(band.data).toBeInstanceOf(Kind);
				expect(Array.from(band.data)).toEqual(values);
				expect(band.epsg).toBe(32633);
				expect(band.tiled).toBe(lname.startsWith('tiled'));
				expect(band.transform).toEqual([500000, 30, 0, 5500000, 0, -30]);
			});
		}
	}

	it('reads band 2 of a three-band file and reports bandCount', async () => {
		const bands = [ramp(n, () => 1), ramp(n, (i) => i * 2), ramp(n, () => 3)];
		const band = await readGeoTiff(encodeTiff(baseOpts({ bands })), { band: 2 });
		expect(band.bandCount).toBe(3);
		expect(band.band).toBe(2);
		expect(Array.from(band.data)).toEqual(bands[1]);
	});

	it('takes the georeferencing from ModelTransformation (rotated grid)', async () => {
		// x = 1000 + 10·col + 2·row, y = 2000 + 1·col − 10·row
		const m = [10, 2, 0, 1000, 1, -10, 0, 2000, 0, 0, 0, 0, 0, 0, 0, 1];
		const band = await readGeoTiff(encodeTiff(baseOpts({ geo: { transformation: m, geoKeys: UTM33_KEYS } })));
		expect(band.transform).toEqual([1000, 10, 2, 2000, 1, -10]);
		expect(pixelToCrs(band.transform, 3, 4)).toEqual([1038, 1963]);
		const [c, r] = crsToPixel(band.transform, 1038, 1963);
		expect(c).toBeCloseTo(3, 12);
		expect(r).toBeCloseTo(4, 12);
	});

	it('moves a PixelIsPoint tie point half a pixel to the corner (GeoTIFF spec 2.5.2.2)', async () => {
		const keys: Array<[number, number]> = [
			[1024, 1],
			[1025, 2],
			[3072, 32633]
		];
		const band = await readGeoTiff(encodeTiff(baseOpts({ geo: { tiepoint: [0, 0, 0, 500015, 5499985, 0], pixelScale: [30, 30, 0], geoKeys: keys } })));
		expect(band.transform).toEqual([500000, 30, 0, 5500000, 0, -30]);
	});

	it('honours a tie point that is not at pixel (0, 0)', async () => {
		const band = await readGeoTiff(encodeTiff(baseOpts({ geo: { tiepoint: [2, 1, 0, 500060, 5499970, 0], pixelScale: [30, 30, 0], geoKeys: UTM33_KEYS } })));
		expect(band.transform).toEqual([500000, 30, 0, 5500000, 0, -30]);
	});

	it('parses GDAL_NODATA "nan" and "-3.4e+38"', async () => {
		expect((await readGeoTiff(encodeTiff(baseOpts({ nodata: 'nan' })))).nodata).toBeNaN();
		expect((await readGeoTiff(encodeTiff(baseOpts({ nodata: '-3.4e+38' })))).nodata).toBe(-3.4e38);
		expect((await readGeoTiff(encodeTiff(baseOpts({})))).nodata).toBeNull();
	});

	it('storedNodata rounds a Float32 band\'s nodata to single precision, not a Float64 one', async () => {
		const f32 = await readGeoTiff(encodeTiff(baseOpts({ nodata: '9999.99' })));
		expect(f32.nodata).toBe(9999.99);
		expect(storedNodata(f32)).toBe(Math.fround(9999.99));
		const f64 = await readGeoTiff(encodeTiff(baseOpts({ nodata: '9999.99', bitsPerSample: 64 })));
		expect(storedNodata(f64)).toBe(9999.99);
		expect(storedNodata({ nodata: null, data: new Float32Array(1) })).toBeNull();
	});

	it('reads the geographic CRS key when no projected key exists', async () => {
		const band = await readGeoTiff(encodeTiff(baseOpts({ geo: { tiepoint: [0, 0, 0, 10, 50, 0], pixelScale: [0.1, 0.1, 0], geoKeys: WGS84_KEYS } })));
		expect(band.epsg).toBe(4326);
	});
});

describe('readGeoTiff errors', () => {
	it('rejects a file that is not a TIFF, naming the file', async () => {
		const png = Uint8Array.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 0]).buffer;
		await expectRasterError(readGeoTiff(png, { name: 'field.tif' }), 'not-tiff', /not a TIFF/);
		await expectRasterError(readGeoTiff(new ArrayBuffer(0), { name: 'field.tif' }), 'not-tiff', /not a TIFF/);
		await expectRasterError(readGeoTiff(new TextEncoder().encode('{"type":"FeatureCollection"}').buffer as ArrayBuffer, { name: 'field.tif' }), 'not-tiff', /not a TIFF/);
	});

	it('rejects a truncated file as corrupt', async () => {
		const buf = encodeTiff(baseOpts({}));
		const cut = buf.slice(0, buf.byteLength - 60); // the IFD is at the end: cut into it
		await expectRasterError(readGeoTiff(cut, { name: 'field.tif' }), 'corrupt', /corrupt/i);
	});

	it('rejects garbage in a Deflate strip as corrupt pixel data', async () => {
		const buf = encodeTiff(baseOpts({ compression: { code: 8, encode: (r) => r.map((_, i) => (i * 37 + 11) & 0xff) } }));
		await expectRasterError(readGeoTiff(buf, { name: 'field.tif' }), 'corrupt', /corrupt pixel data \(Compression 8/);
	});

	it('rejects an unsupported compression (JPEG 2000, 34712)', async () => {
		const buf = encodeTiff(baseOpts({ compression: { code: 34712, encode: (r) => r } }));
		await expectRasterError(readGeoTiff(buf, { name: 'field.tif' }), 'unsupported', /compression/i);
	});

	it('rejects a file without georeferencing', async () => {
		const buf = encodeTiff(baseOpts({ geo: { geoKeys: UTM33_KEYS } }));
		await expectRasterError(readGeoTiff(buf, { name: 'field.tif' }), 'no-georeferencing', /no georeferencing/);
	});

	it('rejects a user-defined CRS, a missing CRS and an EPSG code without a definition', async () => {
		const geo = { tiepoint: [0, 0, 0, 0, 0, 0], pixelScale: [1, 1, 0] };
		await expectRasterError(readGeoTiff(encodeTiff(baseOpts({ geo: { ...geo, geoKeys: [[1024, 1], [3072, 32767]] } })), { name: 'field.tif' }), 'unknown-crs', /user-defined/);
		await expectRasterError(readGeoTiff(encodeTiff(baseOpts({ geo })), { name: 'field.tif' }), 'unknown-crs', /CRS/);
		await expectRasterError(readGeoTiff(encodeTiff(baseOpts({ geo: { ...geo, geoKeys: [[1024, 1], [3072, 2154]] } })), { name: 'field.tif' }), 'unknown-crs', /EPSG:2154/);
		const ok = await readGeoTiff(encodeTiff(baseOpts({ geo: { ...geo, geoKeys: [[1024, 1], [3072, 2154]] } })), { requireKnownCrs: false });
		expect(ok.epsg).toBe(2154);
	});

	it('rejects a missing band and a bad band number', async () => {
		await expectRasterError(readGeoTiff(encodeTiff(baseOpts({})), { name: 'field.tif', band: 2 }), 'band-missing', /band 2 is missing \(the file has 1 band\)/);
		await expectRasterError(readGeoTiff(encodeTiff(baseOpts({})), { name: 'field.tif', band: 0 }), 'band-missing', /band 0/);
	});

	it('rejects dimensions over the limit', async () => {
		await expectRasterError(readGeoTiff(encodeTiff(baseOpts({})), { name: 'field.tif', maxPixels: 34 }), 'too-large', /7×5 pixels is over the limit of 34/);
		await expect(readGeoTiff(encodeTiff(baseOpts({})), { maxPixels: 35 })).resolves.toBeTruthy();
	});
});

describe('readGeoTiff on the committed fixtures (tests/fixtures/geo/README.md)', () => {
	const load = (name: string) => {
		const b = readFileSync(fileURLToPath(new URL(`../../fixtures/geo/${name}`, import.meta.url)));
		return b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength) as ArrayBuffer;
	};
	it('utm33-int16-tiled-deflate.tif', async () => {
		const r = await readGeoTiff(load('utm33-int16-tiled-deflate.tif'), { name: 'utm33-int16-tiled-deflate.tif' });
		expect([r.width, r.height, r.epsg, r.sampleFormat, r.bitsPerSample, r.compression, r.tiled, r.nodata]).toEqual([20, 12, 32633, 2, 16, 8, true, -32768]);
		expect(r.transform).toEqual([500000, 30, 0, 5300000, 0, -30]);
		expect(r.data[0]).toBe(-32768);
		expect(r.data[1]).toBe(10);
		expect(r.data[239]).toBe(19 * 10 + 11);
	});
	it('wgs84-float32-2band.tif, both bands', async () => {
		const b1 = await readGeoTiff(load('wgs84-float32-2band.tif'));
		const b2 = await readGeoTiff(load('wgs84-float32-2band.tif'), { band: 2 });
		expect([b1.bandCount, b1.epsg, b1.width, b1.height]).toEqual([2, 4326, 8, 6]);
		expect(b1.nodata).toBeNaN();
		expect(b1.data[5]).toBe(1.25);
		expect(b1.data[47]).toBeNaN();
		expect(b2.data[5]).toBe(95);
	});
});
