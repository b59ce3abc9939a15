import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import proj4 from 'proj4';
import { PNG } from 'pngjs';
import type { Knex } from 'knex';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { importancePng, networkMap, type ImportanceSource } from '../../src/lib/server/services/map-data';
import type { SurfaceLike } from '../../src/lib/map/raster';
import { findNetwork } from '../../src/lib/server/repositories/networks';
import { encodeSurface, useRecipeVersion } from '../../src/lib/server/services/importance';
import { mapImportanceKeys, prepareMapImportance, queueMapImportanceOfVersion } from '../../src/lib/server/services/map-importance';
import { closeThreadPools, runQueuedJobs } from '../../src/lib/server/jobs';
import { registerBuiltInJobKinds, MAP_IMPORTANCE } from '../../src/lib/server/jobs/kinds';
import { parseListQuery, sensorPage } from '../../src/lib/server/services/sensors';
import { FsObjectStore } from '../../src/lib/server/storage';
import { createTestDatabase, jsonValue, makeMember, type TestDb } from '../helpers/db';

const UTM32 = '+proj=utm +zone=32 +datum=WGS84 +units=m +no_defs';

const noImportance: ImportanceSource = { versionId: async () => null };
/** The store for the tests that draw no importance (nothing is ever read from it). */
const emptyStore = new FsObjectStore(path.join(tmpdir(), 'cairnfield-map-empty'));

/** A lon/lat square polygon around (lon, lat), half-side d degrees. */
function square(lon: number, lat: number, d: number) {
	return { type: 'Polygon', coordinates: [[[lon - d, lat - d], [lon + d, lat - d], [lon + d, lat + d], [lon - d, lat + d], [lon - d, lat - d]]] };
}

async function insertSensor(db: Knex, networkId: number, typeId: number, code: string, lon: number, lat: number, status: string) {
	await db('sensors').insert({
		network_id: networkId,
		code,
		serial: `SN-${code}`,
		sensor_type_id: typeId,
		lon,
		lat,
		position: db.raw('ST_GeomFromText(?, 4326)', [`POINT(${lon} ${lat})`]),
		status,
		notes: ''
	});
}

/** A cone of importance over a 2 km square of UTM 32N, 100 × 100 cells of 20 m, apex 1 at the centre. */
function coneSurface(cx: number, cy: number): SurfaceLike {
	const n = 100;
	const cell = 20;
	const x0 = cx - 1000;
	const y0 = cy + 1000;
	const data = new Float32Array(n * n);
	for (let r = 0; r < n; r++) for (let c = 0; c < n; c++) data[r * n + c] = Math.max(0, 1 - Math.hypot(x0 + (c + 0.5) * cell - cx, y0 - (r + 0.5) * cell - cy) / 1000);
	return { grid: { epsg: 32632, width: n, height: n, x0, y0, dx: cell, dy: cell }, data };
}

