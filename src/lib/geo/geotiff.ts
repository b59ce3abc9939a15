/**
 * GeoTIFF reading for Cairnfield: one band of a georeferenced raster, its grid geometry, CRS and
 * nodata value, through the `geotiff` package. Everything that can go wrong with a user's file
 * becomes a RasterError whose message names the file and the reason.
 */
import type GeoTIFF from 'geotiff';
import type { GeoTIFFImage } from 'geotiff';
import { isKnownCrs } from './crs';
import { tiffBlockProblem } from './tiff-blocks';
import { BLOCK_OVERFLOW, inflateBounded, lzwDecodeBounded, packBitsDecodeBounded } from './bounded-decoders';

type GeotiffModule = typeof import('geotiff');
let geotiffModule: Promise<GeotiffModule> | undefined;

/**
 * The geotiff package, loaded on first use (it pulls in web-worker, which breaks when imported
 * inside SvelteKit's build-time analysis worker), with its Deflate, LZW and PackBits decoders
 * replaced by ones that stop at the size the block must decode to (./bounded-decoders): a small
 * strip that inflates to gigabytes fails at its block's size instead of exhausting memory.
 */
function loadGeotiff(): Promise<GeotiffModule> {
	geotiffModule ??= import('geotiff').then((m) => {
		const bounded = (codec: (input: Uint8Array, limit: number) => Uint8Array) =>
			class extends m.BaseDecoder {
				decodeBlock(buffer: ArrayBufferLike): ArrayBufferLike {
					const p = this.parameters;
					const bits = Array.isArray(p.bitsPerSample) || ArrayBuffer.isView(p.bitsPerSample) ? Array.from(p.bitsPerSample as ArrayLike<number>) : [Number(p.bitsPerSample)];
					// A chunky block holds every sample of its pixels; a planar one fewer: the sum bounds both.
					const limit = Math.ceil((p.tileWidth * bits.reduce((a, b) => a + b, 0)) / 8) * p.tileHeight;
					const out = codec(new Uint8Array(buffer as ArrayBuffer), limit);
					return out.buffer.slice(out.byteOffset, out.byteOffset + out.byteLength);
				}
			};
		const parameters = async (fd: InstanceType<GeotiffModule['ImageFileDirectory']>) => {
			const tiled = !fd.hasTag('StripOffsets');
			return {
				tileWidth: Number(tiled ? await fd.loadValue('TileWidth') : await fd.loadValue('ImageWidth')),
				tileHeight: Number(tiled ? await fd.loadValue('TileLength') : (await fd.loadValue('RowsPerStrip')) || (await fd.loadValue('ImageLength'))),
				planarConfiguration: Number(await fd.loadValue('PlanarConfiguration')),
				bitsPerSample: (await fd.loadValue('BitsPerSample')) as number | number[],
				predictor: Number((await fd.loadValue('Predictor')) || 1)
			};
		};
		const deflate = bounded(inflateBounded);
		const lzw = bounded(lzwDecodeBounded);
		const packBits = bounded(packBitsDecodeBounded);
		m.addDecoder([8, 32946], () => Promise.resolve(deflate), parameters, false);
		m.addDecoder(5, () => Promise.resolve(lzw), parameters, false);
		m.addDecoder(32773, () => Promise.resolve(packBits), parameters, false);
		return m;
	});
	return geotiffModule;
}

/**
 * Affine geo-transform [a, b, c, d, e, f] of pixel corners:
 *   x = a + b·col + c·row,   y = d + e·col + f·row
 * (col, row) = (0, 0) is the outer upper-left corner of the first pixel.
 */
export type GeoTransform = [number, number, number, number, number, number];

export interface RasterBand {
	width: number;
	height: number;
	/** The band's samples, row-major. Float64 for 32-bit integers and doubles, Float32 otherwise. */
	data: Float32Array | Float64Array;
	nodata: number | null;
	epsg: number;
	transform: GeoTransform;
	bandCount: number;
	/** 1-based index of the band read. */
	band: number;
	/** TIFF SampleFormat: 1 unsigned integer, 2 signed integer, 3 IEEE float. */
	sampleFormat: number;
	bitsPerSample: number;
	/** TIFF Compression tag value (1 = none). */
	compression: number;
	tiled: boolean;
}

