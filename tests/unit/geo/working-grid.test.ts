/**
 * The working grid's frame (CRS, extent, study area, limits) and its basic values, through the one
 * way a band becomes a working grid: aggregateToWorkingGrid (the band held in memory, as placement
 * runs and zones give it). The mass-preservation checks against outside references are in
 * aggregate.test.ts.
 */
import { describe, expect, it } from 'vitest';
import { WorkingGridError } from '../../../src/lib/geo/working-grid';
import { aggregateToWorkingGrid, bandSource, type AggregateOptions } from '../../../src/lib/geo/aggregate';
import type { RasterBand } from '../../../src/lib/geo/geotiff';
import { pixelToCrs } from '../../../src/lib/geo/geotiff';
import { transformer } from '../../../src/lib/geo/crs';
import type { Ring } from '../../../src/lib/engine/rasterize';

const build = (raster: RasterBand, opts: AggregateOptions = {}) => aggregateToWorkingGrid(bandSource(raster), opts);

function band(over: Partial<RasterBand> & Pick<RasterBand, 'width' | 'height' | 'data'>): RasterBand {
	return {
		nodata: null,
		epsg: 32633,
		transform: [500000, 30, 0, 5300000, 0, -30],
		bandCount: 1,
		band: 1,
		sampleFormat: 3,
		bitsPerSample: 32,
		compression: 1,
		tiled: false,
		...over
	};
}

const sum = (a: ArrayLike<number>) => {
	let s = 0;
	for (let i = 0; i < a.length; i++) s += a[i];
	return s;
};

describe('the working grid in the raster’s own projected CRS', () => {
	const w = 10;
	const h = 8;
	const data = Float32Array.from({ length: w * h }, (_, i) => 1 + (i % 7));
	it('reproduces the raster cell for cell (cells of the pixels’ size)', async () => {
		const { grid, epsg, latticeError, cellSize } = await build(band({ width: w, height: h, data }));
		expect(epsg).toBe(32633);
		expect(cellSize.rule).toBe('pixel');
		expect(grid.crs).toBe('EPSG:32633');
		expect([grid.width, grid.height, grid.x0, grid.y0, grid.cellSize]).toEqual([w, h, 500000, 5300000, 30]);
		expect(latticeError).toBeLessThan(1e-6);
		const total = sum(data);
		for (let i = 0; i < w * h; i++) expect(grid.mass[i]).toBeCloseTo(data[i] / total, 12);
		expect(sum(grid.mass)).toBeCloseTo(1, 12);
		expect(grid.feasible.every((v) => v === 1)).toBe(true);
	});

	it('nodata, NaN and negative cells get mass 0 and feasible 0; a valid 0 stays feasible', async () => {
		const d = Float32Array.from([5, -9999, Number.NaN, -1, 0, 5, 5, 5, 5]);
		const { grid } = await build(band({ width: 3, height: 3, data: d, nodata: -9999 }));
		expect(Array.from(grid.feasible)).toEqual([1, 0, 0, 0, 1, 1, 1, 1, 1]);
		expect(grid.mass[1]).toBe(0);
		expect(grid.mass[2]).toBe(0);
		expect(grid.mass[3]).toBe(0);
		expect(grid.mass[4]).toBe(0);
		expect(sum(grid.mass)).toBeCloseTo(1, 12);
		// valid sum 5 + 0 + 4·5 = 25
		expect(grid.mass[0]).toBeCloseTo(5 / 25, 12);
	});

	it('Float32 nodata written as "9999.99" matches the stored single-precision value', async () => {
		// 9999.99 is not a float32 value: the band holds Math.fround(9999.99) ≠ 9999.99 (positive, so
		// only the nodata test can reject it).
		expect(Math.fround(9999.99)).not.toBe(9999.99);
		const d = Float32Array.from([1, 9999.99, 1, 1]);
		const { grid } = await build(band({ width: 2, height: 2, data: d, nodata: 9999.99 }));
		expect(Array.from(grid.feasible)).toEqual([1, 0, 1, 1]);
	});

	it('an all-zero raster stays all zero (and feasible)', async () => {
		const { grid } = await build(band({ width: 4, height: 4, data: new Float32Array(16) }));
		expect(sum(grid.mass)).toBe(0);
		expect(sum(grid.feasible)).toBe(16);
	});

	it('a coarser cell size by option keeps total mass and bounds', async () => {
		const d = Float32Array.from({ length: 100 }, () => 1);
		const { grid } = await build(band({ width: 10, height: 10, data: d }), { cellSize: 60 });
		expect([grid.width, grid.height, grid.cellSize]).toEqual([5, 5, 60]);
		expect(sum(grid.mass)).toBeCloseTo(1, 12);
	});

	it('refuses more cells than the limit, and a bad cell size', async () => {
		const d = new Float32Array(100).fill(1);
		// 1 m asked for 30 m pixels on a 300 m square: the pixel rule gives 30 m; a 1-cell limit still refuses.
		await expect(build(band({ width: 10, height: 10, data: d }), { cellSize: 31, maxCells: 50 })).rejects.toThrow(WorkingGridError);
		await expect(build(band({ width: 10, height: 10, data: d }), { cellSize: -3 })).rejects.toThrow(/cell size/);
	});
});

