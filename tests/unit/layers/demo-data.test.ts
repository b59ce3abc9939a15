import { readFile, stat } from 'node:fs/promises';
import path from 'node:path';
import { Geodesic } from 'geographiclib-geodesic';
import { describe, expect, it } from 'vitest';
import { parsePolygonUpload, type PolygonFeature } from '../../../src/lib/geo/polygons';
import { alignToGrid, combineLayers } from '../../../src/lib/importance';
import { importSensorsCsv } from '../../../src/lib/server/inventory';
import { DEMO_SENSOR_TYPES, demoFiles, SAND_MOISTURE_BOUNDS } from '../../../src/lib/server/layers/demo-data';
import { loadLayer, toGridBand } from '../../../src/lib/server/layers';
import { insideRing } from '../../helpers/even-odd';

const DIR = path.resolve('data/demo');
const read = (name: string) => readFile(path.join(DIR, name));

/** Geodesic area on the WGS 84 ellipsoid by GeographicLib (a reference library): holes counted negative. */
function area(f: PolygonFeature): number {
	let total = 0;
	for (const poly of f.geometry.coordinates) {
		for (const ring of poly) {
			const p = Geodesic.WGS84.Polygon(false);
			for (const [lon, lat] of ring.slice(0, -1)) p.AddPoint(lat, lon);
			total += p.Compute(false, true).area ?? NaN; // signed: counter-clockwise positive
		}
	}
	return total;
}

/** Inside one of the exterior rings: enough for a sanity check of invented positions. */
function inside(lon: number, lat: number, f: PolygonFeature): boolean {
	return f.geometry.coordinates.some(([ring]) => insideRing(lon, lat, ring));
}

describe('demo data (data/demo)', () => {
	it('the committed files are exactly what the generator writes, and small', async () => {
		let total = 0;
		for (const f of demoFiles()) {
			const onDisk = await read(f.name);
			expect(Buffer.compare(onDisk, Buffer.from(f.bytes)), `${f.name} differs: rerun the generator`).toBe(0);
			total += (await stat(path.join(DIR, f.name))).size;
		}
		expect(total).toBeLessThan(300 * 1024);
	});

	it('soil moisture: 1 km cells, 40×30, EPSG:32754, within the sand range of FAO-56 Table 19 (0.02–0.17 m³/m³)', async () => {
		const { metadata } = await loadLayer(await read('soil-moisture.tif'), { name: 'soil-moisture.tif' });
		expect(metadata).toMatchObject({ width: 40, height: 30, epsg: 32754, resolution: { x: 1000, y: 1000 }, nodata: -9999 });
		expect(metadata.stats.min).toBeGreaterThanOrEqual(SAND_MOISTURE_BOUNDS.min);
		expect(metadata.stats.max).toBeLessThanOrEqual(SAND_MOISTURE_BOUNDS.max);
		expect(metadata.stats.validCount).toBeLessThan(1200); // reservoir cells are nodata
		expect(metadata.stats.std).toBeGreaterThan(0.01); // a field with structure, not a constant
	});

	it('vegetation index: 30 m cells, 200×150, NDVI range −1..1 with a nodata corner', async () => {
		const { metadata } = await loadLayer(await read('vegetation-index.tif'));
		expect(metadata).toMatchObject({ width: 200, height: 150, resolution: { x: 30, y: 30 } });
		expect(metadata.stats.min).toBeGreaterThanOrEqual(-1); // NDVI is bounded by −1..1 by definition
		expect(metadata.stats.max).toBeLessThanOrEqual(1);
		expect(metadata.stats.validCount).toBeLessThan(30_000);
	});

	it('terrain height: 100 m cells, 290×250, whole metres, no nodata, covering the whole catchment', async () => {
		const { metadata } = await loadLayer(await read('terrain-height.tif'), { name: 'terrain-height.tif' });
		expect(metadata).toMatchObject({ width: 290, height: 250, epsg: 32754, resolution: { x: 100, y: 100 }, nodata: null });
		expect(metadata.stats.validCount).toBe(290 * 250);
		// A low plain: tens of metres of relief, not mountains (the generator's own design, no outside source).
		expect(metadata.stats.max - metadata.stats.min).toBeGreaterThan(20);
		expect(metadata.stats.max - metadata.stats.min).toBeLessThan(100);
		// Every vertex of the catchment's outline lies inside the model (the recipe's surface is empty wherever a layer has no data).
		const [study] = parsePolygonUpload((await read('study-area.geojson')).toString());
		const { transformer } = await import('../../../src/lib/geo/crs');
		const { forward } = transformer(4326, 32754);
		const { origin, resolution } = metadata;
		for (const [lon, lat] of study.geometry.coordinates[0][0]) {
			const [x, y] = forward(lon, lat);
			expect(x).toBeGreaterThan(origin.x);
			expect(x).toBeLessThan(origin.x + 290 * resolution.x);
			expect(y).toBeLessThan(origin.y);
			expect(y).toBeGreaterThan(origin.y - 250 * resolution.y);
		}
	});

	it('polygons parse; the zones partition the study area (geodesic areas by GeographicLib agree within 0.5 %)', async () => {
		const [study] = parsePolygonUpload((await read('study-area.geojson')).toString());
		const [lake] = parsePolygonUpload((await read('exclusions.geojson')).toString());
		const zones = parsePolygonUpload((await read('zones.geojson')).toString());
		expect(zones.map((z) => z.id)).toEqual(['north-fell', 'west-moss', 'south-heath', 'eastern-reach']);
		const zoneArea = zones.reduce((s, z) => s + area(z), 0);
		expect(Math.abs(zoneArea - area(study)) / area(study)).toBeLessThan(0.005);
		// a few hundred km² catchment, a few km² reservoir
		expect(area(study) / 1e6).toBeGreaterThan(300);
		expect(area(lake) / 1e6).toBeGreaterThan(2);
		expect(area(lake) / 1e6).toBeLessThan(6);
	});

	it('sensors.csv imports cleanly: 12 probes + 2 neutron sensors, all inside the catchment and out of the water', async () => {
		const res = importSensorsCsv((await read('sensors.csv')).toString(), { knownTypes: DEMO_SENSOR_TYPES });
		expect(res.ok).toBe(true);
		if (!res.ok) return;
		expect(res.rows.filter((s) => s.type === 'soil moisture probe')).toHaveLength(12);
		expect(res.rows.filter((s) => s.type === 'cosmic-ray neutron sensor')).toHaveLength(2);
		const [study] = parsePolygonUpload((await read('study-area.geojson')).toString());
		const [lake] = parsePolygonUpload((await read('exclusions.geojson')).toString());
		for (const s of res.rows) {
			expect(inside(s.lon, s.lat, study), s.id).toBe(true);
			expect(inside(s.lon, s.lat, lake), s.id).toBe(false);
		}
	});

	it('feeds an importance recipe: dry-is-important moisture aligned onto the 30 m vegetation grid', async () => {
		const moisture = toGridBand((await loadLayer(await read('soil-moisture.tif'))).band);
		const vegetation = toGridBand((await loadLayer(await read('vegetation-index.tif'))).band);
		const aligned = alignToGrid(moisture, vegetation.grid);
		const out = combineLayers(
			{
				layers: [
					{ layerId: 'moisture', transform: 'invert', weight: 2 },
					{ layerId: 'vegetation', transform: 'variability', weight: 1, params: { distanceM: 90 } }
				]
			},
			{ moisture: aligned, vegetation }
		);
		expect(out.data).toHaveLength(200 * 150);
		let min = Infinity;
		let max = -Infinity;
		for (const v of out.data) if (!Number.isNaN(v)) (min = Math.min(min, v)), (max = Math.max(max, v));
		expect(min).toBeGreaterThanOrEqual(0);
		expect(max).toBeLessThanOrEqual(1);
		expect(max - min).toBeGreaterThan(0.3);
		expect(out.validCount).toBeGreaterThan(25_000);
	});
});

