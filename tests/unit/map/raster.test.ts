import { describe, expect, it } from 'vitest';
import proj4 from 'proj4';
import { PNG } from 'pngjs';
import { coarsen, fillGaps, MapRasterError, rasterBounds, resampleToMap, valueRange, type MapRaster } from '../../../src/lib/map/raster';
import { contourLevels, contourLines } from '../../../src/lib/map/contours';
import { boundsOf, padBounds, unionBounds } from '../../../src/lib/geo/geometry';
import { asMultiPolygon } from '../../../src/lib/geo/polygons';
import { decideWorkingCrs } from '../../../src/lib/geo/crs';
import { rampPng } from '../../../src/lib/server/layers/preview';
import { rampColour } from '../../../src/lib/importance/colour-ramp';

/** A cone of height `h` at the centre of a square grid of n cells of `cell` metres. */
function cone(n: number, cell: number, h: number, x0 = 500000, y0 = 5800000): MapRaster {
	const values = new Float64Array(n * n);
	const cx = x0 + (n * cell) / 2;
	const cy = y0 - (n * cell) / 2;
	for (let r = 0; r < n; r++) {
		for (let c = 0; c < n; c++) {
			const x = x0 + (c + 0.5) * cell;
			const y = y0 - (r + 0.5) * cell;
			values[r * n + c] = h - Math.hypot(x - cx, y - cy);
		}
	}
	return { x0, y0, dx: cell, dy: cell, width: n, height: n, values };
}

describe('contourLines', () => {
	it('contourLines(cone) at level v is a closed circle of radius h − v about the apex', () => {
		// A cone h − d has its level-v set at distance exactly h − v (geometry, no source needed).
		// Linear interpolation between cell centres is exact along the axes only; elsewhere it
		// errs by a fraction of a cell: allow 0.1 cell.
		const n = 100;
		const cell = 10;
		const r = cone(n, cell, 500);
		const [c300] = contourLines(r, [300]);
		expect(c300.level).toBe(300);
		expect(c300.lines).toHaveLength(1);
		const line = c300.lines[0];
		expect(line[0]).toEqual(line[line.length - 1]);
		const cx = 500000 + 500;
		const cy = 5800000 - 500;
		for (const [x, y] of line) expect(Math.abs(Math.hypot(x - cx, y - cy) - 200)).toBeLessThan(0.1 * cell);
		expect(line.length).toBeGreaterThan(50);
	});

	it('several levels give nested circles with the level values kept', () => {
		const r = cone(60, 5, 150);
		const out = contourLines(r, [50, 100]);
		expect(out.map((c) => c.level)).toEqual([50, 100]);
		const cx = 500000 + 150;
		const cy = 5800000 - 150;
		const meanRadius = (line: [number, number][]) => line.reduce((s, [x, y]) => s + Math.hypot(x - cx, y - cy), 0) / line.length;
		expect(meanRadius(out[0].lines[0])).toBeCloseTo(100, 0);
		expect(meanRadius(out[1].lines[0])).toBeCloseTo(50, 0);
	});

	it('a ramp v = column gives one straight line at the level, without the grid-edge closure', () => {
		// Values at cell centres x0 + (c + 0.5)·dx; v = 2.5 lies halfway between columns 2 and 3,
		// at x0 + 3·dx. Nothing is known beyond the outer cell centres: the line spans them only.
		const w = 6;
		const h = 4;
		const r: MapRaster = { x0: 100, y0: 40, dx: 10, dy: 10, width: w, height: h, values: Float64Array.from({ length: w * h }, (_, i) => i % w) };
		const [c] = contourLines(r, [2.5]);
		expect(c.lines).toHaveLength(1);
		for (const [x, y] of c.lines[0]) {
			expect(x).toBeCloseTo(130, 9);
			expect(y).toBeGreaterThanOrEqual(40 - (h - 0.5) * 10);
			expect(y).toBeLessThanOrEqual(40 - 0.5 * 10);
		}
		const ys = c.lines[0].map((p) => p[1]);
		expect(Math.max(...ys) - Math.min(...ys)).toBeCloseTo((h - 1) * 10, 9);
	});

	it('draws no false line around cells without a value, and none through them', () => {
		// A constant surface with a hole: no contour at all (the hole is filled, not a pit).
		const flat: MapRaster = { x0: 0, y0: 10, dx: 1, dy: 1, width: 10, height: 10, values: new Float64Array(100).fill(1) };
		for (let j = 3; j < 6; j++) for (let i = 3; i < 6; i++) flat.values[j * 10 + i] = NaN;
		expect(contourLines(flat, [0.5])).toEqual([]);
		// A ramp whose level-4.5 line would cross the hole: it is cut there.
		const ramp: MapRaster = { ...flat, values: Float64Array.from({ length: 100 }, (_, k) => k % 10) };
		for (let j = 3; j < 6; j++) for (let i = 3; i < 7; i++) ramp.values[j * 10 + i] = NaN;
		const [c] = contourLines(ramp, [4.5]);
		expect(c.lines).toHaveLength(2);
		// Hole rows 3–5 have their cell centres at y = 6.5, 5.5, 4.5; a kept piece may reach half
		// a cell into the hole from either side, never further.
		const ys = c.lines.flat().map(([, y]) => y);
		expect(ys.some((y) => y > 4.5 + 1e-9 && y < 6.5 - 1e-9)).toBe(false);
		expect(ys.some((y) => y > 7)).toBe(true);
		expect(ys.some((y) => y < 4)).toBe(true);
	});

	it('levels above the maximum give no line; no levels or no values give nothing', () => {
		const r = cone(20, 1, 5);
		expect(contourLines(r, [99])).toEqual([]);
		expect(contourLines(r, [])).toEqual([]);
		expect(contourLines({ ...r, values: new Float64Array(400).fill(NaN) }, [1])).toEqual([]);
	});
});

