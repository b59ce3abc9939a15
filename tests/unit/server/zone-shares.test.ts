/**
 * Zone shares are measured on the aggregated working grid (zoneImportanceGrid: the placement run's
 * mass-preserving aggregation and cell-size rule), so each zone's importance is the surface's
 * integral over it.
 *
 * Oracle, computed here without the aggregation: a geographic (EPSG:4326) surface reprojected to
 * UTM 33N; each pixel's integral is its value × the area of its footprint in UTM metres (the
 * shoelace area of its four projected corners, proj4 for every corner), shared among the zones by
 * 4 × 4 points of the footprint (bilinear between the corners), so a pixel on a zone edge is split. The check: the integral over every zone is kept
 * within 0.1 % (zones made of whole working cells; their edges in WGS 84 are densified to ≤ 5 m so
 * that they come back onto the cell edges).
 */
import { describe, expect, it } from 'vitest';
import { rectToLonLat, zoneImportanceGrid, zoneShares, ZONE_CELL_BUDGET } from '../../../src/lib/server/services/zones';
import { chooseCellSize } from '../../../src/lib/geo/cell-size';
import { transformer } from '../../../src/lib/geo/crs';
import type { RasterBand } from '../../../src/lib/geo/geotiff';
import type { MultiPolygonGeometry } from '../../../src/lib/geo/polygons';

const W = 600;
const H = 600;
const STEP = 0.00002; // degrees: about 1.5 m × 2.2 m at 48.4° N
const LON0 = 12.5; // 2.5° west of the zone's central meridian: pixel columns cross UTM's grid lines
const LAT0 = 48.4;

function surface(): RasterBand {
	const data = new Float32Array(W * H);
	for (let r = 0; r < H; r++) {
		for (let c = 0; c < W; c++) {
			const x = c / W;
			const y = r / H;
			// Two bumps on a slope, and a band of no data (NaN) across the lower left.
			data[r * W + c] = r > 400 && c < 150 ? Number.NaN : 0.2 + Math.exp(-((x - 0.3) ** 2 + (y - 0.6) ** 2) / 0.02) + 0.5 * Math.sin(8 * x) ** 2;
		}
	}
	return {
		width: W,
		height: H,
		data,
		nodata: null,
		epsg: 4326,
		transform: [LON0, STEP, 0, LAT0, 0, -STEP],
		...{ bandCount: 1, band: 1, sampleFormat: 3, bitsPerSample: 32, compression: 1, tiled: false }
	};
}

describe('zone shares on the aggregated importance grid', () => {
	it('use the placement rule and aggregation, and keep every zone’s integral within 0.1 %', async () => {
		const band = surface();
		const grid = await zoneImportanceGrid(band, { crs: 32633 });
		const toUtm = transformer(4326, 32633).forward;
		const toLonLat = transformer(32633, 4326).forward;

		// The cell size is chooseCellSize's, with the zones' budget and no radius (the budget decides).
		const corners = [toUtm(LON0, LAT0), toUtm(LON0 + W * STEP, LAT0), toUtm(LON0, LAT0 - H * STEP), toUtm(LON0 + W * STEP, LAT0 - H * STEP)];
		const xs = corners.map((p) => p[0]);
		const ys = corners.map((p) => p[1]);
		const [a, b] = [toUtm(LON0 + (W / 2) * STEP, LAT0 - (H / 2) * STEP), toUtm(LON0 + (W / 2 + 1) * STEP, LAT0 - (H / 2 + 1) * STEP)];
		const rule = chooseCellSize({ pixelSize: Math.sqrt(Math.abs((b[0] - a[0]) * (b[1] - a[1]))), extentWidth: Math.max(...xs) - Math.min(...xs), extentHeight: Math.max(...ys) - Math.min(...ys), budget: ZONE_CELL_BUDGET });
		expect(rule.rule).toBe('budget');
		expect(grid.cellSize).toBeCloseTo(rule.cellSize, 6);
		expect(grid.width * grid.height).toBeLessThanOrEqual(ZONE_CELL_BUDGET);

		// Four zones of whole cells: columns split at 40 %, rows at 55 % (left) and 30 % (right).
		const { x0, y0, cellSize, width, height } = grid;
		const cx = Math.round(width * 0.4);
		const rowsLeft = Math.round(height * 0.55);
		const rowsRight = Math.round(height * 0.3);
		// The outer edges lie 10 cells beyond the grid, so that every cell is in a zone. (This test
		// found the rasteriser's lost crossing at a vertex on a centre line: see rasterize.test.ts.)
		const rects: [number, number, number, number][] = [
			[-10, -10, cx, rowsLeft],
			[-10, rowsLeft, cx, height + 10],
			[cx, -10, width + 10, rowsRight],
			[cx, rowsRight, width + 10, height + 10]
		].map(([c0, r0, c1, r1]) => [x0 + c0 * cellSize, y0 - r1 * cellSize, x0 + c1 * cellSize, y0 - r0 * cellSize]);
		const densified = ([minX, minY, maxX, maxY]: [number, number, number, number]): MultiPolygonGeometry => ({
			type: 'MultiPolygon',
			coordinates: [[rectToLonLat(minX, minY, maxX, maxY, toLonLat, Math.ceil(Math.max(maxX - minX, maxY - minY) / 5))]]
		});
		const shares = zoneShares(grid, rects.map(densified));

		// The oracle: every pixel's value × its UTM footprint, to the zone holding its centre.
		const integral = new Float64Array(rects.length);
		let total = 0;
		let prev = Array.from({ length: W + 1 }, (_, c) => toUtm(LON0 + c * STEP, LAT0));
		for (let r = 0; r < H; r++) {
			const next = Array.from({ length: W + 1 }, (_, c) => toUtm(LON0 + c * STEP, LAT0 - (r + 1) * STEP));
			for (let c = 0; c < W; c++) {
				const v = band.data[r * W + c];
				if (!(v >= 0)) continue;
				const q = [prev[c], prev[c + 1], next[c + 1], next[c]];
				let area2 = 0;
				for (let k = 0; k < 4; k++) area2 += q[k][0] * q[(k + 1) % 4][1] - q[(k + 1) % 4][0] * q[k][1];
				const m = v * Math.abs(area2 / 2);
				total += m;
				for (let i = 0; i < 4; i++) {
					for (let j = 0; j < 4; j++) {
						const s = (i + 0.5) / 4;
						const t = (j + 0.5) / 4;
						const px = (1 - t) * ((1 - s) * q[0][0] + s * q[1][0]) + t * ((1 - s) * q[3][0] + s * q[2][0]);
						const py = (1 - t) * ((1 - s) * q[0][1] + s * q[1][1]) + t * ((1 - s) * q[3][1] + s * q[2][1]);
						const z = rects.findIndex(([minX, minY, maxX, maxY]) => px >= minX && px < maxX && py >= minY && py < maxY);
						if (z >= 0) integral[z] += m / 16;
					}
				}
			}
			prev = next;
		}
		const errors = rects.map((_, z) => Math.abs(shares[z]! - integral[z] / total) / (integral[z] / total));
		expect(Math.max(...errors)).toBeLessThan(1e-3);
		expect(shares.reduce<number>((sum, v) => sum + (v ?? Number.NaN), 0)).toBeCloseTo(1, 9);
	});
});
