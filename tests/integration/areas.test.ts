import { readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createNetwork } from '../../src/lib/server/services/networks';
import { areaPatch, areaView, normaliseAreaPatch, parseAreaUpload, setArea } from '../../src/lib/server/services/areas';
import { findNetwork } from '../../src/lib/server/repositories/networks';
import { createTestDatabase, jsonValue, makeMember, type TestDb } from '../helpers/db';

const demo = (f: string) => readFileSync(path.resolve(import.meta.dirname, '../../data/demo', f), 'utf8');

describe('study area and exclusions', () => {
	let t: TestDb;
	let m: { userId: number; organisationId: number };
	beforeAll(async () => {
		t = await createTestDatabase();
		m = await makeMember(t.db, 'analyst');
	});
	afterAll(async () => t?.drop());

	it('uploads the demo study area and exclusions, checks the version and audits', async () => {
		const id = await createNetwork(t.db, m.organisationId, m.userId, { name: 'Area test', description: '', crsEpsg: null, publicText: '' });
		const a = await setArea(t.db, id, m.userId, 1, parseAreaUpload('studyArea', demo('study-area.geojson'), 'study-area.geojson'));
		expect(a.version).toBe(2);
		expect((a.study_area as { type: string }).type).toBe('MultiPolygon');
		// Saving the study area settles the working CRS: the demo area near 143.55°E, 32.15°S lies in UTM zone 54S.
		expect(a.working_epsg).toBe(32754);
		const b = await setArea(t.db, id, m.userId, 2, parseAreaUpload('exclusions', demo('exclusions.geojson'), 'exclusions.geojson'));
		expect(areaView(b).exclusions.map((f) => f.properties.name)).toEqual(['Vennarrow Water (reservoir)']);
		await expect(setArea(t.db, id, m.userId, 2, { exclusions: null })).rejects.toMatchObject({ status: 409, code: 'stale' });
		expect(areaView((await findNetwork(t.db, id))!).exclusions).toHaveLength(1);
		const audits = await t.db('audit_log').where({ action: 'network.area', object_id: String(id) }).orderBy('id');
		expect(audits).toHaveLength(2);
		expect(Object.keys(jsonValue(audits[1].after) as object)).toEqual(['exclusions']);
	});

	it('KML uploads are read as polygons', () => {
		const kml = `<?xml version="1.0"?><kml xmlns="http://www.opengis.net/kml/2.2"><Document><Placemark><name>road</name><Polygon><outerBoundaryIs><LinearRing><coordinates>10.1,52.9 10.2,52.9 10.2,52.95 10.1,52.9</coordinates></LinearRing></outerBoundaryIs></Polygon></Placemark></Document></kml>`;
		const r = parseAreaUpload('exclusions', kml, 'road.kml');
		expect(r.exclusions!.features[0].properties.name).toBe('road');
	});

	it('the API body is validated: a bad polygon names the field, an empty body is refused', () => {
		expect(areaPatch.safeParse({ version: 1 }).success).toBe(false);
		const p = areaPatch.parse({ version: 1, studyArea: { type: 'Polygon', coordinates: [[[0, 0], [1, 0], [0, 0]]] } });
		expect(() => normaliseAreaPatch(p)).toThrow(expect.objectContaining({ field: 'studyArea', status: 400 }));
		const ok = normaliseAreaPatch(areaPatch.parse({ version: 1, exclusions: [{ type: 'Feature', properties: { name: 'no access permission' }, geometry: { type: 'Polygon', coordinates: [[[0, 0], [1, 0], [1, 1], [0, 0]]] } }] }));
		expect(ok.exclusions!.features[0].properties.name).toBe('no access permission');
	});
});

describe('stored shapes from elsewhere', () => {
	it('a bare Polygon study area (as the demo seed stores it) and bare-geometry exclusions are read as MultiPolygon features', async () => {
		const { exclusionList } = await import('../../src/lib/server/services/areas');
		const { asMultiPolygon } = await import('../../src/lib/geo/polygons');
		const ring = [[0, 0], [1, 0], [1, 1], [0, 0]];
		expect(asMultiPolygon({ type: 'Polygon', coordinates: [ring] })).toEqual({ type: 'MultiPolygon', coordinates: [[ring]] });
		expect(asMultiPolygon({ type: 'Point', coordinates: [0, 0] })).toBeNull();
		expect(exclusionList({ type: 'Polygon', coordinates: [ring] })).toEqual([{ type: 'Feature', properties: { name: 'Exclusion 1' }, geometry: { type: 'MultiPolygon', coordinates: [[ring]] } }]);
	});
});