export interface ReadGeoTiffOptions {
	/** 1-based band number; default 1. */
	band?: number;
	/** File name used in error messages; default "raster". */
	name?: string;
	/** Largest accepted width*height; default 100 million pixels. */
	maxPixels?: number;
	/** Reject CRS codes that crs.ts has no definition for; default true. */
	requireKnownCrs?: boolean;
}

/** Why a raster could not be read. `message` is a full sentence fit for a user. */
export type RasterErrorReason =
	| 'not-tiff'
	| 'corrupt'
	| 'no-georeferencing'
	| 'unknown-crs'
	| 'band-missing'
	| 'unsupported'
	| 'too-large'
	| 'unsafe-blocks';

export class RasterError extends Error {
	readonly file: string;
	readonly reason: RasterErrorReason;
	constructor(file: string, reason: RasterErrorReason, detail: string) {
		super(`${file}: ${detail}`);
		this.name = 'RasterError';
		this.file = file;
		this.reason = reason;
	}
}

/** GeoKey ids (GeoTIFF 1.0 spec, section 6.2). */
const GEOKEY_USER_DEFINED = 32767;
const RASTER_PIXEL_IS_POINT = 2;

const DEFAULT_MAX_PIXELS = 100_000_000;

function isTiffMagic(bytes: Uint8Array): boolean {
	if (bytes.length < 8) return false;
	const le = bytes[0] === 0x49 && bytes[1] === 0x49;
	const be = bytes[0] === 0x4d && bytes[1] === 0x4d;
	if (!le && !be) return false;
	const version = le ? bytes[2] | (bytes[3] << 8) : (bytes[2] << 8) | bytes[3];
	return version === 42 || version === 43;
}

function errorText(e: unknown): string {
	return e instanceof Error ? e.message : String(e);
}

function toNumbers(v: unknown): number[] | null {
	if (v === undefined || v === null) return null;
	if (typeof v === 'number') return [v];
	if (Array.isArray(v) || ArrayBuffer.isView(v)) return Array.from(v as ArrayLike<number>, Number);
	return null;
}

/** GDAL_NODATA is ASCII ("-9999", "nan", "1e+20"); trailing NULs and spaces are ignored. */
function parseNodata(raw: unknown): number | null {
	if (raw === undefined || raw === null) return null;
	const text = String(raw).replace(/\0+$/g, '').trim();
	if (text === '') return null;
	if (/^[+-]?nan$/i.test(text)) return Number.NaN;
	const value = Number(text);
	return Number.isNaN(value) ? null : value;
}

async function loadTag(image: GeoTIFFImage, name: string): Promise<unknown> {
	const fd = image.getFileDirectory();
	// geotiff's tag-name types are narrower than the tags we ask for; the names are valid TIFF tags.
	const tagName = name as Parameters<typeof fd.hasTag>[0];
	if (!fd.hasTag(tagName)) return undefined;
	return fd.loadValue(tagName as Parameters<typeof fd.loadValue>[0]);
}

async function readTransform(image: GeoTIFFImage, file: string, pixelIsPoint: boolean): Promise<GeoTransform> {
	const matrix = toNumbers(await loadTag(image, 'ModelTransformation'));
	const tie = toNumbers(await loadTag(image, 'ModelTiepoint'));
	const scale = toNumbers(await loadTag(image, 'ModelPixelScale'));
	let t: GeoTransform;
	if (matrix && matrix.length >= 16) {
		// Row-major 4×4: x = m0·I + m1·J + m3, y = m4·I + m5·J + m7 (GeoTIFF spec 2.6.1).
		t = [matrix[3], matrix[0], matrix[1], matrix[7], matrix[4], matrix[5]];
	} else if (tie && tie.length >= 6 && scale && scale.length >= 2) {
		if (tie.length > 6) {
			throw new RasterError(file, 'unsupported', 'several tie points without a pixel scale are not supported (no affine georeferencing)');
		}
		const [i, j, , x, y] = tie;
		const [sx, sy] = scale;
		if (!(sx > 0) || !(sy > 0)) {
			throw new RasterError(file, 'no-georeferencing', `the pixel scale (${sx}, ${sy}) is not positive`);
		}
		t = [x - i * sx, sx, 0, y + j * sy, 0, -sy];
	} else {
		throw new RasterError(
			file,
			'no-georeferencing',
			'the file has no georeferencing (neither ModelTiepoint + ModelPixelScale nor ModelTransformation)'
		);
	}
	if (!t.every(Number.isFinite) || t[1] * t[5] - t[2] * t[4] === 0) {
		throw new RasterError(file, 'no-georeferencing', 'the geo-transform is degenerate');
	}
	if (pixelIsPoint) {
		// Tie point refers to the pixel centre: move the origin half a pixel up-left to the corner.
		t = [t[0] - 0.5 * t[1] - 0.5 * t[2], t[1], t[2], t[3] - 0.5 * t[4] - 0.5 * t[5], t[4], t[5]];
	}
	return t;
}