describe('fillGaps', () => {
	it('fills holes from their neighbours and answers null when nothing has a value', () => {
		const r: MapRaster = { x0: 0, y0: 3, dx: 1, dy: 1, width: 3, height: 3, values: Float64Array.from([2, 2, 2, 2, NaN, 2, 2, 2, NaN]) };
		expect(Array.from(fillGaps(r)!)).toEqual(new Array(9).fill(2));
		expect(Number.isNaN(r.values[4])).toBe(true);
		expect(fillGaps({ ...r, values: new Float64Array(9).fill(NaN) })).toBeNull();
	});
});

describe('contourLevels', () => {
	it('contourLevels(0, 1, 4) are the interior fifths', () => {
		expect(contourLevels(0, 1, 4)).toEqual([0.2, 0.4, 0.6, 0.8]);
	});
	it('a constant surface has no contour levels; a bad count is refused', () => {
		expect(contourLevels(0.3, 0.3)).toEqual([]);
		expect(() => contourLevels(0, 1, 0)).toThrow(RangeError);
	});
});

describe('coordinates and bounds', () => {
	it('boundsOf, unionBounds and padBounds', () => {
		expect(boundsOf([[1, 2]], [[[[3, -1], [0, 5], [2, 2]]]])).toEqual([0, -1, 3, 5]);
		expect(boundsOf([])).toBeNull();
		expect(boundsOf([[NaN, 1]])).toBeNull();
		expect(unionBounds(null, [0, 0, 1, 1], [2, -1, 3, 0])).toEqual([0, -1, 3, 1]);
		expect(unionBounds(null)).toBeNull();
		expect(padBounds([0, 0, 100, 50], 0.1)).toEqual([-10, -10, 110, 60]);
		expect(padBounds([5, 5, 5, 5], 0.1, 50)).toEqual([-45, -45, 55, 55]);
	});

	it('asMultiPolygon reads Polygon, MultiPolygon, Feature and FeatureCollection as one MultiPolygon', () => {
		const sq = [
			[0, 0],
			[1, 0],
			[1, 1],
			[0, 1],
			[0, 0]
		];
		expect(asMultiPolygon({ type: 'Polygon', coordinates: [sq] })).toEqual({ type: 'MultiPolygon', coordinates: [[sq]] });
		expect(asMultiPolygon({ type: 'MultiPolygon', coordinates: [[sq], [sq]] })?.coordinates).toHaveLength(2);
		expect(asMultiPolygon({ type: 'FeatureCollection', features: [{ type: 'Feature', geometry: { type: 'Polygon', coordinates: [sq] } }, { type: 'Feature', geometry: { type: 'Polygon', coordinates: [sq] } }] })?.coordinates).toHaveLength(2);
		expect(asMultiPolygon(null)).toBeNull();
		expect(asMultiPolygon({ type: 'Point', coordinates: [0, 0] })).toBeNull();
	});
});

