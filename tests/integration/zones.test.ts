import { readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createNetwork } from '../../src/lib/server/services/networks';
import { findNetwork, type NetworkRow } from '../../src/lib/server/repositories/networks';
import { importSensors } from '../../src/lib/server/services/sensors';
import {
	createComputedZoneSet,
	createGridZoneSet,
	createUploadedZoneSet,
	gridZones,
	traceZoneMap,
	useZoneSet,
	zoneSetViews,
	zoneShares,
	type ImportanceSurface
} from '../../src/lib/server/services/zones';
import type { MultiPolygonGeometry } from '../../src/lib/geo/polygons';
import { clipPolygonToRect, pointInPolygons, ringArea2 } from '../../src/lib/geo/geometry';
import { transformer } from '../../src/lib/geo/crs';
import { zoneGrid } from '../../src/lib/engine/zones';
import type { WorkingGrid } from '../../src/lib/engine/types';
import { seedDemoInventory } from '../../seeds/demo-inventory';
import { createTestDatabase, jsonValue, makeMember, type TestDb } from '../helpers/db';

const demo = (f: string) => readFileSync(path.resolve(import.meta.dirname, '../../data/demo', f), 'utf8');
const studyArea: MultiPolygonGeometry = { type: 'MultiPolygon', coordinates: [JSON.parse(demo('study-area.geojson')).features[0].geometry.coordinates] };

/** Planar area in m² of a lon/lat MultiPolygon, measured in a UTM zone (54S, the demo's, unless given). */
function areaM2(g: MultiPolygonGeometry, epsg = 32754): number {
	const f = transformer(4326, epsg).forward;
	let a = 0;
	for (const poly of g.coordinates) poly.forEach((ring) => (a += ringArea2(ring.map(([x, y]) => f(x, y))) / 2));
	return a;
}

/** An importance grid over the demo area in UTM 54S: mass rising eastwards, 500 m cells. */
function demoImportance(): ImportanceSurface {
	const f = transformer(4326, 32754).forward;
	const pts = studyArea.coordinates[0][0].map(([x, y]) => f(x, y));
	const x0 = Math.floor(Math.min(...pts.map((p) => p[0])) / 500) * 500 - 500;
	const y0 = Math.ceil(Math.max(...pts.map((p) => p[1])) / 500) * 500 + 500;
	const width = Math.ceil((Math.max(...pts.map((p) => p[0])) - x0) / 500) + 1;
	const height = Math.ceil((y0 - Math.min(...pts.map((p) => p[1]))) / 500) + 1;
	const mass = new Float64Array(width * height);
	const feasible = new Uint8Array(width * height);
	const inv = transformer(32754, 4326).forward;
	let total = 0;
	for (let r = 0; r < height; r++)
		for (let c = 0; c < width; c++) {
			const [lon, lat] = inv(x0 + (c + 0.5) * 500, y0 - (r + 0.5) * 500);
			if (!pointInPolygons([lon, lat], studyArea.coordinates)) continue;
			feasible[r * width + c] = 1;
			mass[r * width + c] = 1 + c;
			total += 1 + c;
		}
	for (let i = 0; i < mass.length; i++) mass[i] /= total;
	return { grid: { crs: 'EPSG:32754', width, height, x0, y0, cellSize: 500, mass, feasible }, recipeVersionId: null };
}

