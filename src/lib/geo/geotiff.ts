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

/**
 * Header of one band of a GeoTIFF: everything but the samples. `overviews` lists the file's
 * reduced-resolution images (Cloud-Optimized GeoTIFFs carry them), finest first.
 */
export type RasterHeader = Omit<RasterBand, 'data'> & {
	/** Size of one tile, or the width and rows of one strip. */
	blockWidth: number;
	blockHeight: number;
	overviews: OverviewInfo[];
};

export interface OverviewInfo {
	/** Index of the image in the file (0 is the full-resolution image). */
	index: number;
	width: number;
	height: number;
	transform: GeoTransform;
}

/**
 * A run of whole rows of a band (or of one of its overviews), row-major, values as stored.
 * `data` lives in a buffer that is reused: it is valid until the next block is asked for (copy it
 * to keep it).
 */
export interface RasterBlock {
	row0: number;
	width: number;
	height: number;
	data: Float32Array | Float64Array;
}

/** Where the bytes of a GeoTIFF come from: a whole buffer, a file path, or a range reader (object storage). */
export type GeoTiffInput = ArrayBuffer | { path: string } | ByteRangeReader;

export interface ByteRangeReader {
	/** `length` bytes from `offset` (fewer at the end of the object). */
	read(offset: number, length: number): Promise<Uint8Array>;
	close?(): Promise<void>;
}

/** A decoder pool (geotiff's Pool): decodes compressed tiles in worker threads. */
export interface DecoderPool {
	bindParameters(compression: number, params: Record<string, unknown>): { decode(buffer: ArrayBuffer): Promise<ArrayBuffer> };
	destroy(): Promise<void>;
}

export interface BlockReadOptions {
	/** 0 = full resolution (default), otherwise an overview's index from `overviews`. */
	image?: number;
	/** Decode compressed tiles in these worker threads; default: in this thread. */
	pool?: DecoderPool | null;
	/** Rows per yielded block, rounded up to whole tiles/strips; default about a million samples. */
	rowsPerBlock?: number;
}

export interface GeoTiffSource extends RasterHeader {
	/** The band's samples, block row by block row; the next block row is fetched while one is used. */
	blocks(opts?: BlockReadOptions): AsyncGenerator<RasterBlock>;
	close(): Promise<void>;
}

/**
 * The check every tile or strip passes just before it is decoded, with its stored and decoded
 * sizes (the header-level checks of ./tiff-blocks have run on the whole layout already; bounded
 * decoders stop compressed blocks at their size): an uncompressed block must hold all its bytes.
 * Throws RasterError; returns nothing.
 */
export function checkBlockBytes(file: string, compression: number, storedBytes: number, decodedBytes: number): void {
	if (compression === 1 && storedBytes < decodedBytes) {
		throw new RasterError(file, 'corrupt', `corrupt pixel data (Compression 1: a strip or tile holds ${storedBytes} of its ${decodedBytes} bytes)`);
	}
}

function asGeotiffSource(reader: ByteRangeReader) {
	return {
		async fetch(slices: { offset: number; length: number }[]) {
			return Promise.all(
				slices.map(async (s) => {
					const bytes = await reader.read(s.offset, s.length);
					return bytes.byteOffset === 0 && bytes.byteLength === bytes.buffer.byteLength ? bytes.buffer : bytes.slice().buffer;
				})
			);
		},
		get fileSize() {
			return null;
		},
		async close() {
			await reader.close?.();
		}
	};
}

