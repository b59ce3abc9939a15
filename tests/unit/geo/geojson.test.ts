import { describe, expect, it } from 'vitest';
import { GeoJsonError, polygonRings, projectRings, readPolygons, readSensors, readZones } from '../../../src/lib/geo/geojson';

// RFC 7946: positions [lon, lat]; a linear ring is closed and has at least four positions [S].
const square = [[[15, 48], [15.1, 48], [15.1, 48.1], [15, 48.1], [15, 48]]];
const hole = [[15.02, 48.02], [15.02, 48.05], [15.05, 48.05], [15.05, 48.02], [15.02, 48.02]];

describe('GeoJSON polygons', () => {
	it('reads Polygon rings (closing position dropped) and MultiPolygon parts as one flat list', () => {
		expect(polygonRings({ type: 'Polygon', coordinates: [square[0], hole] }, 'a')).toHaveLength(2);
		expect(polygonRings({ type: 'Polygon', coordinates: square }, 'a')[0]).toHaveLength(4);
		const multi = { type: 'MultiPolygon', coordinates: [square, [[[16, 48], [16.1, 48], [16.1, 48.1], [16, 48]]]] };
		expect(polygonRings(multi, 'a')).toHaveLength(2);
	});
	it('accepts a FeatureCollection, a Feature or a bare geometry', () => {
		const g = { type: 'Polygon', coordinates: square };
		expect(readPolygons(g, 'f')).toHaveLength(1);
		expect(readPolygons({ type: 'Feature', geometry: g, properties: null }, 'f')).toHaveLength(1);
		expect(readPolygons({ type: 'FeatureCollection', features: [{ type: 'Feature', geometry: g, properties: {} }] }, 'f')).toHaveLength(1);
	});
	const bad: Array<[string, unknown, RegExp]> = [
		['an open ring', { type: 'Polygon', coordinates: [[[15, 48], [15.1, 48], [15.1, 48.1], [15, 48.1]]] }, /not closed/],
		['a ring of three positions', { type: 'Polygon', coordinates: [[[15, 48], [15.1, 48], [15, 48]]] }, /at least 4 positions/],
		['a latitude beyond 90°', { type: 'Polygon', coordinates: [[[15, 48], [15.1, 95], [15.1, 48.1], [15, 48]]] }, /not a \[lon, lat\] position/],
		['a Point', { type: 'Point', coordinates: [15, 48] }, /expected a FeatureCollection, Feature or \(Multi\)Polygon/],
		['a LineString feature', { type: 'Feature', geometry: { type: 'LineString', coordinates: [[15, 48], [16, 48]] } }, /is not Polygon or MultiPolygon/],
		['an empty collection', { type: 'FeatureCollection', features: [] }, /no polygons/],
		['not an object', 'hello', /not a GeoJSON object/]
	];
	for (const [label, doc, msg] of bad) {
		it(`refuses ${label} with a GeoJsonError naming the file`, () => {
			expect(() => readPolygons(doc, 'area.geojson')).toThrow(GeoJsonError);
			expect(() => readPolygons(doc, 'area.geojson')).toThrow(/area\.geojson/);
			expect(() => readPolygons(doc, 'area.geojson')).toThrow(msg);
		});
	}
});

describe('GeoJSON zones and sensors', () => {
	const pt = (props: Record<string, unknown>, coordinates: unknown = [15.05, 48.05]) => ({ type: 'Feature', geometry: { type: 'Point', coordinates }, properties: props });
	it('reads zone ids (string or number) and refuses duplicates or missing ids', () => {
		const z = (id: unknown) => ({ type: 'Feature', properties: { id }, geometry: { type: 'Polygon', coordinates: square } });
		expect(readZones({ type: 'FeatureCollection', features: [z('north'), z(7)] }, 'z').map((x) => x.id)).toEqual(['north', '7']);
		expect(() => readZones({ type: 'FeatureCollection', features: [z('a'), z('a')] }, 'z.geojson')).toThrow(/zone id "a" appears twice/);
		expect(() => readZones({ type: 'FeatureCollection', features: [z(null)] }, 'z.geojson')).toThrow(/without an id/);
	});
	it('reads sensors with defaults (mobility relocatable, radius from the caller)', () => {
		const s = readSensors({ type: 'FeatureCollection', features: [pt({ id: 'a' }), pt({ id: 'b', radius_m: 150, mobility: 'fixed' })] }, 's');
		expect(s).toEqual([
			{ id: 'a', lon: 15.05, lat: 48.05, radius: undefined, mobility: 'relocatable' },
			{ id: 'b', lon: 15.05, lat: 48.05, radius: 150, mobility: 'fixed' }
		]);
	});
	const bad: Array<[string, unknown, RegExp]> = [
		['a numeric id', pt({ id: 3 }), /string id/],
		['a zero radius', pt({ id: 'a', radius_m: 0 }), /radius_m must be a positive number/],
		['an unknown mobility', pt({ id: 'a', mobility: 'drone' }), /mobility must be one of/],
		['a polygon', { type: 'Feature', geometry: { type: 'Polygon', coordinates: square }, properties: { id: 'a' } }, /must be a Point/],
		['a position with strings', pt({ id: 'a' }, ['15', '48']), /must be a Point/]
	];
	for (const [label, feature, msg] of bad) {
		it(`refuses a sensor with ${label}`, () => {
			expect(() => readSensors({ type: 'FeatureCollection', features: [feature] }, 's.geojson')).toThrow(msg);
		});
	}
	it('refuses duplicate sensor ids', () => {
		expect(() => readSensors({ type: 'FeatureCollection', features: [pt({ id: 'a' }), pt({ id: 'a' })] }, 's.geojson')).toThrow(/"a" appears twice/);
	});
});

describe('projectRings', () => {
	it('adds vertices on long edges so the projected edge follows the lon/lat edge', () => {
		const rings = polygonRings({ type: 'Polygon', coordinates: square }, 'a');
		const f = (lon: number, lat: number): [number, number] => [lon * 1000, lat * 1000];
		const out = projectRings(rings, f, 10); // edges of 100 units → 10 pieces each
		expect(out[0]).toHaveLength(40);
		expect(out[0][1][0]).toBeCloseTo(15010, 9);
	});
});