describe('networkMap (service, test database)', () => {
	let t: TestDb;
	let networkId: number;
	beforeAll(async () => {
		t = await createTestDatabase();
		const admin = await makeMember(t.db, 'admin');
		[networkId] = await t.db('networks').insert({
			organisation_id: admin.organisationId,
			slug: 'map-test',
			name: 'Map test',
			description: '',
			public_text: '',
			crs_epsg: null,
			study_area: JSON.stringify({ type: 'FeatureCollection', features: [{ type: 'Feature', properties: {}, geometry: square(9, 52, 0.01) }] }),
			exclusions: JSON.stringify({ type: 'MultiPolygon', coordinates: [square(9.005, 52.005, 0.002).coordinates] })
		});
		const [probe] = await t.db('sensor_types').insert({ network_id: networkId, name: 'soil moisture probe', radius_m: 30, mobility: 'relocatable' });
		const [crns] = await t.db('sensor_types').insert({ network_id: networkId, name: 'cosmic-ray neutron sensor', radius_m: 150, mobility: 'fixed' });
		await insertSensor(t.db, networkId, probe, 'P1', 8.995, 51.995, 'active');
		await insertSensor(t.db, networkId, probe, 'P2', 9.005, 51.995, 'faulty');
		await insertSensor(t.db, networkId, probe, 'P3', 9.005, 51.996, 'retired');
		await insertSensor(t.db, networkId, crns, 'C1', 9.0, 52.0, 'active');
		// Two zone sets: the older one is the network's current one, so it must win over the newer.
		const [current] = await t.db('zone_sets').insert({ network_id: networkId, name: 'halves', kind: 'uploaded', created_at: new Date('2026-01-01') });
		const [newer] = await t.db('zone_sets').insert({ network_id: networkId, name: 'newer', kind: 'grid', created_at: new Date('2026-06-01') });
		await t.db('zones').insert([
			{ zone_set_id: current, code: 'W', name: 'West', geometry: JSON.stringify({ type: 'Polygon', coordinates: [[[8.99, 51.99], [9.0, 51.99], [9.0, 52.01], [8.99, 52.01], [8.99, 51.99]]] }), importance_share: 0.4 },
			{ zone_set_id: current, code: 'E', name: 'East', geometry: JSON.stringify({ type: 'Polygon', coordinates: [[[9.0, 51.99], [9.01, 51.99], [9.01, 52.01], [9.0, 52.01], [9.0, 51.99]]] }), importance_share: 0.6 },
			{ zone_set_id: newer, code: 'X', name: '', geometry: JSON.stringify(square(9, 52, 0.01)), importance_share: null }
		]);
		await t.db('networks').where({ id: networkId }).update({ zone_set_id: current });
	});
	afterAll(async () => {
		await closeThreadPools();
		await t?.drop();
	});

	it('assembles area, exclusions, zones of the current set and sensors in the UTM zone of the centre', async () => {
		const network = (await findNetwork(t.db, networkId))!;
		const doc = await networkMap(t.db, { network, importance: noImportance, cache: emptyStore, apiBase: `/api/v1/networks/${networkId}` });
		// 9°E 52°N lies in UTM zone 32N (6° zones from 180°W: zone 32 spans 6°E–12°E).
		expect(doc.crs?.epsg).toBe(32632);
		expect(doc.studyArea).toHaveLength(1);
		expect(doc.exclusions).toHaveLength(1);
		expect(doc.zoneSet?.name).toBe('halves');
		expect(doc.zones.map((z) => z.code)).toEqual(['W', 'E']);
		const [w, e] = doc.zones;
		// W holds P1, E holds P2 (faulty still counts); C1 stands on the shared edge at 9°E and is
		// counted in exactly one of the two (a sensor is in one zone). P3 is retired and never counted.
		expect(w.sensorCount + e.sensorCount).toBe(3);
		expect(w.importanceShare).toBe(0.4);
		expect(doc.sensors.map((s) => s.code)).toEqual(['C1', 'P1', 'P2', 'P3']);
		const c1 = doc.sensors[0];
		const [x, y] = proj4('EPSG:4326', UTM32, [9, 52]);
		expect(c1.x).toBeCloseTo(x, 6);
		expect(c1.y).toBeCloseTo(y, 6);
		expect(doc.sensorTypes.map((s) => [s.name, s.radiusM])).toEqual([
			['cosmic-ray neutron sensor', 150],
			['soil moisture probe', 30]
		]);
		// The extent holds every sensor and the study area.
		for (const s of doc.sensors) {
			expect(s.x).toBeGreaterThan(doc.extent![0]);
			expect(s.x).toBeLessThan(doc.extent![2]);
		}
		expect(doc.backdrop).toBeNull();
		expect(doc.contours).toEqual([]);
	});

	it('a map request never draws the importance: it answers at once with the job, which draws the image once per version and CRS', async () => {
		registerBuiltInJobKinds();
		const network = (await findNetwork(t.db, networkId))!;
		const [cx, cy] = proj4('EPSG:4326', UTM32, [9, 52]);
		const surface = coneSurface(cx, cy);
		const dir = mkdtempSync(path.join(tmpdir(), 'cairnfield-map-'));
		const store = new FsObjectStore(dir);
		// A recipe version whose surface (the cone) is stored, as the recipe-version job leaves it.
		const data = Float32Array.from(surface.data);
		await store.put('importance/cone', encodeSurface({ grid: surface.grid, data, validCount: data.length, min: Math.min(...data), max: Math.max(...data) }));
		const [recipeId] = await t.db('importance_recipes').insert({ network_id: networkId, name: 'cone', latest_version: 1 });
		const [versionId] = await t.db('importance_recipe_versions').insert({ recipe_id: recipeId, version: 1, definition: JSON.stringify({ layers: [] }), surface_key: 'importance/cone', grid_epsg: 32632 });
		const source: ImportanceSource = { versionId: async () => versionId };
		const keys = mapImportanceKeys(versionId, 32632);

		// 1. The request: everything but the importance, and the queued job that will draw it.
		const pending = await networkMap(t.db, { network, importance: source, cache: store, apiBase: '/api/v1/networks/1' });
		expect(pending.sensors).toHaveLength(4);
		expect(pending.zones).toHaveLength(2);
		expect(pending.backdrop).toBeNull();
		expect(pending.contours).toEqual([]);
		expect(pending.importanceJob).toMatchObject({ state: 'queued', error: null });
		const job = await t.db('jobs').where({ id: pending.importanceJob!.id }).first();
		expect(job.kind).toBe(MAP_IMPORTANCE);
		expect(jsonValue(job.payload)).toEqual({ networkId, versionId, epsg: 32632 });
		expect(await store.exists(keys.png)).toBe(false); // nothing was drawn in the request
		// Asked again (another view, the PNG itself): the same job, no second one; the PNG says "being prepared".
		expect((await networkMap(t.db, { network, importance: source, cache: store, apiBase: '' })).importanceJob!.id).toBe(job.id);
		await expect(importancePng(t.db, network, source, store)).rejects.toMatchObject({ status: 409, code: 'importance_pending' });
		expect(await t.db('jobs').where({ kind: MAP_IMPORTANCE }).count({ n: '*' }).first()).toEqual({ n: 1 });

		// 2. The job draws it.
		await runQueuedJobs(t.db, store, { kinds: [MAP_IMPORTANCE], timeoutMs: 120_000 });
		expect(await t.db('jobs').where({ id: job.id }).first()).toMatchObject({ state: 'finished' });
		const doc = await networkMap(t.db, { network, importance: source, cache: store, apiBase: '/api/v1/networks/1' });
		expect(doc.importanceJob).toBeNull();
		expect(doc.backdrop?.kind).toBe('importance');
		expect(doc.backdrop?.url).toBe('/api/v1/networks/1/map/importance.png');
		expect(doc.backdrop?.bounds[0]).toBeCloseTo(cx - 1000, 6);
		expect(doc.backdrop?.bounds[3]).toBeCloseTo(cy + 1000, 6);
		expect(doc.backdrop?.legend).toHaveLength(5);
		expect(doc.contours.length).toBeGreaterThanOrEqual(3);
		// The cone 1 − d/1000 has its level-v contour at d = 1000 (1 − v) m; the contours come from a
		// grid coarsened to 160 cells at most (here the original 20 m cells): allow one cell.
		for (const c of doc.contours) {
			const want = 1000 * (1 - c.level);
			for (const [px, py] of c.lines[0]) expect(Math.abs(Math.hypot(px - cx, py - cy) - want)).toBeLessThan(20);
		}
		const png = await importancePng(t.db, network, source, store);
		const img = PNG.sync.read(png!);
		expect([img.width, img.height]).toEqual([100, 100]);

		// 3. Once: another process's view (a new store on the same objects) reads it and queues nothing;
		// the version's own job (the recipe-version job's finished step) is the same job; drawing again draws nothing.
		const again = await networkMap(t.db, { network, importance: source, cache: new FsObjectStore(dir), apiBase: '/api/v1/networks/1' });
		expect(again.contours).toEqual(doc.contours);
		expect(again.backdrop).toEqual(doc.backdrop);
		expect((await queueMapImportanceOfVersion(t.db, networkId, versionId))!.id).toBe(job.id);
		expect(await prepareMapImportance(t.db, store, { networkId, versionId, epsg: 32632 })).toEqual({ drawn: false, empty: false });
		// The version's own step also queues the web map's image (EPSG:3857): one job per CRS, never two for one.
		const queued = (await t.db('jobs').where({ kind: MAP_IMPORTANCE }).select('payload')).map((j) => (jsonValue(j.payload) as { epsg: number }).epsg).sort((a, b) => a - b);
		expect(queued).toEqual([3857, 32632]);

		// 4. The CRS is the job's parameter: the same version for a web map (EPSG:3857) is its own image,
		// whose bounds hold the surface's corners as proj4 puts them in web Mercator.
		expect(await prepareMapImportance(t.db, store, { networkId, versionId, epsg: 3857 })).toEqual({ drawn: true, empty: false });
		const merc = JSON.parse((await store.getBuffer(mapImportanceKeys(versionId, 3857).view)).toString('utf8'));
		for (const [x, y] of [[cx - 1000, cy - 1000], [cx + 1000, cy + 1000]]) {
			const [mx, my] = proj4(UTM32, 'EPSG:3857', [x, y]);
			expect(mx).toBeGreaterThanOrEqual(merc.bounds[0] - 1e-6);
			expect(mx).toBeLessThanOrEqual(merc.bounds[2] + 1e-6);
			expect(my).toBeGreaterThanOrEqual(merc.bounds[1] - 1e-6);
			expect(my).toBeLessThanOrEqual(merc.bounds[3] + 1e-6);
		}
		await t.db('jobs').del();
		await t.db('importance_recipes').where({ id: recipeId }).del();
		rmSync(dir, { recursive: true, force: true });
	}, 180_000);

	it('for the web map (imageEpsg 3857): the image in EPSG:3857, contours still in the working CRS, kept apart from the working-CRS image', async () => {
		const network = (await findNetwork(t.db, networkId))!;
		const [cx, cy] = proj4('EPSG:4326', UTM32, [9, 52]);
		const surface = coneSurface(cx, cy);
		const dir = mkdtempSync(path.join(tmpdir(), 'cairnfield-map-'));
		const cache = new FsObjectStore(dir);
		const data = Float32Array.from(surface.data);
		await cache.put('importance/cone-web', encodeSurface({ grid: surface.grid, data, validCount: data.length, min: Math.min(...data), max: Math.max(...data) }));
		const [recipeId] = await t.db('importance_recipes').insert({ network_id: networkId, name: 'cone web', latest_version: 1 });
		const [versionId] = await t.db('importance_recipe_versions').insert({ recipe_id: recipeId, version: 1, definition: JSON.stringify({ layers: [] }), surface_key: 'importance/cone-web', grid_epsg: 32632 });
		const source: ImportanceSource = { versionId: async () => versionId };
		// Each CRS is its own drawing, once (the map-importance job does this; here in the test's thread).
		expect(await prepareMapImportance(t.db, cache, { networkId, versionId, epsg: 3857 })).toEqual({ drawn: true, empty: false });
		expect(await prepareMapImportance(t.db, cache, { networkId, versionId, epsg: 3857 })).toEqual({ drawn: false, empty: false });
		expect(await prepareMapImportance(t.db, cache, { networkId, versionId, epsg: 32632 })).toEqual({ drawn: true, empty: false });
		const doc = await networkMap(t.db, { network, importance: source, cache, apiBase: '/api/v1/networks/1', imageEpsg: 3857 });
		expect(doc.importanceJob).toBeNull();
		expect(doc.crs?.epsg).toBe(32632);
		expect(doc.backdrop?.epsg).toBe(3857);
		expect(doc.backdrop?.url).toBe('/api/v1/networks/1/map/importance.png?epsg=3857');
		// The image's box holds the surface's corners in spherical Mercator (an independent definition).
		const merc = proj4(UTM32, '+proj=merc +a=6378137 +b=6378137 +lat_ts=0 +lon_0=0 +x_0=0 +y_0=0 +k=1 +units=m +no_defs');
		const b = doc.backdrop!.bounds;
		for (const [x, y] of [[cx - 1000, cy - 1000], [cx + 1000, cy - 1000], [cx - 1000, cy + 1000], [cx + 1000, cy + 1000]]) {
			const [mx, my] = merc.forward([x, y]);
			expect(mx).toBeGreaterThanOrEqual(b[0] - 1e-6);
			expect(mx).toBeLessThanOrEqual(b[2] + 1e-6);
			expect(my).toBeGreaterThanOrEqual(b[1] - 1e-6);
			expect(my).toBeLessThanOrEqual(b[3] + 1e-6);
		}
		// Mercator metres at 52° N are 1/cos 52° ≈ 1.62 ground metres: the box is that much larger than 2 km.
		expect((b[2] - b[0]) / 2000).toBeGreaterThan(1.6);
		// Contours come back as working-CRS circles of radius 1000 (1 − v) m; the image grid's cells are
		// about 20 ground metres (100 cells over the Mercator box): allow two.
		expect(doc.contours.length).toBeGreaterThanOrEqual(3);
		for (const c of doc.contours) {
			const want = 1000 * (1 - c.level);
			for (const [px, py] of c.lines[0]) expect(Math.abs(Math.hypot(px - cx, py - cy) - want)).toBeLessThan(40);
		}
		// The extent stays in working-CRS metres around the surface.
		expect(doc.extent![0]).toBeLessThan(cx - 1000);
		expect(doc.extent![2]).toBeGreaterThan(cx + 1000);
		expect(doc.extent![2] - doc.extent![0]).toBeLessThan(2000 * 1.3);
		// The two images are kept apart: the working-CRS one is the surface's own 100 × 100 grid, the web one has the aspect of its own box.
		const web = PNG.sync.read((await importancePng(t.db, network, source, cache, 3857))!);
		const working = PNG.sync.read((await importancePng(t.db, network, source, cache))!);
		expect([working.width, working.height]).toEqual([100, 100]);
		expect(web.width / web.height).toBeCloseTo((b[2] - b[0]) / (b[3] - b[1]), 1);
		await t.db('importance_recipes').where({ id: recipeId }).del();
		rmSync(dir, { recursive: true, force: true });
	});

	it('without importance, the latest ready layer preview is the backdrop, for roles that may view layers only', async () => {
		const network = (await findNetwork(t.db, networkId))!;
		const footprint = square(9, 52, 0.02);
		await t.db('layers').insert([
			{ network_id: networkId, name: 'older', kind: 'soil_moisture', status: 'ready', preview_key: 'previews/a', epsg: 32632, footprint: JSON.stringify(footprint), stat_min: 0.1, stat_max: 0.2, created_at: new Date('2026-01-01') },
			{ network_id: networkId, name: 'newest', kind: 'soil_moisture', status: 'ready', preview_key: 'previews/b', epsg: 32632, footprint: JSON.stringify(footprint), stat_min: 0.05, stat_max: 0.15, created_at: new Date('2026-03-01') },
			{ network_id: networkId, name: 'failed', kind: 'other', status: 'failed', created_at: new Date('2026-05-01') }
		]);
		const newest = await t.db('layers').where({ network_id: networkId, name: 'newest' }).first();
		const doc = await networkMap(t.db, { network, importance: noImportance, cache: emptyStore, apiBase: '/api/v1/networks/9', mayViewLayers: true });
		expect(doc.backdrop).toMatchObject({ kind: 'layer', label: 'newest', url: `/api/v1/networks/9/layers/${newest.id}/preview.png`, min: 0.05, max: 0.15 });
		// The bounds hold the footprint corners projected with proj4.
		const [xw, ys] = proj4('EPSG:4326', UTM32, [8.98, 51.98]);
		expect(doc.backdrop!.bounds[0]).toBeLessThanOrEqual(xw + 1e-6);
		expect(doc.backdrop!.bounds[1]).toBeCloseTo(Math.min(ys, proj4('EPSG:4326', UTM32, [9.02, 51.98])[1]), 6);
		const forTechnician = await networkMap(t.db, { network, importance: noImportance, cache: emptyStore, apiBase: '/api/v1/networks/9', mayViewLayers: false });
		expect(forTechnician.backdrop).toBeNull();
		await t.db('layers').where({ network_id: networkId }).delete();
	});

	it('a network with nothing positioned has no map CRS and empty lists', async () => {
		const admin = await makeMember(t.db, 'admin');
		const [id] = await t.db('networks').insert({ organisation_id: admin.organisationId, slug: 'empty', name: 'Empty', description: '', public_text: '' });
		const doc = await networkMap(t.db, { network: (await findNetwork(t.db, id))!, importance: noImportance, cache: emptyStore, apiBase: '' });
		expect(doc.crs).toBeNull();
		expect(doc.sensors).toEqual([]);
		expect(await importancePng(t.db, (await findNetwork(t.db, id))!, noImportance, emptyStore)).toBeNull();
	});

	it('a grid in EPSG:3035 shows the same CRS on the map and in the sensor table', async () => {
		const admin = await makeMember(t.db, 'admin');
		const [id] = await t.db('networks').insert({ organisation_id: admin.organisationId, slug: 'laea', name: 'LAEA', description: '', public_text: '', study_area: JSON.stringify(square(9, 52, 0.01)) });
		const [typeId] = await t.db('sensor_types').insert({ network_id: id, name: 'probe', radius_m: 30, mobility: 'fixed' });
		await insertSensor(t.db, id, typeId, 'L1', 9.001, 52.002, 'active');
		// Before any importance: the UTM zone of the study area (9°E 52°N: zone 32N), in both views.
		let network = (await findNetwork(t.db, id))!;
		expect((await networkMap(t.db, { network, importance: noImportance, cache: emptyStore, apiBase: '' })).crs?.epsg).toBe(32632);
		expect((await sensorPage(t.db, (await findNetwork(t.db, id))!, parseListQuery(new URLSearchParams()))).workingCrs).toBe(32632);
		// A recipe version whose importance grid is in ETRS89-LAEA Europe (EPSG:3035) is put in use.
		const [recipeId] = await t.db('importance_recipes').insert({ network_id: id, name: 'laea', latest_version: 1 });
		const [versionId] = await t.db('importance_recipe_versions').insert({ recipe_id: recipeId, version: 1, definition: JSON.stringify({ layers: [] }), grid_epsg: 3035 });
		await useRecipeVersion(t.db, id, admin.organisationId, admin.userId, versionId);
		network = (await findNetwork(t.db, id))!;
		const doc = await networkMap(t.db, { network, importance: noImportance, cache: emptyStore, apiBase: '' });
		const page = await sensorPage(t.db, network, parseListQuery(new URLSearchParams()));
		expect(doc.crs?.epsg).toBe(3035);
		expect(page.workingCrs).toBe(3035);
		// The same point in both, and where proj4 puts it with the EPSG:3035 definition written out here.
		const laea = '+proj=laea +lat_0=52 +lon_0=10 +x_0=4321000 +y_0=3210000 +ellps=GRS80 +units=m +no_defs';
		const [x, y] = proj4('EPSG:4326', laea, [9.001, 52.002]);
		expect(doc.sensors[0].x).toBeCloseTo(x, 2);
		expect(page.sensors[0].x).toBeCloseTo(x, 2);
		expect(page.sensors[0].y).toBeCloseTo(y, 2);
	});

	it('a map that cannot be drawn is the user\'s to fix (422 map_unavailable), not a server error', async () => {
		const admin = await makeMember(t.db, 'admin');
		// A working CRS the app has no definition for (stored before its definition was removed, say).
		const [id] = await t.db('networks').insert({ organisation_id: admin.organisationId, slug: 'nocrs', name: 'No CRS', description: '', public_text: '', working_epsg: 99999 });
		const network = (await findNetwork(t.db, id))!;
		await expect(networkMap(t.db, { network, importance: noImportance, cache: emptyStore, apiBase: '' })).rejects.toMatchObject({ status: 422, code: 'map_unavailable' });
		await expect(importancePng(t.db, network, noImportance, emptyStore)).rejects.toMatchObject({ status: 422, code: 'map_unavailable' });
	});
});