async function openTiff(input: GeoTiffInput, file: string): Promise<GeoTIFF> {
	// Loaded on first use: geotiff pulls in web-worker, which breaks when imported inside
	// SvelteKit's build-time analysis worker.
	const lib = await loadGeotiff();
	let head: Uint8Array;
	if (input instanceof ArrayBuffer) head = new Uint8Array(input, 0, Math.min(8, input.byteLength));
	else if ('path' in input) {
		const { open } = await import('node:fs/promises');
		const fh = await open(input.path, 'r').catch(() => {
			throw new RasterError(file, 'not-tiff', 'the file cannot be opened');
		});
		try {
			head = new Uint8Array(8);
			const { bytesRead } = await fh.read(head, 0, 8, 0);
			head = head.subarray(0, bytesRead);
		} finally {
			await fh.close();
		}
	} else head = await input.read(0, 8);
	if (!isTiffMagic(head)) throw new RasterError(file, 'not-tiff', 'not a TIFF file (no TIFF header)');
	try {
		if (input instanceof ArrayBuffer) return await lib.fromArrayBuffer(input);
		if ('path' in input) return await lib.fromFile(input.path);
		return await lib.GeoTIFF.fromSource(asGeotiffSource(input) as unknown as Parameters<typeof lib.GeoTIFF.fromSource>[0]);
	} catch (e) {
		throw new RasterError(file, 'corrupt', `corrupt TIFF (${errorText(e)})`);
	}
}

/** Parameters geotiff's decoders take (geotiff computes the same ones in readRasters). */
async function decoderParameters(image: GeoTIFFImage, compression: number): Promise<Record<string, unknown>> {
	const fd = image.getFileDirectory();
	const value = async (name: string) => loadTag(image, name);
	const params: Record<string, unknown> = {
		tileWidth: image.getTileWidth(),
		tileHeight: image.getTileHeight(),
		planarConfiguration: (await value('PlanarConfiguration')) ?? 1,
		bitsPerSample: await value('BitsPerSample'),
		predictor: (await value('Predictor')) ?? 1
	};
	if (compression === 7) params.JPEGTables = await value('JPEGTables');
	if (compression === 34887) params.LercParameters = await value('LercParameters');
	if (compression === 50001) params.samplesPerPixel = Number(await value('SamplesPerPixel')) || 4;
	void fd;
	return params;
}

/** Typed view of a decoded block's samples of one band, or null when it needs the slow path. */
function fastView(buffer: ArrayBuffer, sampleFormat: number, bits: number): Float32Array | Float64Array | Int8Array | Uint8Array | Int16Array | Uint16Array | Int32Array | Uint32Array | null {
	if (sampleFormat === 3) return bits === 32 ? new Float32Array(buffer) : bits === 64 ? new Float64Array(buffer) : null;
	if (sampleFormat === 2) return bits === 8 ? new Int8Array(buffer) : bits === 16 ? new Int16Array(buffer) : bits === 32 ? new Int32Array(buffer) : null;
	return bits === 8 ? new Uint8Array(buffer) : bits === 16 ? new Uint16Array(buffer) : bits === 32 ? new Uint32Array(buffer) : null;
}

const littleEndianHost = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

/** Open one band of a GeoTIFF and check it, without reading its samples. */
export async function openGeoTiff(input: GeoTiffInput, opts: ReadGeoTiffOptions = {}): Promise<GeoTiffSource> {
	const file = opts.name ?? 'raster';
	const bandNo = opts.band ?? 1;
	const maxPixels = opts.maxPixels ?? DEFAULT_MAX_PIXELS;
	if (!Number.isInteger(bandNo) || bandNo < 1) {
		throw new RasterError(file, 'band-missing', `band ${bandNo} is not a band number (use 1, 2, …)`);
	}
	const tiff = await openTiff(input, file);
	let image: GeoTIFFImage;
	try {
		image = await tiff.getImage(0);
	} catch (e) {
		await tiff.close?.();
		throw new RasterError(file, 'corrupt', `corrupt TIFF (${errorText(e)})`);
	}
	try {
		return await describe(tiff, image, file, bandNo, maxPixels, opts.requireKnownCrs ?? true, rawReaderFor(input));
	} catch (e) {
		await tiff.close?.();
		throw e;
	}
}

/**
 * Stored bytes read straight into a caller's buffer: how uncompressed Float32 and Float64 strips
 * are read (no decoder, no intermediate copy). Returns the number of bytes read.
 */
type RawReader = (offset: number, into: Uint8Array) => Promise<number>;