describe('demo data through the engine side readers', () => {
	it('study area and zones read with readPolygons/readZones, and the moisture raster builds a working grid', async () => {
		const { readPolygons, readZones } = await import('../../../src/lib/geo/geojson');
		const { aggregateToWorkingGrid, bandSource } = await import('../../../src/lib/geo/aggregate');
		const study = readPolygons(JSON.parse((await read('study-area.geojson')).toString()), 'study-area.geojson');
		const lake = readPolygons(JSON.parse((await read('exclusions.geojson')).toString()), 'exclusions.geojson');
		const zones = readZones(JSON.parse((await read('zones.geojson')).toString()), 'zones.geojson');
		expect(zones.map((z) => z.id)).toEqual(['north-fell', 'west-moss', 'south-heath', 'eastern-reach']);
		const { band } = await loadLayer(await read('soil-moisture.tif'));
		const { grid, epsg } = await aggregateToWorkingGrid(bandSource(band), { studyArea: study, exclusions: lake, cellSize: 250 });
		expect(epsg).toBe(32754);
		let mass = 0;
		let feasible = 0;
		for (let i = 0; i < grid.mass.length; i++) {
			mass += grid.mass[i];
			feasible += grid.feasible[i];
		}
		expect(mass).toBeCloseTo(1, 9);
		// 250 m asked for, but the raster's pixels are 1 km: cells are never finer than the pixels.
		expect(grid.cellSize).toBeCloseTo(1000, 6);
		// feasible area ≈ catchment minus reservoir, at 1 km cells
		const cellKm2 = (grid.cellSize / 1000) ** 2;
		const feasibleKm2 = feasible * cellKm2;
		expect(feasibleKm2).toBeGreaterThan(300);
		expect(feasibleKm2).toBeLessThan(grid.width * grid.height * cellKm2);
	});
});