describe('the working grid from WGS 84 into UTM', () => {
	// 0.001° pixels around 15.5°E 48.2°N (about 74 m × 111 m)
	const w = 120;
	const h = 80;
	const geo = (data: Float32Array) =>
		band({ width: w, height: h, data, epsg: 4326, transform: [15.44, 0.001, 0, 48.24, 0, -0.001] });

	it('chooses UTM 33N, square cells ≈ the pixel size, and a lattice accurate to < 0.05 cell', async () => {
		const data = new Float32Array(w * h).fill(1);
		const res = await build(geo(data));
		expect(res.epsg).toBe(32633);
		// pixel area: 0.001° lon × 0.001° lat at 48.2°N ≈ 74.2 m × 111.2 m → sqrt ≈ 90.9 m
		expect(res.grid.cellSize).toBeGreaterThan(88);
		expect(res.grid.cellSize).toBeLessThan(93);
		expect(res.latticeError).toBeLessThan(0.05);
	});

	it('a bright block keeps its position: the mass centroid is within a cell of the block centre', async () => {
		const data = new Float32Array(w * h);
		for (let r = 30; r < 40; r++) for (let c = 70; c < 90; c++) data[r * w + c] = 2;
		const raster = geo(data);
		const { grid } = await build(raster);
		let mx = 0;
		let my = 0;
		for (let r = 0; r < grid.height; r++)
			for (let c = 0; c < grid.width; c++) {
				const m = grid.mass[r * grid.width + c];
				mx += m * (grid.x0 + (c + 0.5) * grid.cellSize);
				my += m * (grid.y0 - (r + 0.5) * grid.cellSize);
			}
		const [lon, lat] = pixelToCrs(raster.transform, 80, 35);
		const [ex, ey] = transformer(4326, 32633).forward(lon, lat);
		expect(Math.hypot(mx - ex, my - ey)).toBeLessThan(grid.cellSize);
		expect(sum(grid.mass)).toBeCloseTo(1, 12);
	});

	it('an explicit working CRS override wins (EPSG:3035)', async () => {
		const res = await build(geo(new Float32Array(w * h).fill(1)), { crs: 'EPSG:3035' });
		expect(res.epsg).toBe(3035);
		expect(res.grid.crs).toBe('EPSG:3035');
	});

	it('cells outside the study area or inside an exclusion get mass 0 and feasible 0', async () => {
		const raster = geo(new Float32Array(w * h).fill(1));
		const study: Ring[] = [[[15.45, 48.17], [15.54, 48.17], [15.54, 48.23], [15.45, 48.23]]];
		const hole: Ring[] = [[[15.48, 48.19], [15.5, 48.19], [15.5, 48.21], [15.48, 48.21]]];
		const full = await build(raster, { studyArea: [study] });
		const cut = await build(raster, { studyArea: [study], exclusions: [hole] });
		const fwd = transformer(4326, 32633).forward;
		const area = (ring: Ring) => {
			const p = ring.map(([lo, la]) => fwd(lo, la));
			let s = 0;
			for (let i = 0; i < p.length; i++) {
				const [x1, y1] = p[i];
				const [x2, y2] = p[(i + 1) % p.length];
				s += x1 * y2 - x2 * y1;
			}
			return Math.abs(s) / 2;
		};
		const cell2 = full.grid.cellSize ** 2;
		// feasible cells ≈ polygon area / cell area (within the perimeter's half-cell band)
		expect(Math.abs(sum(full.grid.feasible) * cell2 - area(study[0])) / area(study[0])).toBeLessThan(0.05);
		const removed = sum(full.grid.feasible) - sum(cut.grid.feasible);
		expect(Math.abs(removed * cell2 - area(hole[0])) / area(hole[0])).toBeLessThan(0.25);
		// Cells whose centre lies more than a cell outside the study area or inside the exclusion hold
		// no mass and are not feasible (edge cells keep the allowed share: aggregate.test.ts checks those).
		const g = cut.grid;
		const toLonLat = transformer(32633, 4326).forward;
		const margin = [0.0015, 0.001]; // degrees: a cell (≈ 91 m) and more, in lon and lat
		let checked = 0;
		for (let i = 0; i < g.mass.length; i++) {
			const [lon, lat] = toLonLat(g.x0 + ((i % g.width) + 0.5) * g.cellSize, g.y0 - (Math.floor(i / g.width) + 0.5) * g.cellSize);
			const outside = lon < 15.45 - margin[0] || lon > 15.54 + margin[0] || lat < 48.17 - margin[1] || lat > 48.23 + margin[1];
			const inHole = lon > 15.48 + margin[0] && lon < 15.5 - margin[0] && lat > 48.19 + margin[1] && lat < 48.21 - margin[1];
			if (!outside && !inHole) continue;
			checked++;
			expect([g.mass[i], g.feasible[i]]).toEqual([0, 0]);
		}
		expect(checked).toBeGreaterThan(0);
		expect(sum(cut.grid.mass)).toBeCloseTo(1, 12);
		// the study area clips the grid's extent
		expect(full.grid.width * full.grid.height).toBeLessThan(w * h * 1.2);
	});

	it('a study area of two overlapping polygons is their union (not an even-odd cancellation)', async () => {
		const raster = geo(new Float32Array(w * h).fill(1));
		const a: Ring[] = [[[15.45, 48.17], [15.5, 48.17], [15.5, 48.22], [15.45, 48.22]]];
		const b: Ring[] = [[[15.48, 48.17], [15.53, 48.17], [15.53, 48.22], [15.48, 48.22]]];
		const both = await build(raster, { studyArea: [a, b] });
		const g = both.grid;
		const [x, y] = transformer(4326, 32633).forward(15.49, 48.195); // in the overlap
		const c = Math.floor((x - g.x0) / g.cellSize);
		const r = Math.floor((g.y0 - y) / g.cellSize);
		expect(g.feasible[r * g.width + c]).toBe(1);
	});

	it('refuses a study area that misses the raster', async () => {
		const raster = geo(new Float32Array(w * h).fill(1));
		const far: Ring[] = [[[16.5, 48], [16.6, 48], [16.6, 48.1], [16.5, 48.1]]];
		await expect(build(raster, { studyArea: [far] })).rejects.toThrow(/does not overlap/);
	});
});

describe('the working grid from EASE-Grid 2.0 (a SMAP-like 9 km raster)', () => {
	it('goes to UTM, and an equal-area pixel keeps its ground area: cell ≈ 9008 m', async () => {
		// EASE2 9 km cell: 9008.05521 m (NSIDC EASE2_M09km grid definition) [S: seen in stored public copies].
		// EPSG:6933 is equal-area, so sqrt(pixel area) is the ground size; UTM's k² changes it < 0.1 %.
		const size = 9008.05521;
		const [x0, y0] = transformer(4326, 6933).forward(15.5, 48.5);
		const raster = band({ width: 12, height: 8, data: new Float32Array(96).fill(0.3), epsg: 6933, transform: [x0, size, 0, y0, 0, -size] });
		const res = await build(raster);
		expect(res.epsg).toBe(32633);
		expect(Math.abs(res.grid.cellSize - size) / size).toBeLessThan(0.002);
		expect(res.latticeError).toBeLessThan(0.05);
	});
});

