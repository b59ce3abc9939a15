/**
 * A small, independent baseline-TIFF / GeoTIFF encoder (little-endian, classic TIFF).
 *
 * Used to build test fixtures and benchmark inputs in layouts that geotiff's own writer cannot
 * produce (tiles, signed integers, compression, PixelIsPoint, ModelTransformation, several bands).
 * It writes the tags of TIFF 6.0 and the GeoTIFF 1.0 tags straight from their specifications;
 * compression is delegated to a caller-supplied encoder so this module stays free of I/O.
 */

export type SampleFormatCode = 1 | 2 | 3; // 1 = unsigned int, 2 = signed int, 3 = IEEE float

export interface TiffGeoInfo {
	/** ModelTiepointTag: [I, J, K, X, Y, Z]. */
	tiepoint?: number[];
	/** ModelPixelScaleTag: [Sx, Sy, Sz]. */
	pixelScale?: number[];
	/** ModelTransformationTag: 16 values, row-major 4×4. */
	transformation?: number[];
	/** SHORT-valued GeoKeys as [keyId, value] pairs, e.g. [[1024, 1], [3072, 32633]]. */
	geoKeys?: Array<[number, number]>;
}

export interface TiffExtraTag {
	tag: number;
	/** TIFF field type: 2 ASCII, 3 SHORT, 4 LONG, 12 DOUBLE. */
	type: 2 | 3 | 4 | 12;
	values: number[] | string;
}

export interface TiffWriteOptions {
	width: number;
	height: number;
	/** One array per sample (band), row-major, width*height values each. */
	bands: ArrayLike<number>[];
	sampleFormat: SampleFormatCode;
	bitsPerSample: 8 | 16 | 32 | 64;
	/** Strips (default: 16 rows a strip) or square/rectangular tiles (multiples of 16). */
	layout?: { kind: 'strips'; rowsPerStrip: number } | { kind: 'tiles'; tileWidth: number; tileHeight: number };
	/** Compression tag value and the matching encoder of one block (default: none). */
	compression?: { code: number; encode: (raw: Uint8Array) => Uint8Array };
	geo?: TiffGeoInfo;
	/** GDAL_NODATA tag (42113) text, e.g. "-9999". */
	nodata?: string;
	extraTags?: TiffExtraTag[];
}

interface Entry {
	tag: number;
	type: 2 | 3 | 4 | 12;
	values: number[] | string;
}

const TYPE_SIZE: Record<number, number> = { 2: 1, 3: 2, 4: 4, 12: 8 };

function writeSample(view: DataView, offset: number, value: number, format: SampleFormatCode, bits: number): void {
	if (format === 3) {
		if (bits === 32) view.setFloat32(offset, value, true);
		else view.setFloat64(offset, value, true);
		return;
	}
	if (format === 2) {
		if (bits === 8) view.setInt8(offset, value);
		else if (bits === 16) view.setInt16(offset, value, true);
		else view.setInt32(offset, value, true);
		return;
	}
	if (bits === 8) view.setUint8(offset, value);
	else if (bits === 16) view.setUint16(offset, value, true);
	else view.setUint32(offset, value, true);
}

/** Encode one rectangular block (chunky: all samples of a pixel together), zero-padded outside the image. */
function encodeBlock(
	opts: TiffWriteOptions,
	x0: number,
	y0: number,
	bw: number,
	bh: number
): Uint8Array {
	const spp = opts.bands.length;
	const bytes = opts.bitsPerSample / 8;
	const out = new Uint8Array(bw * bh * spp * bytes);
	const view = new DataView(out.buffer);
	for (let r = 0; r < bh; r++) {
		const y = y0 + r;
		if (y >= opts.height) break;
		for (let c = 0; c < bw; c++) {
			const x = x0 + c;
			if (x >= opts.width) break;
			const src = y * opts.width + x;
			const dst = ((r * bw + c) * spp) * bytes;
			for (let s = 0; s < spp; s++) {
				writeSample(view, dst + s * bytes, opts.bands[s][src], opts.sampleFormat, opts.bitsPerSample);
			}
		}
	}
	return out;
}