function readEpsg(geoKeys: Record<string, unknown> | null, file: string): number {
	if (!geoKeys) throw new RasterError(file, 'unknown-crs', 'the file has no GeoKeys, so its CRS is unknown');
	const projected = geoKeys.ProjectedCSTypeGeoKey;
	const geographic = geoKeys.GeographicTypeGeoKey;
	const model = geoKeys.GTModelTypeGeoKey;
	if (typeof projected === 'number' && projected !== GEOKEY_USER_DEFINED && projected > 0) return projected;
	if (model === 1 || projected === GEOKEY_USER_DEFINED) {
		throw new RasterError(file, 'unknown-crs', 'the projected CRS is user-defined (no EPSG code); reproject the file to an EPSG CRS');
	}
	if (typeof geographic === 'number' && geographic !== GEOKEY_USER_DEFINED && geographic > 0) return geographic;
	throw new RasterError(file, 'unknown-crs', 'the CRS has no EPSG code in the GeoKeys');
}

async function blockLayout(image: GeoTIFFImage, file: string, width: number, height: number, compression: number, tiled: boolean): Promise<Parameters<typeof tiffBlockProblem>[0]> {
	try {
		const bits = toNumbers(await loadTag(image, 'BitsPerSample')) ?? [1];
		return {
			width,
			height,
			tile: tiled ? { width: Number(await loadTag(image, 'TileWidth')), height: Number(await loadTag(image, 'TileLength')) } : null,
			rowsPerStrip: Number((await loadTag(image, 'RowsPerStrip')) ?? height),
			bitsPerSample: bits,
			planarConfiguration: Number((await loadTag(image, 'PlanarConfiguration')) ?? 1),
			compression,
			byteCounts: toNumbers(await loadTag(image, tiled ? 'TileByteCounts' : 'StripByteCounts')) ?? []
		};
	} catch (e) {
		throw new RasterError(file, 'corrupt', `corrupt TIFF directory (${errorText(e)})`);
	}
}

