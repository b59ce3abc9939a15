/**
 * A structural check of a TIFF's blocks (strips or tiles) before any of them is decoded, so that a
 * decompression bomb is refused from its header alone. Pure: it takes the numbers from the image
 * file directory and returns a problem for the user, or null.
 *
 * What it refuses:
 * - tiles whose sides are not 1 … MAX_TILE_SIDE or not multiples of 16 (TIFF 6.0, section 15:
 *   "TileWidth must be a multiple of 16"; likewise TileLength), and any block that would inflate
 *   to more than MAX_BLOCK_BYTES;
 * - a block count that does not match the image's size and layout;
 * - a compressed block that must inflate to more than its codec's largest expansion of its byte
 *   count (a block of 4 GB "from" 4 kB of Deflate cannot be honest data).
 * Each block's decoded size is also what a bounded decoder must stop at (see blockBytes); a tiny
 * strip that inflates past its block is refused there, while it decodes.
 */

/** Largest tile side accepted. GDAL writes 256 by default and cloud-optimised files 512 (common practice, no source). */
export const MAX_TILE_SIDE = 4096;
/** Largest decoded strip or tile: 64 MiB (a 4096 × 4096 tile of 32-bit samples). */
export const MAX_BLOCK_BYTES = 64 * 1024 * 1024;

/**
 * Largest expansion of each TIFF compression, decoded bytes per stored byte.
 * - Deflate (8, and the older 32946): 1032:1 (zlib's technical notes: "the limit is 1032:1") [from memory].
 * - LZW (5): codes of at least 9 bits emit strings that grow by at most one byte per code, up to
 *   4096 entries between clear codes, so no code emits more than 4096 bytes: at most 4096 / (9 / 8)
 *   ≈ 3641:1 (TIFF 6.0, section 13; the bound is ours, from the code width).
 * - PackBits (32773): a 2-byte run emits at most 128 bytes, 64:1 (TIFF 6.0, section 9).
 * - ZSTD (50000): its format allows long repeats; bounded by the decoder and worker only.
 */
export const MAX_EXPANSION: Record<number, number> = { 8: 1032, 32946: 1032, 5: 3641, 32773: 64 };

export interface TiffBlockLayout {
	width: number;
	height: number;
	/** TileWidth × TileLength when tiled; otherwise strips of `rowsPerStrip` rows across the width. */
	tile: { width: number; height: number } | null;
	rowsPerStrip: number;
	/** One entry per sample. */
	bitsPerSample: number[];
	/** 1 chunky (samples interleaved in each block), 2 planar (one set of blocks per sample). */
	planarConfiguration: number;
	compression: number;
	/** StripByteCounts or TileByteCounts. 0 marks a sparse block (GDAL's SPARSE_OK), read as nodata. */
	byteCounts: ArrayLike<number>;
}

export interface BlockGeometry {
	blockWidth: number;
	blockHeight: number;
	blocksAcross: number;
	blocksDown: number;
	planes: number;
	/** Bytes a full block decodes to. */
	blockBytes: number;
}

/** The geometry implied by the layout (no checks beyond arithmetic). */
export function blockGeometry(l: TiffBlockLayout): BlockGeometry {
	const planar = l.planarConfiguration === 2;
	const blockWidth = l.tile ? l.tile.width : l.width;
	const blockHeight = l.tile ? l.tile.height : Math.min(Math.max(1, l.rowsPerStrip), l.height);
	const bitsPerPixel = planar ? Math.max(...l.bitsPerSample) : l.bitsPerSample.reduce((a, b) => a + b, 0);
	return {
		blockWidth,
		blockHeight,
		blocksAcross: Math.ceil(l.width / blockWidth),
		blocksDown: Math.ceil(l.height / blockHeight),
		planes: planar ? l.bitsPerSample.length : 1,
		blockBytes: Math.ceil((blockWidth * bitsPerPixel) / 8) * blockHeight
	};
}

function mb(n: number): string {
	return `${Math.round((n / (1024 * 1024)) * 10) / 10} MB`;
}

/** A sentence for the user when the blocks cannot be decoded safely, or null when they can. */
export function tiffBlockProblem(l: TiffBlockLayout): string | null {
	if (!(l.width > 0) || !(l.height > 0)) return `the image size ${l.width}×${l.height} is not valid`;
	if (l.bitsPerSample.length === 0 || l.bitsPerSample.some((b) => !(b > 0) || b > 64)) return 'the bits per sample are not valid';
	if (l.tile) {
		const { width: tw, height: th } = l.tile;
		for (const [name, side] of [
			['width', tw],
			['height', th]
		] as const) {
			if (!Number.isInteger(side) || side < 16 || side > MAX_TILE_SIDE || side % 16 !== 0) {
				return `its tiles are ${tw}×${th} pixels; tile ${name}s must be multiples of 16 from 16 to ${MAX_TILE_SIDE}`;
			}
		}
	} else if (!(l.rowsPerStrip >= 1)) {
		return 'its strips have no rows (RowsPerStrip is 0)';
	}
	const g = blockGeometry(l);
	if (g.blockBytes > MAX_BLOCK_BYTES) {
		return `each ${l.tile ? 'tile' : 'strip'} would decode to ${mb(g.blockBytes)}, over the limit of ${mb(MAX_BLOCK_BYTES)}; write it with smaller tiles or strips (e.g. gdal_translate -co TILED=YES)`;
	}
	const expected = g.blocksAcross * g.blocksDown * g.planes;
	if (l.byteCounts.length !== expected) {
		return `it lists ${l.byteCounts.length} ${l.tile ? 'tiles' : 'strips'} where its size calls for ${expected}`;
	}
	const ratio = MAX_EXPANSION[l.compression];
	if (ratio === undefined) return null;
	for (let i = 0; i < l.byteCounts.length; i++) {
		const stored = Number(l.byteCounts[i]);
		if (!Number.isFinite(stored) || stored < 0) return `${l.tile ? 'tile' : 'strip'} ${i + 1} has an invalid byte count`;
		if (stored === 0) continue; // sparse
		const row = Math.floor((i % (g.blocksAcross * g.blocksDown)) / g.blocksAcross);
		// The last strip holds only the rows that remain; edge tiles are padded to full size (TIFF 6.0, section 15).
		const rows = l.tile ? g.blockHeight : Math.min(g.blockHeight, l.height - row * g.blockHeight);
		const decoded = (g.blockBytes / g.blockHeight) * rows;
		if (decoded > stored * ratio) {
			return `${l.tile ? 'tile' : 'strip'} ${i + 1} must inflate ${stored} stored bytes to ${decoded} bytes, more than compression ${l.compression} can expand (${ratio}:1): the file is corrupt or built to exhaust memory`;
		}
	}
	return null;
}