/** Encode a GeoTIFF into a fresh ArrayBuffer. */
export function encodeTiff(opts: TiffWriteOptions): ArrayBuffer {
	const { width, height, bands } = opts;
	if (bands.length === 0) throw new Error('encodeTiff: at least one band');
	for (const b of bands) {
		if (b.length !== width * height) throw new Error('encodeTiff: band length must be width*height');
	}
	const spp = bands.length;
	const layout = opts.layout ?? { kind: 'strips', rowsPerStrip: 16 };
	const encode = opts.compression?.encode ?? ((raw: Uint8Array) => raw);

	const blocks: Uint8Array[] = [];
	if (layout.kind === 'strips') {
		for (let y = 0; y < height; y += layout.rowsPerStrip) {
			const rows = Math.min(layout.rowsPerStrip, height - y);
			blocks.push(encode(encodeBlock(opts, 0, y, width, rows)));
		}
	} else {
		for (let y = 0; y < height; y += layout.tileHeight) {
			for (let x = 0; x < width; x += layout.tileWidth) {
				blocks.push(encode(encodeBlock(opts, x, y, layout.tileWidth, layout.tileHeight)));
			}
		}
	}

	// Pixel data right after the 8-byte header, each block word-aligned.
	const blockOffsets: number[] = [];
	let pos = 8;
	for (const b of blocks) {
		blockOffsets.push(pos);
		pos += b.length + (b.length & 1);
	}
	const ifdOffset = pos;

	const entries = directoryEntries(opts, spp, layout.kind === 'strips'
		? [
				{ tag: 273, type: 4, values: blockOffsets },
				{ tag: 278, type: 4, values: [layout.rowsPerStrip] },
				{ tag: 279, type: 4, values: blocks.map((b) => b.length) }
			]
		: [
				{ tag: 322, type: 4, values: [layout.tileWidth] },
				{ tag: 323, type: 4, values: [layout.tileHeight] },
				{ tag: 324, type: 4, values: blockOffsets },
				{ tag: 325, type: 4, values: blocks.map((b) => b.length) }
			]);
	const dir = encodeDirectory(entries, ifdOffset);
	const out = new Uint8Array(ifdOffset + dir.length);
	writeTiffHeader(out, ifdOffset);
	blocks.forEach((b, i) => out.set(b, blockOffsets[i]));
	out.set(dir, ifdOffset);
	return out.buffer;
}

/**
 * The header and directory of an uncompressed, single-band, stripped GeoTIFF whose strips follow
 * it, back to back: write these bytes, then the samples row by row (little-endian). For files too
 * large to build in memory (benchmark inputs).
 */
export function encodeTiffHeader(opts: Omit<TiffWriteOptions, 'bands' | 'layout' | 'compression'> & { rowsPerStrip: number }): Uint8Array {
	const { width, height, rowsPerStrip } = opts;
	const stripBytes = width * rowsPerStrip * (opts.bitsPerSample / 8);
	const strips = Math.ceil(height / rowsPerStrip);
	const counts = Array.from({ length: strips }, (_, k) => (k === strips - 1 ? (height - k * rowsPerStrip) * width * (opts.bitsPerSample / 8) : stripBytes));
	const layoutEntries = (first: number): Entry[] => [
		{ tag: 273, type: 4, values: counts.map((_, k) => first + k * stripBytes) },
		{ tag: 278, type: 4, values: [rowsPerStrip] },
		{ tag: 279, type: 4, values: counts }
	];
	const sizing = encodeDirectory(directoryEntries({ ...opts, bands: [[]] }, 1, layoutEntries(0)), 8);
	const first = 8 + sizing.length;
	const dir = encodeDirectory(directoryEntries({ ...opts, bands: [[]] }, 1, layoutEntries(first)), 8);
	const out = new Uint8Array(first);
	writeTiffHeader(out, 8);
	out.set(dir, 8);
	return out;
}

function writeTiffHeader(out: Uint8Array, ifdOffset: number): void {
	const view = new DataView(out.buffer, out.byteOffset);
	out[0] = 0x49;
	out[1] = 0x49; // "II": little-endian
	view.setUint16(2, 42, true);
	view.setUint32(4, ifdOffset, true);
}

