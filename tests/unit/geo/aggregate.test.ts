import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import proj4 from 'proj4';
import { afterAll, describe, expect, it } from 'vitest';
import { aggregateToWorkingGrid, blockAverage, FEASIBLE_SHARE } from '../../../src/lib/geo/aggregate';
import { openGeoTiff, readGeoTiff } from '../../../src/lib/geo/geotiff';
import { encodeTiff } from '../../../src/bench/support/tiff-writer';
import { place, zoneGrid } from '../../../src/lib/engine';
import { rasterizeZones } from '../../../src/lib/engine/rasterize';
import { projectRings } from '../../../src/lib/geo/geojson';
import { transformer } from '../../../src/lib/geo/crs';
import { insideRing } from '../../helpers/even-odd';

const UTM33 = '+proj=utm +zone=33 +datum=WGS84 +units=m +no_defs';
const UTM_KEYS: Array<[number, number]> = [[1024, 1], [1025, 1], [3072, 32633]];
const GEO_KEYS: Array<[number, number]> = [[1024, 2], [1025, 1], [2048, 4326]];
const dir = mkdtempSync(join(tmpdir(), 'cf-aggregate-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** A smooth, positive test surface on [0,1]². */
const surface = (x: number, y: number) => 0.2 + Math.exp(-((x - 0.3) ** 2 + (y - 0.6) ** 2) / 0.05) + 0.3 * Math.sin(5 * x) ** 2;

function raster(width: number, height: number, value: (c: number, r: number) => number): Float32Array {
	const data = new Float32Array(width * height);
	for (let r = 0; r < height; r++) for (let c = 0; c < width; c++) data[r * width + c] = value(c, r);
	return data;
}

function tiff(width: number, height: number, data: Float32Array, geo: { tiepoint: number[]; pixelScale: number[]; geoKeys: Array<[number, number]> }, tiles = false): ArrayBuffer {
	return encodeTiff({ width, height, bands: [data], sampleFormat: 3, bitsPerSample: 32, geo, nodata: '-9999', layout: tiles ? { kind: 'tiles', tileWidth: 64, tileHeight: 64 } : { kind: 'strips', rowsPerStrip: 7 } });
}

/** UTM 33N raster of 10 m pixels with its outer upper-left corner at (500 000, 5 400 000). */
const X0 = 500_000;
const Y0 = 5_400_000;
const utmGeo = { tiepoint: [0, 0, 0, X0, Y0, 0], pixelScale: [10, 10, 0], geoKeys: UTM_KEYS };

const hasGdal = spawnSync('gdalwarp', ['--version']).status === 0;

describe('aggregateToWorkingGrid in the raster’s own CRS (cells of whole pixels)', () => {
	const W = 200;
	const H = 120;
	const data = raster(W, H, (c, r) => (c < 30 && r < 20 ? -9999 : surface(c / W, r / H)));
	const buf = tiff(W, H, data, utmGeo);

	it('each cell holds exactly the mass of its 4 × 4 pixels (brute-force sum of value × 100 m²)', async () => {
		const res = await aggregateToWorkingGrid(await openGeoTiff(buf), { cellSize: 40 });
		const { grid } = res;
		expect([grid.width, grid.height, grid.x0, grid.y0, grid.cellSize]).toEqual([50, 30, X0, Y0, 40]);
		let worst = 0;
		for (let cr = 0; cr < grid.height; cr++) {
			for (let cc = 0; cc < grid.width; cc++) {
				let sum = 0;
				for (let r = cr * 4; r < cr * 4 + 4; r++) for (let c = cc * 4; c < cc * 4 + 4; c++) if (data[r * W + c] !== -9999) sum += data[r * W + c] * 100;
				const got = grid.mass[cr * grid.width + cc] * res.integral;
				worst = Math.max(worst, Math.abs(got - sum) / Math.max(sum, 1e-12));
			}
		}
		expect(worst).toBeLessThan(1e-9);
		expect(res.cellSize.rule).toBe('requested');
		expect(res.subsamples).toBe(1);
	});

	it('zone integrals are preserved exactly for zones of whole cells (engine zoneGrid, 5 × 3 zones)', async () => {
		const res = await aggregateToWorkingGrid(await openGeoTiff(buf), { cellSize: 40 });
		const zones = zoneGrid(res.grid, 5, 3);
		for (let z = 0; z < zones.ids.length; z++) {
			let coarse = 0;
			let fine = 0;
			for (let i = 0; i < zones.cellZone.length; i++) if (zones.cellZone[i] === z) coarse += res.grid.mass[i] * res.integral;
			for (let r = 0; r < H; r++) {
				for (let c = 0; c < W; c++) {
					const v = data[r * W + c];
					if (v !== -9999 && zones.cellZone[Math.floor(r / 4) * res.grid.width + Math.floor(c / 4)] === z) fine += v * 100;
				}
			}
			expect(Math.abs(coarse - fine) / fine).toBeLessThan(1e-3); // the 0.1 % of the requirement
		}
	});

	it('nodata at the coarse scale: a cell keeps the mass of its valid part; under half valid is not feasible', async () => {
		// Cell (0,0) has 10 of its 16 pixels nodata, cell (1,0) 8 of 16, cell (0,1) none.
		const small = raster(8, 8, () => 1);
		for (const [c, r] of [[0, 0], [1, 0], [2, 0], [3, 0], [0, 1], [1, 1], [2, 1], [3, 1], [0, 2], [1, 2]]) small[r * 8 + c] = -9999;
		for (let r = 0; r < 2; r++) for (let c = 4; c < 8; c++) small[r * 8 + c] = -9999;
		const res = await aggregateToWorkingGrid(await openGeoTiff(tiff(8, 8, small, utmGeo)), { cellSize: 40 });
		const m = Array.from(res.grid.mass, (v) => Math.round(v * res.integral));
		expect(m).toEqual([600, 800, 1600, 1600]); // value 1 × 100 m² a valid pixel
		expect(Array.from(res.grid.feasible)).toEqual([0, 1, 1, 1]);
		expect(FEASIBLE_SHARE).toBe(0.5);
	});

	it('exclusions at the coarse scale: half a cell excluded halves its mass and keeps it feasible; three quarters do not', async () => {
		const ones = raster(8, 8, () => 1);
		const toLonLat = transformer(32633, 4326).forward;
		const box = (x0: number, y0: number, x1: number, y1: number) => [[[x0, y0], [x1, y0], [x1, y1], [x0, y1], [x0, y0]].map(([x, y]) => toLonLat(x, y))];
		// Cell (0,1) spans x 0–40 m, y −80…−40 m from the corner; cell (1,1) x 40–80 m.
		const exclusions = [box(X0 - 10, Y0 - 90, X0 + 20, Y0 - 40), box(X0 + 50, Y0 - 90, X0 + 90, Y0 - 40)];
		const res = await aggregateToWorkingGrid(await openGeoTiff(tiff(8, 8, ones, utmGeo)), { cellSize: 40, exclusions });
		const m = Array.from(res.grid.mass, (v) => Math.round(v * res.integral));
		expect(m).toEqual([1600, 1600, 800, 400]);
		expect(Array.from(res.grid.feasible)).toEqual([1, 1, 1, 0]);
	});

	it.skipIf(!hasGdal)('matches gdalwarp -r average onto the same 40 m grid (GDAL 3.6, Debian gdal-bin)', async () => {
		const src = join(dir, 'utm.tif');
		const out = join(dir, 'utm-avg.tif');
		writeFileSync(src, new Uint8Array(buf));
		const r = spawnSync('gdalwarp', ['-q', '-overwrite', '-r', 'average', '-tr', '40', '40', '-te', String(X0), String(Y0 - 1200), String(X0 + 2000), String(Y0), src, out], { encoding: 'utf8' });
		expect(r.status, r.stderr).toBe(0);
		const ref = await readGeoTiff(readFileSync(out).buffer as ArrayBuffer);
		const res = await aggregateToWorkingGrid(await openGeoTiff(buf), { cellSize: 40 });
		expect([ref.width, ref.height]).toEqual([res.grid.width, res.grid.height]);
		let compared = 0;
		for (let i = 0; i < ref.data.length; i++) {
			const gdal = ref.data[i];
			if (ref.nodata !== null && gdal === Math.fround(ref.nodata)) {
				expect(res.validArea[i]).toBe(0); // GDAL has no value exactly where no pixel was valid
				continue;
			}
			const ours = (res.grid.mass[i] * res.integral) / res.validArea[i];
			expect(Math.abs(ours - gdal) / gdal).toBeLessThan(1e-5);
			compared++;
		}
		expect(compared).toBeGreaterThan(1400);
	});
});

describe('aggregateToWorkingGrid from a geographic raster into UTM', () => {
	// Pixels of 0.0002° from 15.2° E 48.3° N (about 15 m × 22 m each), tiled; the top 3 rows nodata.
	const LON0 = 15.2;
	const LAT0 = 48.3;
	const D = 0.0002;
	function geographic(W: number, H: number) {
		const data = raster(W, H, (c, r) => (r < 3 ? -9999 : surface(c / W, r / H)));
		const buf = tiff(W, H, data, { tiepoint: [0, 0, 0, LON0, LAT0, 0], pixelScale: [D, D, 0], geoKeys: GEO_KEYS }, true);
		return { W, H, data, buf };
	}
	const { buf } = geographic(400, 300);

	/** Full-resolution reference: each valid pixel's value × its UTM area (shoelace of its 4 projected corners, proj4). */
	function reference(W: number, H: number, data: Float32Array) {
		const toUtm = proj4('EPSG:4326', UTM33);
		const cx = new Float64Array((W + 1) * (H + 1));
		const cy = new Float64Array((W + 1) * (H + 1));
		for (let r = 0; r <= H; r++) {
			for (let c = 0; c <= W; c++) {
				const [x, y] = toUtm.forward([LON0 + c * D, LAT0 - r * D]);
				cx[r * (W + 1) + c] = x;
				cy[r * (W + 1) + c] = y;
			}
		}
		const mass = new Float64Array(W * H);
		const centres: [number, number][] = [];
		for (let r = 0; r < H; r++) {
			for (let c = 0; c < W; c++) {
				const k = [r * (W + 1) + c, r * (W + 1) + c + 1, (r + 1) * (W + 1) + c + 1, (r + 1) * (W + 1) + c];
				let a = 0;
				for (let j = 0; j < 4; j++) a += cx[k[j]] * cy[k[(j + 1) % 4]] - cx[k[(j + 1) % 4]] * cy[k[j]];
				const v = data[r * W + c];
				mass[r * W + c] = v === -9999 ? 0 : v * Math.abs(a / 2);
				centres.push([LON0 + (c + 0.5) * D, LAT0 - (r + 0.5) * D]);
			}
		}
		return { mass, centres };
	}
	const inside = (p: readonly number[], ring: readonly (readonly number[])[]) => insideRing(p[0], p[1], ring);

	it('keeps the whole integral, and each of four slanted zones within 0.1 % (reference: proj4 pixel areas)', async () => {
		// Zones of about 75 000 cells each: their edge cells are what the 0.1 % allows for.
		const big = geographic(900, 700);
		const ref = reference(big.W, big.H, big.data);
		const res = await aggregateToWorkingGrid(await openGeoTiff(big.buf), { cellSize: 30 });
		const total = ref.mass.reduce((a, b) => a + b, 0);
		expect(Math.abs(res.integral - total) / total).toBeLessThan(1e-3);
		// Quadrants split at a slanted line and a bent one, reaching well past the raster.
		const mid = [LON0 + 0.091, LAT0 - 0.069];
		const far = 1;
		const zones = [
			{ id: 'nw', ring: [[LON0 - far, LAT0 + far], [LON0 + 0.08, LAT0 + far], mid, [LON0 - far, LAT0 - 0.06]] },
			{ id: 'ne', ring: [[LON0 + 0.08, LAT0 + far], [LON0 + far, LAT0 + far], [LON0 + far, LAT0 - 0.075], mid] },
			{ id: 'se', ring: [mid, [LON0 + far, LAT0 - 0.075], [LON0 + far, LAT0 - far], [LON0 + 0.1, LAT0 - far]] },
			{ id: 'sw', ring: [[LON0 - far, LAT0 - 0.06], mid, [LON0 + 0.1, LAT0 - far], [LON0 - far, LAT0 - far]] }
		].map((z) => ({ id: z.id, ring: [...z.ring, z.ring[0]] as [number, number][] }));
		const toWork = transformer(4326, 32633).forward;
		const map = rasterizeZones(res.grid, zones.map((z) => ({ id: z.id, rings: projectRings([z.ring], toWork, 120) })));
		for (let z = 0; z < zones.length; z++) {
			let fine = 0;
			for (let i = 0; i < ref.mass.length; i++) if (ref.mass[i] > 0 && inside(ref.centres[i], zones[z].ring)) fine += ref.mass[i];
			let coarse = 0;
			for (let i = 0; i < map.cellZone.length; i++) if (map.cellZone[i] === z) coarse += res.grid.mass[i] * res.integral;
			expect(Math.abs(coarse - fine) / fine, zones[z].id).toBeLessThan(1e-3);
		}
	});

	it('a study area with an exclusion keeps the integral of the ground left, within 0.1 %', async () => {
		const ref = reference(400, 300, geographic(400, 300).data);
		const study = [[LON0 + 0.01, LAT0 - 0.005], [LON0 + 0.07, LAT0 - 0.012], [LON0 + 0.062, LAT0 - 0.052], [LON0 + 0.004, LAT0 - 0.045], [LON0 + 0.01, LAT0 - 0.005]] as [number, number][];
		const lake = [[LON0 + 0.03, LAT0 - 0.02], [LON0 + 0.045, LAT0 - 0.021], [LON0 + 0.04, LAT0 - 0.034], [LON0 + 0.03, LAT0 - 0.02]] as [number, number][];
		const res = await aggregateToWorkingGrid(await openGeoTiff(buf), { cellSize: 30, studyArea: [[study]], exclusions: [[lake]] });
		let fine = 0;
		for (let i = 0; i < ref.mass.length; i++) if (inside(ref.centres[i], study) && !inside(ref.centres[i], lake)) fine += ref.mass[i];
		expect(Math.abs(res.integral - fine) / fine).toBeLessThan(1e-3);
		// Cells wholly outside the allowed ground (all four corners outside the study area, or all in
		// the lake) are not feasible; cells wholly inside it (and on valid data) are.
		const toLonLat = transformer(32633, 4326).forward;
		const { grid } = res;
		let inner = 0;
		let outer = 0;
		for (let i = 0; i < grid.feasible.length; i++) {
			const c = i % grid.width;
			const r = Math.floor(i / grid.width);
			const corners = [[0, 0], [1, 0], [1, 1], [0, 1]].map(([dc, dr]) => toLonLat(grid.x0 + (c + dc) * 30, grid.y0 - (r + dr) * 30));
			const allowed = corners.map((p) => inside(p, study) && !inside(p, lake));
			if (corners.every((p) => !inside(p, study)) || corners.every((p) => inside(p, lake))) {
				expect(grid.feasible[i]).toBe(0);
				outer++;
			} else if (allowed.every(Boolean) && res.validArea[i] > 0.999 * 900) {
				expect(grid.feasible[i]).toBe(1);
				inner++;
			}
		}
		expect(inner).toBeGreaterThan(1000);
		expect(outer).toBeGreaterThan(100);
	});

	it.skipIf(!hasGdal)('interior cells agree with gdalwarp -r average to UTM 33N on the same grid (GDAL 3.6, Debian gdal-bin)', async () => {
		const res = await aggregateToWorkingGrid(await openGeoTiff(buf), { cellSize: 60, crs: 'EPSG:32633' });
		const { grid } = res;
		const src = join(dir, 'geo.tif');
		const out = join(dir, 'geo-avg.tif');
		writeFileSync(src, new Uint8Array(buf));
		const te = [grid.x0, grid.y0 - grid.height * 60, grid.x0 + grid.width * 60, grid.y0].map(String);
		const r = spawnSync('gdalwarp', ['-q', '-overwrite', '-t_srs', 'EPSG:32633', '-r', 'average', '-tr', '60', '60', '-te', ...te, src, out], { encoding: 'utf8' });
		expect(r.status, r.stderr).toBe(0);
		const gdal = await readGeoTiff(readFileSync(out).buffer as ArrayBuffer);
		expect([gdal.width, gdal.height]).toEqual([grid.width, grid.height]);
		const diffs: number[] = [];
		for (let i = 0; i < gdal.data.length; i++) {
			// Interior: fully valid in ours (a whole cell of data) and a value in GDAL's.
			if (!(res.validArea[i] > 0.999 * 3600) || gdal.data[i] === Math.fround(gdal.nodata ?? NaN)) continue;
			const ours = (grid.mass[i] * res.integral) / res.validArea[i];
			diffs.push(Math.abs(ours - gdal.data[i]) / gdal.data[i]);
		}
		diffs.sort((a, b) => a - b);
		expect(diffs.length).toBeGreaterThan(1000);
		// Pixel centres (about 11 a cell here) against GDAL's area-weighted overlaps: on a smooth
		// surface the means differ by a fraction of a per cent, at most a couple.
		expect(diffs[Math.floor(diffs.length / 2)]).toBeLessThan(0.002);
		expect(diffs[diffs.length - 1]).toBeLessThan(0.02);
	});

	it('placing on the aggregated grid costs within 1 % of placing on the full-resolution grid', async () => {
		// Full resolution: cells of the pixel size itself; aggregated: 4 × coarser. The same 16
		// starting positions, Lloyd to convergence; both end positions are costed on the full grid.
		const full = await aggregateToWorkingGrid(await openGeoTiff(buf), { cellSize: 1 });
		const coarse = await aggregateToWorkingGrid(await openGeoTiff(buf), { cellSize: full.grid.cellSize * 4 });
		expect(full.cellSize.rule).toBe('pixel');
		const g = full.grid;
		const start = Array.from({ length: 16 }, (_, k) => ({
			id: `S${k}`,
			x: g.x0 + ((k % 4) + 0.5) * (g.width / 4) * g.cellSize,
			y: g.y0 - (Math.floor(k / 4) + 0.5) * (g.height / 4) * g.cellSize,
			radius: 2000,
			mobility: 'relocatable' as const
		}));
		const run = (grid: typeof g) => place(grid, null, start, { strategy: 'lloyd', maxIterations: 300, tolerance: 0.01 });
		const onFull = run(g);
		const onCoarse = run(coarse.grid);
		const costOnFull = (sensors: { x: number; y: number }[]) =>
			place(g, null, sensors.map((s, k) => ({ id: `S${k}`, x: s.x, y: s.y, radius: 2000, mobility: 'fixed' as const })), { strategy: 'lloyd', maxIterations: 0 }).cost;
		const a = costOnFull(onFull.sensors);
		const b = costOnFull(onCoarse.sensors);
		expect(Math.abs(b - a) / a).toBeLessThan(0.01);
	});
});

describe('blockAverage', () => {
	it('averages valid pixels over f × f blocks, nodata left out, partial blocks at the edges', async () => {
		const data = raster(5, 3, (c, r) => r * 5 + c);
		data[0] = -9999;
		const avg = await blockAverage(await openGeoTiff(tiff(5, 3, data, utmGeo)), 2);
		expect([avg.width, avg.height]).toEqual([3, 2]);
		// Blocks: {1,5,6} {2,3,7,8} {4,9} / {10,11} {12,13} {14}
		expect(Array.from(avg.data)).toEqual([4, 5, 6.5, 10.5, 12.5, 14]);
		expect(avg.transform).toEqual([X0, 20, 0, Y0, 0, -20]);
	});
});