function rawReaderFor(input: GeoTiffInput): { read: RawReader; close(): Promise<void> } {
	if (input instanceof ArrayBuffer) {
		return {
			read: async (offset, into) => {
				const n = Math.max(0, Math.min(into.length, input.byteLength - offset));
				into.set(new Uint8Array(input, offset, n));
				return n;
			},
			close: async () => undefined
		};
	}
	if ('path' in input) {
		// A handle of our own, opened on the first read.
		let handle: Promise<import('node:fs/promises').FileHandle> | null = null;
		return {
			read: async (offset, into) => {
				handle ??= import('node:fs/promises').then((fs) => fs.open(input.path, 'r'));
				const fh = await handle;
				let done = 0;
				while (done < into.length) {
					const { bytesRead } = await fh.read(into, done, into.length - done, offset + done);
					if (bytesRead === 0) break;
					done += bytesRead;
				}
				return done;
			},
			close: async () => {
				const h = handle;
				handle = null;
				await (await h)?.close();
			}
		};
	}
	return {
		read: async (offset, into) => {
			const bytes = await input.read(offset, into.length);
			const n = Math.min(bytes.length, into.length);
			into.set(bytes.subarray(0, n));
			return n;
		},
		close: async () => undefined // the reader itself is closed with the GeoTIFF
	};
}