describe('resampleToMap', () => {
	const grid = { epsg: 32632, width: 4, height: 2, x0: 1000, y0: 2000, dx: 10, dy: 10 };
	const data = [1, 2, 3, 4, 5, 6, 7, NaN];

	it('in the same CRS keeps the grid and its bounds when small enough', () => {
		const r = resampleToMap({ grid, data }, 32632, 512);
		expect(r.width).toBe(4);
		expect(r.height).toBe(2);
		expect(rasterBounds(r)).toEqual([1000, 1980, 1040, 2000]);
		expect(Array.from(r.values.slice(0, 7))).toEqual([1, 2, 3, 4, 5, 6, 7]);
		expect(Number.isNaN(r.values[7])).toBe(true);
	});

	it('in the same CRS halves a grid to maxSize on the longer side, keeping its bounds', () => {
		const r = resampleToMap({ grid, data }, 32632, 2);
		expect([r.width, r.height]).toEqual([2, 1]);
		expect(rasterBounds(r)).toEqual([1000, 1980, 1040, 2000]);
	});

	it('from geographic lon/lat into UTM puts each value where proj4 says', () => {
		// A 1°×1° lon/lat grid of 10×10 cells whose value is its column index; sample the output
		// back: the value at a UTM point is the column of proj4's inverse of that point.
		const g = { epsg: 4326, width: 10, height: 10, x0: 8.5, y0: 52.5, dx: 0.1, dy: 0.1, units: 'degree' as const };
		const d = new Float64Array(100).map((_, i) => i % 10);
		const r = resampleToMap({ grid: g, data: d }, 32632, 64);
		const utm = '+proj=utm +zone=32 +datum=WGS84 +units=m +no_defs';
		let checked = 0;
		for (let k = 0; k < r.width * r.height; k++) {
			const c = k % r.width;
			const row = Math.floor(k / r.width);
			const [lon, lat] = proj4(utm, 'EPSG:4326', [r.x0 + (c + 0.5) * r.dx, r.y0 - (row + 0.5) * r.dy]);
			const v = r.values[k];
			if (lon < 8.5 || lon >= 9.5 || lat <= 51.5 || lat > 52.5) expect(Number.isNaN(v)).toBe(true);
			else {
				expect(v).toBe(Math.floor((lon - 8.5) / 0.1));
				checked++;
			}
		}
		expect(checked).toBeGreaterThan(50);
	});

	it('refuses a grid whose values do not match its size', () => {
		expect(() => resampleToMap({ grid, data: [1, 2] }, 32632)).toThrow(MapRasterError);
		expect(() => resampleToMap({ grid: { ...grid, width: 0 }, data: [] }, 32632)).toThrow(MapRasterError);
	});
});

describe('valueRange, coarsen and the ramp image', () => {
	it('valueRange skips NaN and answers null for an all-empty raster', () => {
		expect(valueRange([NaN, 3, -1, Infinity])).toEqual({ min: -1, max: 3 });
		expect(valueRange([NaN])).toBeNull();
	});

	it('coarsen box-averages and keeps the upper-left corner', () => {
		const r: MapRaster = { x0: 0, y0: 4, dx: 1, dy: 1, width: 4, height: 4, values: Float64Array.from({ length: 16 }, (_, i) => i) };
		const c = coarsen(r, 2);
		expect([c.width, c.height, c.dx, c.dy, c.x0, c.y0]).toEqual([2, 2, 2, 2, 0, 4]);
		expect(Array.from(c.values)).toEqual([2.5, 4.5, 10.5, 12.5]);
		expect(coarsen(r, 8).values).not.toBe(r.values);
	});

	it('rampPng colours min with the ramp start, max with its end, no value transparent', () => {
		const r: MapRaster = { x0: 0, y0: 1, dx: 1, dy: 1, width: 3, height: 1, values: Float64Array.from([0, 1, NaN]) };
		const png = PNG.sync.read(rampPng(r.values, r.width, r.height, 0, 1, 'moorland'));
		expect([png.width, png.height]).toEqual([3, 1]);
		expect(Array.from(png.data.slice(0, 4))).toEqual([...rampColour(0), 255]);
		expect(Array.from(png.data.slice(4, 8))).toEqual([...rampColour(1), 255]);
		expect(png.data[11]).toBe(0);
	});
});

describe('decideWorkingCrs (the one working-CRS rule)', () => {
	it('an explicit projected working CRS wins', () => {
		expect(decideWorkingCrs({ explicit: 32633, gridEpsg: 32632, centreLonLat: [9, 52] })).toBe(32633);
	});
	it('else the grid CRS when it has ground metres; else the UTM zone of the centre', () => {
		expect(decideWorkingCrs({ gridEpsg: 32632, centreLonLat: [9, 52] })).toBe(32632);
		expect(decideWorkingCrs({ gridEpsg: 3035, centreLonLat: [9, 52] })).toBe(3035);
		// 3857 is not a working CRS: the centre 9°E 52°N lies in UTM zone 32N (zone 32 spans 6°E–12°E).
		expect(decideWorkingCrs({ gridEpsg: 3857, centreLonLat: [9, 52] })).toBe(32632);
		expect(decideWorkingCrs({ gridEpsg: null, centreLonLat: [-3.2, 55.9] })).toBe(32630);
		// A geographic explicit CRS is refused, never silently replaced.
		expect(() => decideWorkingCrs({ explicit: 4326, centreLonLat: [9, 52] })).toThrow(/geographic/);
	});
	it('nothing with a position gives no working CRS', () => {
		expect(decideWorkingCrs({})).toBeNull();
		expect(decideWorkingCrs({ gridEpsg: 4326 })).toBeNull();
	});
});