/** Read one band of a GeoTIFF held in memory. */
export async function readGeoTiff(buffer: ArrayBuffer, opts: ReadGeoTiffOptions = {}): Promise<RasterBand> {
	const file = opts.name ?? 'raster';
	const bandNo = opts.band ?? 1;
	const maxPixels = opts.maxPixels ?? DEFAULT_MAX_PIXELS;
	if (!Number.isInteger(bandNo) || bandNo < 1) {
		throw new RasterError(file, 'band-missing', `band ${bandNo} is not a band number (use 1, 2, …)`);
	}
	if (!isTiffMagic(new Uint8Array(buffer, 0, Math.min(8, buffer.byteLength)))) {
		throw new RasterError(file, 'not-tiff', 'not a TIFF file (no TIFF header)');
	}

	let tiff: GeoTIFF;
	let image: GeoTIFFImage;
	try {
		tiff = await (await loadGeotiff()).fromArrayBuffer(buffer);
		image = await tiff.getImage(0);
	} catch (e) {
		throw new RasterError(file, 'corrupt', `corrupt TIFF (${errorText(e)})`);
	}

	let width: number;
	let height: number;
	let bandCount: number;
	let sampleFormat: number;
	let bitsPerSample: number;
	let compression: number;
	let tiled: boolean;
	let geoKeys: Record<string, unknown> | null;
	try {
		width = image.getWidth();
		height = image.getHeight();
		bandCount = image.getSamplesPerPixel();
		sampleFormat = bandNo <= bandCount ? image.getSampleFormat(bandNo - 1) : image.getSampleFormat(0);
		bitsPerSample = bandNo <= bandCount ? image.getBitsPerSample(bandNo - 1) : image.getBitsPerSample(0);
		compression = Number((await loadTag(image, 'Compression')) ?? 1);
		tiled = image.getFileDirectory().hasTag('TileWidth');
		geoKeys = image.getGeoKeys() as Record<string, unknown> | null;
	} catch (e) {
		throw new RasterError(file, 'corrupt', `corrupt TIFF directory (${errorText(e)})`);
	}

	if (!(width > 0) || !(height > 0)) {
		throw new RasterError(file, 'corrupt', `corrupt TIFF: image size ${width}×${height}`);
	}
	if (width * height > maxPixels) {
		throw new RasterError(file, 'too-large', `${width}×${height} pixels is over the limit of ${maxPixels} pixels`);
	}
	// Before any block is decoded: tile sizes, and each block's byte count against what it must inflate to.
	const blockProblem = tiffBlockProblem(await blockLayout(image, file, width, height, compression, tiled));
	if (blockProblem) throw new RasterError(file, 'unsafe-blocks', blockProblem);
	if (bandNo > bandCount) {
		throw new RasterError(file, 'band-missing', `band ${bandNo} is missing (the file has ${bandCount} band${bandCount === 1 ? '' : 's'})`);
	}
	const supported =
		(sampleFormat === 3 && (bitsPerSample === 16 || bitsPerSample === 32 || bitsPerSample === 64)) ||
		((sampleFormat === 1 || sampleFormat === 2) && [8, 16, 32].includes(bitsPerSample));
	if (!supported) {
		throw new RasterError(file, 'unsupported', `unsupported sample type (SampleFormat ${sampleFormat}, ${bitsPerSample} bits)`);
	}

	const pixelIsPoint = geoKeys?.GTRasterTypeGeoKey === RASTER_PIXEL_IS_POINT;
	const transform = await readTransform(image, file, pixelIsPoint);
	const epsg = readEpsg(geoKeys, file);
	if ((opts.requireKnownCrs ?? true) && !isKnownCrs(epsg)) {
		throw new RasterError(file, 'unknown-crs', `unknown CRS EPSG:${epsg} (no definition registered)`);
	}
	const nodata = parseNodata(await loadTag(image, 'GDAL_NODATA'));

	let raw: ArrayLike<number>;
	try {
		const rasters = await image.readRasters({ samples: [bandNo - 1], interleave: false });
		raw = (rasters as unknown as ArrayLike<number>[])[0];
	} catch (e) {
		const msg = errorText(e);
		if (msg.includes(BLOCK_OVERFLOW)) {
			throw new RasterError(file, 'unsafe-blocks', `a compressed block inflates to more than the block can hold: the file is corrupt or built to exhaust memory`);
		}
		if (/compression|decoder/i.test(msg)) {
			throw new RasterError(file, 'unsupported', `unsupported or corrupt compression (Compression ${compression}: ${msg})`);
		}
		throw new RasterError(file, 'corrupt', `corrupt pixel data (Compression ${compression}: ${msg})`);
	}
	if (!raw || raw.length !== width * height) {
		throw new RasterError(file, 'corrupt', 'corrupt pixel data (wrong number of samples)');
	}

	const wide = bitsPerSample === 64 || (sampleFormat !== 3 && bitsPerSample === 32);
	let data: Float32Array | Float64Array;
	if (wide) data = raw instanceof Float64Array ? raw : Float64Array.from(raw);
	else data = raw instanceof Float32Array ? raw : Float32Array.from(raw);

	return { width, height, data, nodata, epsg, transform, bandCount, band: bandNo, sampleFormat, bitsPerSample, compression, tiled };
}

/**
 * The nodata value as it is stored in the band's array: for Float32 data the GDAL_NODATA text is
 * rounded to single precision ("9999.99" is stored as 9999.990234375), so compare with this.
 * NaN nodata never compares equal: test NaN separately.
 */
export function storedNodata(band: Pick<RasterBand, 'nodata' | 'data'>): number | null {
	if (band.nodata === null) return null;
	return band.data instanceof Float32Array ? Math.fround(band.nodata) : band.nodata;
}

/** Map a pixel-corner position (col, row) to CRS coordinates. */
export function pixelToCrs(t: GeoTransform, col: number, row: number): [number, number] {
	return [t[0] + t[1] * col + t[2] * row, t[3] + t[4] * col + t[5] * row];
}

/** Inverse of pixelToCrs: CRS coordinates to fractional (col, row). */
export function crsToPixel(t: GeoTransform, x: number, y: number): [number, number] {
	const det = t[1] * t[5] - t[2] * t[4];
	const dx = x - t[0];
	const dy = y - t[3];
	return [(t[5] * dx - t[2] * dy) / det, (-t[4] * dx + t[1] * dy) / det];
}