async function describe(
	tiff: GeoTIFF,
	image: GeoTIFFImage,
	file: string,
	bandNo: number,
	maxPixels: number,
	requireKnownCrs: boolean,
	raw: { read: RawReader; close(): Promise<void> }
): Promise<GeoTiffSource> {
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
	if (requireKnownCrs && !isKnownCrs(epsg)) {
		throw new RasterError(file, 'unknown-crs', `unknown CRS EPSG:${epsg} (no definition registered)`);
	}
	const nodata = parseNodata(await loadTag(image, 'GDAL_NODATA'));

	// Reduced-resolution images (NewSubfileType bit 0) of the same band layout, finest first.
	const overviews: OverviewInfo[] = [];
	const images = new Map<number, GeoTIFFImage>([[0, image]]);
	try {
		const count = await tiff.getImageCount();
		for (let i = 1; i < count; i++) {
			const ov = await tiff.getImage(i);
			const kind = Number((await loadTag(ov, 'NewSubfileType')) ?? 0);
			if ((kind & 1) === 0 || (kind & 4) !== 0 || ov.getSamplesPerPixel() !== bandCount) continue;
			const w = ov.getWidth();
			const h = ov.getHeight();
			if (!(w > 0 && h > 0 && w < width)) continue;
			const sx = width / w;
			const sy = height / h;
			overviews.push({ index: i, width: w, height: h, transform: [transform[0], transform[1] * sx, transform[2] * sy, transform[3], transform[4] * sx, transform[5] * sy] });
			images.set(i, ov);
		}
	} catch {
		overviews.length = 0; // unreadable overviews: use the full-resolution image only
	}
	overviews.sort((a, b) => b.width - a.width);

	const wide = bitsPerSample === 64 || (sampleFormat !== 3 && bitsPerSample === 32);
	const blockWidth = image.getTileWidth();
	const blockHeight = image.getTileHeight();

	async function* blocks(o: BlockReadOptions = {}): AsyncGenerator<RasterBlock> {
		const img = images.get(o.image ?? 0);
		if (!img) throw new RangeError(`image ${o.image} is not an overview of ${file}`);
		const W = img.getWidth();
		const H = img.getHeight();
		const tw = img.getTileWidth();
		const th = img.getTileHeight();
		const tilesAcross = Math.ceil(W / tw);
		const tileRows = Math.ceil(H / th);
		const planar = Number((await loadTag(img, 'PlanarConfiguration')) ?? 1);
		const spp = img.getSamplesPerPixel();
		const bytesPerSample = bitsPerSample / 8;
		const sameSizes = Array.from({ length: spp }, (_, k) => img.getBitsPerSample(k)).every((b) => b === bitsPerSample);
		const stride = planar === 2 ? 1 : spp;
		const sampleOffset = planar === 2 ? 0 : bandNo - 1;
		const fast = img.littleEndian === littleEndianHost && sameSizes && !(sampleFormat === 3 && bitsPerSample === 16);
		const reader = img.getReaderForSample(bandNo - 1);
		const sampleByteOffset = planar === 2 ? 0 : Array.from({ length: bandNo - 1 }, (_, k) => img.getBitsPerSample(k) / 8).reduce((a, b) => a + b, 0);
		const pixelBytes = planar === 2 ? bytesPerSample : Array.from({ length: spp }, (_, k) => img.getBitsPerSample(k) / 8).reduce((a, b) => a + b, 0);
		const tileBytes = tw * th * pixelBytes;
		let inner: { decode(b: ArrayBuffer): Promise<ArrayBuffer> };
		try {
			const params = await decoderParameters(img, compression);
			inner = o.pool ? o.pool.bindParameters(compression, params) : ((await (await loadGeotiff()).getDecoder(compression, params as never)) as unknown as typeof inner);
		} catch (e) {
			throw new RasterError(file, 'unsupported', `unsupported or corrupt compression (Compression ${compression}: ${errorText(e)})`);
		}
		// The per-block check runs here, on each block's stored bytes, before it is decoded.
		const decoderFor = (ty: number) => {
			// Tiles are whole at the edges; the last strip holds only the rows that are left.
			const decodedBytes = img.isTiled ? tileBytes : tw * Math.min(th, H - ty * th) * pixelBytes;
			return {
				decode: (buffer: ArrayBuffer) => {
					checkBlockBytes(file, compression, buffer.byteLength, decodedBytes);
					return inner.decode(buffer);
				}
			};
		};
		const wantRows = o.rowsPerBlock ?? Math.max(1, Math.ceil(1_048_576 / W));
		const groupTiles = Math.max(1, Math.ceil(wantRows / th));

		// Uncompressed float strips hold the samples exactly as a block wants them: their bytes are
		// read straight into the block (the per-block check still runs on each strip's sizes).
		const direct = compression === 1 && !img.isTiled && tw === W && fast && sampleFormat === 3 && (bitsPerSample === 32 || bitsPerSample === 64) && (spp === 1 || planar === 2);
		const stripOffsets = direct ? toNumbers(await loadTag(img, 'StripOffsets')) : null;
		const stripBytes = direct ? toNumbers(await loadTag(img, 'StripByteCounts')) : null;
		const firstStrip = planar === 2 ? (bandNo - 1) * tileRows : 0;
		// Two buffers in turn: one block is used while the next is read into the other.
		const groupRows = Math.min(H, groupTiles * th);
		const buffers = [0, 1].map(() => (wide ? new Float64Array(W * groupRows) : new Float32Array(W * groupRows)));
		let turn = 0;

		/** One tile or strip through geotiff (and its decoder), copied into the block. */
		const copyTile = (tx: number, ty: number, data: Float32Array | Float64Array, row0: number): Promise<void> =>
			(img.getTileOrStrip(tx, ty, planar === 2 ? bandNo - 1 : 0, decoderFor(ty) as never) as Promise<{ data: ArrayBuffer }>).then(({ data: buf }) => {
				const c0 = tx * tw;
				const cw = Math.min(tw, W - c0);
				const r0 = ty * th - row0;
				const rh = Math.min(th, H - ty * th);
				const view = fast && buf.byteLength % bytesPerSample === 0 ? fastView(buf, sampleFormat, bitsPerSample) : null;
				if (view && view.length >= (rh - 1) * tw * stride + cw * stride) {
					for (let r = 0; r < rh; r++) {
						const src = r * tw * stride + sampleOffset;
						const dst = (r0 + r) * W + c0;
						if (stride === 1) data.set(view.subarray(src, src + cw), dst);
						else for (let c = 0; c < cw; c++) data[dst + c] = view[src + c * stride];
					}
				} else {
					const dv = new DataView(buf);
					for (let r = 0; r < rh; r++) {
						for (let c = 0; c < cw; c++) {
							const at = (r * tw + c) * pixelBytes + sampleByteOffset;
							data[(r0 + r) * W + c0 + c] = at + bytesPerSample <= buf.byteLength ? reader.call(dv, at, img.littleEndian) : Number.NaN;
						}
					}
				}
			});

		/** An uncompressed strip read into the block; false for a sparse strip (no bytes stored). */
		const readStrip = async (ty: number, data: Float32Array | Float64Array, row0: number): Promise<boolean> => {
			const offset = stripOffsets?.[firstStrip + ty];
			const stored = stripBytes?.[firstStrip + ty];
			if (offset === undefined || stored === undefined || stored === 0) return false;
			const rh = Math.min(th, H - ty * th);
			const into = new Uint8Array(data.buffer, data.byteOffset + (ty * th - row0) * W * bytesPerSample, rh * W * bytesPerSample);
			checkBlockBytes(file, compression, stored, into.length);
			checkBlockBytes(file, compression, await raw.read(offset, into), into.length);
			return true;
		};

		const fetchGroup = async (ty0: number): Promise<RasterBlock> => {
			const ty1 = Math.min(tileRows, ty0 + groupTiles);
			const row0 = ty0 * th;
			const rows = Math.min(H, ty1 * th) - row0;
			const data = buffers[turn].subarray(0, W * rows);
			turn = 1 - turn;
			const jobs: Promise<void>[] = [];
			for (let ty = ty0; ty < ty1; ty++) {
				if (direct) jobs.push(readStrip(ty, data, row0).then((done) => (done ? undefined : copyTile(0, ty, data, row0))));
				else for (let tx = 0; tx < tilesAcross; tx++) jobs.push(copyTile(tx, ty, data, row0));
			}
			try {
				await Promise.all(jobs);
			} catch (e) {
				if (e instanceof RasterError) throw e;
				const msg = errorText(e);
				if (msg.includes(BLOCK_OVERFLOW)) {
					throw new RasterError(file, 'unsafe-blocks', `a compressed block inflates to more than the block can hold: the file is corrupt or built to exhaust memory`);
				}
				if (/compression|decoder/i.test(msg)) {
					throw new RasterError(file, 'unsupported', `unsupported or corrupt compression (Compression ${compression}: ${msg})`);
				}
				throw new RasterError(file, 'corrupt', `corrupt pixel data (Compression ${compression}: ${msg})`);
			}
			return { row0, width: W, height: rows, data };
		};

		let next: Promise<RasterBlock> | null = fetchGroup(0);
		for (let ty = 0; ty < tileRows; ty += groupTiles) {
			const current: Promise<RasterBlock> = next!;
			next = ty + groupTiles < tileRows ? fetchGroup(ty + groupTiles) : null;
			// A failed prefetch must not surface as an unhandled rejection while this block is used.
			next?.catch(() => undefined);
			yield await current;
		}
	}

	return {
		width,
		height,
		nodata,
		epsg,
		transform,
		bandCount,
		band: bandNo,
		sampleFormat,
		bitsPerSample,
		compression,
		tiled,
		blockWidth,
		blockHeight,
		overviews,
		blocks,
		async close() {
			await raw.close();
			await tiff.close?.();
		}
	};
}

/**
 * A pool of `size` decoder threads for a compressed source (geotiff's Pool), or null when the
 * source is not compressed (its blocks are used as read). Destroy it when done.
 */
export async function decoderPoolFor(source: Pick<RasterHeader, 'compression'>, size = 2): Promise<DecoderPool | null> {
	if (source.compression === 1) return null;
	const { Pool } = await loadGeotiff();
	return new Pool(size) as unknown as DecoderPool;
}

/** Read one band of a GeoTIFF held in memory, whole. Large rasters: use openGeoTiff's blocks. */
export async function readGeoTiff(buffer: ArrayBuffer, opts: ReadGeoTiffOptions = {}): Promise<RasterBand> {
	const source = await openGeoTiff(buffer, opts);
	const { width, height } = source;
	const wide = source.bitsPerSample === 64 || (source.sampleFormat !== 3 && source.bitsPerSample === 32);
	const data = wide ? new Float64Array(width * height) : new Float32Array(width * height);
	for await (const block of source.blocks()) data.set(block.data, block.row0 * width);
	await source.close();
	const { blocks: _b, close: _c, blockWidth: _w, blockHeight: _h, overviews: _o, ...header } = source;
	return { ...header, data };
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