describe('zone geometry', () => {
	it('clipPolygonToRect keeps the part of a square inside the window', () => {
		// A 10 × 10 square clipped to [5, 20] × [−5, 5] leaves a 5 × 5 square: 25 m² (worked by hand).
		const sq: [number, number][] = [[0, 0], [10, 0], [10, 10], [0, 10], [0, 0]];
		const [ring] = clipPolygonToRect([sq], [5, -5, 20, 5]);
		expect(Math.abs(ringArea2(ring)) / 2).toBeCloseTo(25, 9);
		expect(clipPolygonToRect([sq], [20, 20, 30, 30])).toEqual([]);
		// A hole the window misses is dropped; one it cuts is kept (2 × 2 hole, half inside: 2 m²).
		const hole: [number, number][] = [[1, 1], [1, 3], [3, 3], [3, 1], [1, 1]];
		expect(clipPolygonToRect([sq, hole], [5, -5, 20, 5])).toHaveLength(1);
		const cut = clipPolygonToRect([sq, hole], [2, 0, 10, 10]);
		expect(cut).toHaveLength(2);
		expect(Math.abs(ringArea2(cut[1])) / 2).toBeCloseTo(2, 9);
	});

	it('a 3 km grid covers the study area: the cells sum to its area and each point lies in exactly one cell', () => {
		const zones = gridZones(studyArea, 32754, 3000);
		const total = zones.reduce((s, z) => s + areaM2(z.geometry), 0);
		expect(total / areaM2(studyArea)).toBeCloseTo(1, 3);
		const f = transformer(32754, 4326).forward;
		const g = transformer(4326, 32754).forward;
		const [cx, cy] = g(143.55, -32.15);
		let checked = 0;
		for (let i = -20; i <= 20; i++)
			for (let j = -20; j <= 20; j++) {
				const [lon, lat] = f(cx + i * 777, cy + j * 777);
				const inArea = pointInPolygons([lon, lat], studyArea.coordinates);
				const hits = zones.filter((z) => pointInPolygons([lon, lat], z.geometry.coordinates)).length;
				expect(hits).toBe(inArea ? 1 : 0);
				if (inArea) checked++;
			}
		expect(checked).toBeGreaterThan(100);
	});

	it('traceZoneMap turns a 2 × 2 zone grid back into four rectangles of the grid’s cells', () => {
		const grid = { crs: 'EPSG:32632', width: 4, height: 4, x0: 500000, y0: 5860000, cellSize: 1000 };
		const geoms = traceZoneMap(grid, zoneGrid({ ...grid, mass: new Float64Array(16), feasible: new Uint8Array(16) } as WorkingGrid, 2, 2));
		expect(geoms).toHaveLength(4);
		for (const g of geoms) {
			expect(g.coordinates).toHaveLength(1);
			expect(g.coordinates[0]).toHaveLength(1);
			expect(g.coordinates[0][0]).toHaveLength(5); // corners only: collinear vertices dropped
			expect(ringArea2(g.coordinates[0][0])).toBeGreaterThan(0); // RFC 7946: exterior counter-clockwise
			expect(areaM2(g, 32632) / 4e6).toBeCloseTo(1, 3);
		}
	});

	it('shares of a covering partition sum to 1', () => {
		const imp = demoImportance();
		const shares = zoneShares(imp.grid, gridZones(studyArea, 32754, 3000).map((z) => z.geometry));
		expect(shares.reduce((s, v) => s! + v!, 0)).toBeCloseTo(1, 9);
	});
});