/** The baseline and GeoTIFF tags of a file, with the layout's own tags, sorted. */
function directoryEntries(opts: Omit<TiffWriteOptions, 'layout'>, spp: number, layoutEntries: Entry[]): Entry[] {
	const { width, height } = opts;
	const bands = Array.from({ length: spp });
	const entries: Entry[] = [
		{ tag: 256, type: 4, values: [width] },
		{ tag: 257, type: 4, values: [height] },
		{ tag: 258, type: 3, values: bands.map(() => opts.bitsPerSample) },
		{ tag: 259, type: 3, values: [opts.compression?.code ?? 1] },
		{ tag: 262, type: 3, values: [1] },
		{ tag: 277, type: 3, values: [spp] },
		{ tag: 284, type: 3, values: [1] },
		{ tag: 339, type: 3, values: bands.map(() => opts.sampleFormat) },
		...layoutEntries
	];
	const geo = opts.geo;
	if (geo?.pixelScale) entries.push({ tag: 33550, type: 12, values: geo.pixelScale });
	if (geo?.tiepoint) entries.push({ tag: 33922, type: 12, values: geo.tiepoint });
	if (geo?.transformation) entries.push({ tag: 34264, type: 12, values: geo.transformation });
	if (geo?.geoKeys && geo.geoKeys.length > 0) {
		const keys = [...geo.geoKeys].sort((p, q) => p[0] - q[0]);
		const dir = [1, 1, 0, keys.length];
		for (const [id, v] of keys) dir.push(id, 0, 1, v);
		entries.push({ tag: 34735, type: 3, values: dir });
	}
	if (opts.nodata !== undefined) entries.push({ tag: 42113, type: 2, values: opts.nodata });
	for (const t of opts.extraTags ?? []) {
		const i = entries.findIndex((e) => e.tag === t.tag);
		if (i >= 0) entries.splice(i, 1);
		entries.push({ ...t });
	}
	entries.sort((p, q) => p.tag - q.tag);

	return entries;
}

/** One image file directory and the values it points to, to be written at byte `ifdOffset`. */
function encodeDirectory(entries: Entry[], ifdOffset: number): Uint8Array {
	const count = (e: Entry) => (typeof e.values === 'string' ? e.values.length + 1 : e.values.length);
	const ifdSize = 2 + entries.length * 12 + 4;
	let extra = ifdOffset + ifdSize;
	const extraOffsets: number[] = [];
	for (const e of entries) {
		const size = count(e) * TYPE_SIZE[e.type];
		if (size > 4) {
			extraOffsets.push(extra);
			extra += size + (size & 1);
		} else extraOffsets.push(-1);
	}

	const out = new Uint8Array(extra - ifdOffset);
	const view = new DataView(out.buffer);
	const writeValues = (e: Entry, at: number) => {
		if (typeof e.values === 'string') {
			for (let i = 0; i < e.values.length; i++) out[at - ifdOffset + i] = e.values.charCodeAt(i) & 0xff;
			out[at - ifdOffset + e.values.length] = 0;
			return;
		}
		e.values.forEach((v, i) => {
			if (e.type === 3) view.setUint16(at - ifdOffset + 2 * i, v, true);
			else if (e.type === 4) view.setUint32(at - ifdOffset + 4 * i, v, true);
			else view.setFloat64(at - ifdOffset + 8 * i, v, true);
		});
	};

	view.setUint16(0, entries.length, true);
	entries.forEach((e, i) => {
		const p = 2 + i * 12;
		view.setUint16(p, e.tag, true);
		view.setUint16(p + 2, e.type, true);
		view.setUint32(p + 4, count(e), true);
		if (extraOffsets[i] >= 0) {
			view.setUint32(p + 8, extraOffsets[i], true);
			writeValues(e, extraOffsets[i]);
		} else writeValues(e, ifdOffset + p + 8);
	});
	view.setUint32(2 + entries.length * 12, 0, true);
	return out;
}
