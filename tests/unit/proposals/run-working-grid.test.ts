/**
 * The working grid of a proposal run (runWorkingGrid): the surface in memory goes through the same
 * cell-size rule and mass-preserving aggregation as the command line, and the choice is recorded.
 */
import { describe, expect, it } from 'vitest';
import type { RasterBand } from '../../../src/lib/geo/geotiff';
import { runWorkingGrid } from '../../../src/lib/server/services/placement';

/** A 2 km × 2 km surface of 5 m pixels in UTM 54S (EPSG:32754), value = 1 + column index. */
const W = 400;
const X0 = 600_000;
const Y0 = 6_440_000;
function band(): RasterBand {
	const data = new Float32Array(W * W);
	for (let r = 0; r < W; r++) for (let c = 0; c < W; c++) data[r * W + c] = 1 + c;
	return { width: W, height: W, data, nodata: null, epsg: 32754, transform: [X0, 5, 0, Y0, 0, -5], bandCount: 1, band: 1, sampleFormat: 3, bitsPerSample: 32, compression: 1, tiled: false };
}

describe('runWorkingGrid', () => {
	it('sizes cells at 1/10 of the smallest sensing radius when that is coarser than the pixels and the budget', async () => {
		// Radius 100 m → 10 m cells; the budget gives √(2000² / 10⁶) = 2 m and the pixels 5 m, both finer.
		// (1/10 of the radius: a disk of the smallest radius spans about 20 cells, common practice, no source.)
		const { grid, epsg, cellSize } = await runWorkingGrid(band(), { crs: 32754, smallestRadius: 100 });
		expect(epsg).toBe(32754);
		expect(cellSize).toMatchObject({ rule: 'radius', chosenM: 10, requestedM: null, pixelM: 5, smallestRadiusM: 100, budgetCells: 1_000_000 });
		expect(grid.cellSize).toBe(10);
		expect([grid.width, grid.height]).toEqual([200, 200]);
		// Mass is preserved: a 10 m cell in column j sums the 2 × 2 pixels of columns 2j and 2j + 1,
		// 2·(1 + 2j) + 2·(2 + 2j) = 6 + 8j, against the surface's total 400 · Σ_{c=1..400} c = 400 · 80 200.
		const total = 400 * (400 * 401) / 2;
		for (const j of [0, 57, 199]) expect(grid.mass[123 * 200 + j]).toBeCloseTo((6 + 8 * j) / total, 12);
	});

	it('honours a requested cell size and records it', async () => {
		const { grid, cellSize } = await runWorkingGrid(band(), { crs: 32754, smallestRadius: 100, cellSize: 40 });
		expect(cellSize).toMatchObject({ rule: 'requested', chosenM: 40, requestedM: 40 });
		expect(cellSize.reason).toMatch(/as asked for/);
		expect([grid.cellSize, grid.width, grid.height]).toEqual([40, 50, 50]);
	});

	it('never makes cells finer than the surface pixels, and says a finer request was asked for', async () => {
		const { grid, cellSize } = await runWorkingGrid(band(), { crs: 32754, smallestRadius: 20, cellSize: 2 });
		expect(cellSize).toMatchObject({ rule: 'pixel', chosenM: 5, requestedM: 2 });
		expect(cellSize.reason).toMatch(/2 m was asked for/);
		expect(grid.cellSize).toBe(5);
		// Without a request, radius 20 m → 2 m by radius, still under the 5 m pixels.
		expect((await runWorkingGrid(band(), { crs: 32754, smallestRadius: 20 })).cellSize).toMatchObject({ rule: 'pixel', chosenM: 5 });
	});
});