describe('zone sets service', () => {
	let t: TestDb;
	let m: { userId: number; organisationId: number };
	let net: NetworkRow;
	beforeAll(async () => {
		t = await createTestDatabase();
		m = await makeMember(t.db, 'analyst');
		const id = await createNetwork(t.db, m.organisationId, m.userId, { name: 'Vale', description: '', crsEpsg: null, publicText: '' });
		await t.db('networks').where({ id }).update({ study_area: JSON.stringify(studyArea) });
		await seedDemoInventory(t.db, id);
		net = (await findNetwork(t.db, id))!;
		expect(await importSensors(t.db, net, m.userId, demo('sensors.csv'), 'csv')).toEqual({ ok: true, count: 14 });
	});
	afterAll(async () => t?.drop());

	it('uploaded demo zones: 4 zones, sensors standing in the field counted where they stand, shares null without importance', async () => {
		const id = await createUploadedZoneSet(t.db, net, m.userId, '', demo('zones.geojson'), 'zones.geojson');
		const set = (await zoneSetViews(t.db, net)).find((s) => s.id === id)!;
		expect(set.zones.map((z) => z.code)).toEqual(['north-fell', 'west-moss', 'south-heath', 'eastern-reach']);
		expect(set.zones.every((z) => z.importanceShare === null)).toBe(true);
		// Expected counts by testing each sensor of sensors.csv that stands in the field (active or
		// faulty; a retired one never counts) against each zone polygon directly.
		const zonesFc = JSON.parse(demo('zones.geojson'));
		const active = demo('sensors.csv').trim().split(/\r?\n/).slice(1).map((l) => l.split(',')).filter((c) => c[6] !== 'retired');
		expect(active).toHaveLength(14);
		const expected = zonesFc.features.map((f: { geometry: { coordinates: [number, number][][] } }) =>
			active.filter((c) => pointInPolygons([Number(c[3]), Number(c[4])], [f.geometry.coordinates])).length
		);
		expect(set.zones.map((z) => z.sensorCount)).toEqual(expected);
		expect(set.zones.reduce((s, z) => s + z.sensorCount, 0)).toBe(14); // the sub-catchments partition the catchment
		const audit = await t.db('audit_log').where({ action: 'zone_set.create', object_id: String(id) }).first();
		expect(jsonValue(audit.after)).toMatchObject({ kind: 'uploaded', zones: 4 });
	});

	it('a 3 km grid with importance: shares sum to 1 and the set can be put in use', async () => {
		const id = await createGridZoneSet(t.db, net, m.userId, '', 3, demoImportance());
		const set = (await zoneSetViews(t.db, net)).find((s) => s.id === id)!;
		expect(set.zones.length).toBeGreaterThan(20);
		expect(set.zones.reduce((s, z) => s + (z.importanceShare ?? 0), 0)).toBeCloseTo(1, 6);
		expect(set.zones.reduce((s, z) => s + z.sensorCount, 0)).toBe(14);
		await useZoneSet(t.db, net, m.userId, id);
		expect((await t.db('networks').where({ id: net.id }).first()).zone_set_id).toBe(id);
		expect((await zoneSetViews(t.db, net)).find((s) => s.id === id)!.inUse).toBe(true);
	});

	it('computed zones need importance; with it, K zones whose shares sum to 1', async () => {
		await expect(createComputedZoneSet(t.db, net, m.userId, '', 4, null)).rejects.toMatchObject({ code: 'no_importance' });
		const id = await createComputedZoneSet(t.db, net, m.userId, '', 4, demoImportance());
		const set = (await zoneSetViews(t.db, net)).find((s) => s.id === id)!;
		expect(set.zones.map((z) => z.code)).toEqual(['Z1', 'Z2', 'Z3', 'Z4']);
		expect(set.zones.reduce((s, z) => s + (z.importanceShare ?? 0), 0)).toBeCloseTo(1, 9);
		expect(set.zones.reduce((s, z) => s + z.sensorCount, 0)).toBe(14);
	});

	it('a bad upload is refused with the parser’s message and stores nothing', async () => {
		const before = await t.db('zone_sets').count({ n: '*' });
		await expect(createUploadedZoneSet(t.db, net, m.userId, '', '{"type":"Point","coordinates":[1,2]}', 'x.geojson')).rejects.toMatchObject({ status: 400, field: 'file' });
		expect(await t.db('zone_sets').count({ n: '*' })).toEqual(before);
	});
});

describe('zones on a network whose study area is a bare Polygon', () => {
	it('a grid is laid over it as over a MultiPolygon', async () => {
		const t = await createTestDatabase();
		try {
			const m = await makeMember(t.db, 'analyst');
			const id = await createNetwork(t.db, m.organisationId, m.userId, { name: 'Polygon area', description: '', crsEpsg: null, publicText: '' });
			await t.db('networks').where({ id }).update({ study_area: JSON.stringify({ type: 'Polygon', coordinates: studyArea.coordinates[0] }) });
			const net = (await findNetwork(t.db, id))!;
			const setId = await createGridZoneSet(t.db, net, m.userId, '', 9, null);
			const set = (await zoneSetViews(t.db, net)).find((s) => s.id === setId)!;
			expect(set.zones.length).toBe(gridZones(studyArea, 32754, 9000).length);
		} finally {
			await t.drop();
		}
	});
});
