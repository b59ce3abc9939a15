import { describe, expect, it } from 'vitest';
import { blockGeometry, MAX_BLOCK_BYTES, tiffBlockProblem, type TiffBlockLayout } from '../../../src/lib/geo/tiff-blocks';

const base: TiffBlockLayout = { width: 1000, height: 1000, tile: null, rowsPerStrip: 16, bitsPerSample: [32], planarConfiguration: 1, compression: 8, byteCounts: [] };
const strips = (l: Partial<TiffBlockLayout>, each: number) => {
	const layout = { ...base, ...l };
	const g = blockGeometry(layout);
	return { ...layout, byteCounts: new Array(g.blocksAcross * g.blocksDown * g.planes).fill(each) };
};

describe('tiffBlockProblem', () => {
	it('accepts what GDAL writes: 256 × 256 tiles, 16-row strips, sparse blocks', () => {
		// GDAL's default block size for TILED=YES is 256 × 256 (GDAL GTiff driver docs) [from memory].
		expect(tiffBlockProblem(strips({ tile: { width: 256, height: 256 } }, 40_000))).toBeNull();
		expect(tiffBlockProblem(strips({}, 20_000))).toBeNull();
		expect(tiffBlockProblem(strips({}, 0))).toBeNull();
	});

	it('counts the last, shorter strip by the rows it holds', () => {
		// 1000 rows in strips of 16: 62 full strips and one of 8 rows (TIFF 6.0, section 3, StripsPerImage).
		const g = blockGeometry({ ...base });
		expect(g.blocksDown).toBe(63);
		expect(g.blockBytes).toBe(1000 * 4 * 16);
	});

	it('refuses huge or odd tiles before decoding', () => {
		expect(tiffBlockProblem(strips({ tile: { width: 65536, height: 65536 } }, 1000))).toMatch(/multiples of 16 from 16 to 4096/);
		expect(tiffBlockProblem(strips({ tile: { width: 250, height: 256 } }, 1000))).toMatch(/multiples of 16/);
		// 4096 × 4096 tiles of 64-bit samples: 128 MiB a tile, over the 64 MiB a block.
		expect(4096 * 4096 * 8).toBeGreaterThan(MAX_BLOCK_BYTES);
		expect(tiffBlockProblem(strips({ width: 4096, height: 4096, tile: { width: 4096, height: 4096 }, bitsPerSample: [64] }, 1_000_000))).toMatch(/would decode to 128 MB/);
	});

	it('refuses a block that must inflate beyond what its codec can expand', () => {
		// A 256 × 256 float32 tile (262 144 bytes) from 200 bytes of Deflate: 1311:1, beyond Deflate's 1032:1.
		expect(tiffBlockProblem(strips({ tile: { width: 256, height: 256 } }, 200))).toMatch(/more than compression 8 can expand \(1032:1\)/);
		// 256 bytes is 1024:1 and possible (a constant tile compresses that well).
		expect(tiffBlockProblem(strips({ tile: { width: 256, height: 256 } }, 256))).toBeNull();
		// PackBits: 64:1 at most.
		expect(tiffBlockProblem(strips({ compression: 32773 }, 900))).toMatch(/64:1/);
	});

	it('refuses a block list that does not match the image', () => {
		expect(tiffBlockProblem({ ...strips({}, 20_000), byteCounts: [20_000] })).toMatch(/lists 1 strips where its size calls for 63/);
		expect(tiffBlockProblem({ ...base, rowsPerStrip: 0, byteCounts: [1] })).toMatch(/no rows/);
	});
});
