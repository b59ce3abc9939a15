/**
 * Zone shares from a real importance surface: the demo soil-moisture layer uploaded, a one-layer
 * recipe chosen, then grid and computed zone sets measured on the network's importance.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createNetwork } from '../../src/lib/server/services/networks';
import { findNetwork, type NetworkRow } from '../../src/lib/server/repositories/networks';
import { uploadLayer } from '../../src/lib/server/services/layers';
import { saveRecipeVersion, useRecipeVersion } from '../../src/lib/server/services/importance';
import { setArea, parseAreaUpload } from '../../src/lib/server/services/areas';
import { createComputedZoneSet, createGridZoneSet, createUploadedZoneSet, importanceForZones, measureZoneSet, zoneSetViews } from '../../src/lib/server/services/zones';
import { createTestDatabase, makeMember, type TestDb } from '../helpers/db';
import { demoFile, fsTestStore, streamOf, type TestStore } from './layers-support';

const demo = (f: string) => readFileSync(path.resolve(import.meta.dirname, '../../data/demo', f), 'utf8');

describe('zone shares on the network importance', () => {
	let t: TestDb;
	let s: TestStore;
	let net: NetworkRow;
	let actorId: number;
	beforeAll(async () => {
		t = await createTestDatabase();
		s = await fsTestStore();
		const m = await makeMember(t.db, 'analyst');
		actorId = m.userId;
		const id = await createNetwork(t.db, m.organisationId, m.userId, { name: 'Shares', description: '', crsEpsg: null, publicText: '' });
		await setArea(t.db, id, m.userId, 1, parseAreaUpload('studyArea', demo('study-area.geojson'), 'study-area.geojson'));
		await setArea(t.db, id, m.userId, 2, parseAreaUpload('exclusions', demo('exclusions.geojson'), 'exclusions.geojson'));
		const ctx = { networkId: id, organisationId: m.organisationId, actorId: m.userId };
		const layer = await uploadLayer(t.db, s.store, ctx, { name: 'soil', kind: 'soil_moisture', fileName: 'soil-moisture.tif' }, streamOf(await demoFile('soil-moisture.tif')), { maxBytes: 10 * 1024 * 1024, maxPixels: 25_000_000 });
		const v = await saveRecipeVersion(t.db, s.store, id, m.organisationId, m.userId, { name: 'Dry', definition: { layers: [{ layerId: String(layer.id), transform: 'invert', weight: 1 }] } });
		await useRecipeVersion(t.db, id, m.organisationId, m.userId, v.id);
		net = (await findNetwork(t.db, id))!;
	});
	afterAll(async () => {
		await s?.close();
		await t?.drop();
	});

	it('is null before a recipe is chosen, and a working grid in the UTM zone once it is', async () => {
		const imp = await importanceForZones(t.db, s.store, net);
		expect(imp).not.toBeNull();
		expect(imp!.grid.crs).toBe('EPSG:32754');
		const sum = imp!.grid.mass.reduce((a, b) => a + b, 0);
		expect(sum).toBeCloseTo(1, 9);
	});

	it('a 3 km grid over the study area has shares that sum to 1 (up to cell-centre edge effects)', async () => {
		const imp = await importanceForZones(t.db, s.store, net);
		const id = await createGridZoneSet(t.db, net, actorId, '', 3, imp);
		const set = (await zoneSetViews(t.db, net)).find((x) => x.id === id)!;
		const shares = set.zones.map((z) => z.importanceShare!);
		expect(shares.every((v) => v >= 0)).toBe(true);
		expect(shares.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 3);
		// Measuring again writes every share in one UPDATE (500 zones a statement), not one per zone.
		const sql: string[] = [];
		const onQuery = (q: { sql: string }) => sql.push(q.sql);
		t.db.on('query', onQuery);
		await measureZoneSet(t.db, net, actorId, id, imp);
		t.db.off('query', onQuery);
		expect(set.zones.length).toBeGreaterThan(20);
		expect(sql.filter((q) => /^update `zones`/i.test(q))).toHaveLength(1);
		const again = (await zoneSetViews(t.db, net)).find((x) => x.id === id)!;
		again.zones.forEach((z, k) => expect(z.importanceShare).toBeCloseTo(shares[k], 12));
	});

	it('uploaded demo zones partition the catchment: shares sum to 1; computed zones sum to 1 exactly', async () => {
		const imp = await importanceForZones(t.db, s.store, net);
		const up = await createUploadedZoneSet(t.db, net, actorId, '', demo('zones.geojson'), 'zones.geojson', null);
		await measureZoneSet(t.db, net, actorId, up, imp);
		const uploaded = (await zoneSetViews(t.db, net)).find((x) => x.id === up)!;
		expect(uploaded.zones.reduce((a, z) => a + z.importanceShare!, 0)).toBeCloseTo(1, 3);
		const c = await createComputedZoneSet(t.db, net, actorId, '', 5, imp);
		const computed = (await zoneSetViews(t.db, net)).find((x) => x.id === c)!;
		expect(computed.zones).toHaveLength(5);
		expect(computed.zones.reduce((a, z) => a + z.importanceShare!, 0)).toBeCloseTo(1, 9);
	});
});
