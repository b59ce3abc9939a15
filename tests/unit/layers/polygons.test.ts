import { Geodesic } from 'geographiclib-geodesic';
import { describe, expect, it } from 'vitest';
import { parseGeoJsonPolygons, parseKmlPolygons, parsePolygonUpload, PolygonError } from '../../../src/lib/geo/polygons';
import { ringArea2 } from '../../../src/lib/geo/geometry';

// A 1°×1° square listed clockwise (wrong for an exterior ring under RFC 7946).
const cwSquare = [
	[10, 50],
	[10, 51],
	[11, 51],
	[11, 50],
	[10, 50]
];
// A hole listed counter-clockwise (wrong for a hole).
const ccwHole = [
	[10.2, 50.2],
	[10.4, 50.2],
	[10.4, 50.4],
	[10.2, 50.4],
	[10.2, 50.2]
];

function expectError(fn: () => unknown, fragment: RegExp) {
	let err: unknown = null;
	try {
		fn();
	} catch (e) {
		err = e;
	}
	expect(err).toBeInstanceOf(PolygonError);
	expect((err as Error).message).toMatch(fragment);
}

describe('parseGeoJsonPolygons', () => {
	it('turns a Polygon into a MultiPolygon with exterior counter-clockwise and holes clockwise (RFC 7946 §3.1.6)', () => {
		const [f] = parseGeoJsonPolygons({ type: 'Polygon', coordinates: [cwSquare, ccwHole] });
		const [poly] = f.geometry.coordinates;
		expect(f.geometry.type).toBe('MultiPolygon');
		expect(ringArea2(poly[0])).toBeGreaterThan(0);
		expect(ringArea2(poly[1])).toBeLessThan(0);
		expect(poly[0]).toEqual([...cwSquare].reverse());
		// Shoelace: twice the area of a 1°×1° square is 2.
		expect(ringArea2(poly[0])).toBeCloseTo(2, 12);
		// GeographicLib's signed geodesic area is positive for a counter-clockwise ring (its docs).
		const signed = (ring: number[][]) => {
			const p = Geodesic.WGS84.Polygon(false);
			for (const [lon, lat] of ring.slice(0, -1)) p.AddPoint(lat, lon);
			return p.Compute(false, true).area ?? NaN;
		};
		expect(signed(poly[0])).toBeGreaterThan(0);
		expect(signed(poly[1])).toBeLessThan(0);
	});

	it('keeps ids and names from a FeatureCollection of Polygon and MultiPolygon features, dropping heights', () => {
		const fc = {
			type: 'FeatureCollection',
			features: [
				{ type: 'Feature', id: 7, properties: { name: 'Upper fell' }, geometry: { type: 'Polygon', coordinates: [cwSquare.map(([x, y]) => [x, y, 300])] } },
				{ type: 'Feature', properties: { id: 'z2' }, geometry: { type: 'MultiPolygon', coordinates: [[cwSquare], [cwSquare.map(([x, y]) => [x + 2, y])]] } }
			]
		};
		const out = parseGeoJsonPolygons(JSON.stringify(fc));
		expect(out).toHaveLength(2);
		expect(out[0]).toMatchObject({ id: '7', name: 'Upper fell' });
		expect(out[0].geometry.coordinates[0][0][0]).toEqual([10, 50]);
		expect(out[1].id).toBe('z2');
		expect(out[1].name).toBeUndefined();
		expect(out[1].geometry.coordinates).toHaveLength(2);
	});

	it('accepts a crs member that names WGS 84 and refuses any other', () => {
		const poly = { type: 'Feature', properties: {}, geometry: { type: 'Polygon', coordinates: [cwSquare] } };
		expect(parseGeoJsonPolygons({ type: 'FeatureCollection', crs: { type: 'name', properties: { name: 'urn:ogc:def:crs:OGC:1.3:CRS84' } }, features: [poly] })).toHaveLength(1);
		expectError(() => parseGeoJsonPolygons({ type: 'FeatureCollection', crs: { type: 'name', properties: { name: 'EPSG:27700' } }, features: [poly] }), /other than WGS 84/);
	});

	it.each([
		['an unclosed ring', { type: 'Polygon', coordinates: [cwSquare.slice(0, 4)] }, /at least 4 positions|not closed/],
		['a ring not closed', { type: 'Polygon', coordinates: [[...cwSquare.slice(0, 4), [10.5, 50]]] }, /not closed/],
		['too few positions', { type: 'Polygon', coordinates: [[[0, 0], [1, 1], [0, 0]]] }, /at least 4 positions \(it has 3\)/],
		['a degenerate ring', { type: 'Polygon', coordinates: [[[0, 0], [1, 1], [1, 1], [0, 0]]] }, /fewer than 3 distinct points/],
		['a flat ring', { type: 'Polygon', coordinates: [[[0, 0], [1, 1], [2, 2], [0, 0]]] }, /encloses no area/],
		['projected coordinates', { type: 'Polygon', coordinates: [[[500000, 6000000], [501000, 6000000], [501000, 6001000], [500000, 6000000]]] }, /outside lon −180…180 \/ lat −90…90/],
		['a non-number', { type: 'Polygon', coordinates: [[[0, 0], [1, 'a'], [1, 1], [0, 0]]] }, /position 2 is not \[lon, lat\] numbers/],
		['a hole outside', { type: 'Polygon', coordinates: [cwSquare, ccwHole.map(([x, y]) => [x + 5, y])] }, /hole 1: the hole lies outside/],
		['a point', { type: 'Feature', properties: { name: 'Gauge' }, geometry: { type: 'Point', coordinates: [0, 0] } }, /feature 1 "Gauge": is a Point; only Polygon and MultiPolygon/],
		['a null geometry', { type: 'Feature', properties: {}, geometry: null }, /feature 1: has no geometry/],
		['an empty collection', { type: 'FeatureCollection', features: [] }, /no features/],
		['a bare LineString', { type: 'LineString', coordinates: [[0, 0], [1, 1]] }, /not "LineString"/]
	])('refuses %s with a clear PolygonError', (_label, input, fragment) => {
		expectError(() => parseGeoJsonPolygons(input), fragment);
	});

	it('refuses broken JSON and too many positions', () => {
		expectError(() => parsePolygonUpload('{"type":'), /not valid JSON/);
		expectError(() => parseGeoJsonPolygons({ type: 'Polygon', coordinates: [cwSquare] }, { maxPositions: 4 }), /more than 4 positions/);
	});

	it('does not mutate its input', () => {
		const input = { type: 'Polygon', coordinates: [cwSquare.map((p) => [...p])] };
		const copy = JSON.parse(JSON.stringify(input));
		parseGeoJsonPolygons(input);
		expect(input).toEqual(copy);
	});
});

const KML = `<?xml version="1.0" encoding="UTF-8"?>
<kml xmlns="http://www.opengis.net/kml/2.2">
  <Document>
    <Placemark>
      <name>Reservoir</name>
      <Polygon><outerBoundaryIs><LinearRing><coordinates>
        10,50,0 10,51,0 11,51,0 11,50,0 10,50,0
      </coordinates></LinearRing></outerBoundaryIs></Polygon>
    </Placemark>
    <Placemark>
      <name>Two fields</name>
      <MultiGeometry>
        <Polygon><outerBoundaryIs><LinearRing><coordinates>0,0 1,0 1,1 0,1 0,0</coordinates></LinearRing></outerBoundaryIs></Polygon>
        <Polygon><outerBoundaryIs><LinearRing><coordinates>2,0 3,0 3,1 2,1 2,0</coordinates></LinearRing></outerBoundaryIs></Polygon>
      </MultiGeometry>
    </Placemark>
  </Document>
</kml>`;

describe('parseKmlPolygons (OGC KML 2.2: lon,lat[,alt] tuples)', () => {
	it('reads Polygon and MultiGeometry placemarks with names, oriented per RFC 7946', () => {
		const out = parsePolygonUpload(KML);
		expect(out.map((f) => f.name)).toEqual(['Reservoir', 'Two fields']);
		expect(out[0].geometry.coordinates[0][0]).toEqual([...cwSquare].reverse());
		expect(out[1].geometry.coordinates).toHaveLength(2);
		for (const f of out) for (const p of f.geometry.coordinates) expect(ringArea2(p[0])).toBeGreaterThan(0);
	});
	it('refuses malformed XML, a non-KML root and a KML without placemarks', () => {
		expectError(() => parseKmlPolygons('<kml><Document><Placemark></Document></kml>'), /not well-formed XML/);
		expectError(() => parseKmlPolygons('<gpx version="1.1"></gpx>'), /not a KML file/);
		expectError(() => parseKmlPolygons('<kml xmlns="http://www.opengis.net/kml/2.2"><Document/></kml>'), /no placemarks/);
	});
	it('refuses a placemark that is a point', () => {
		const pin = '<kml xmlns="http://www.opengis.net/kml/2.2"><Placemark><name>Pin</name><Point><coordinates>1,2</coordinates></Point></Placemark></kml>';
		expectError(() => parseKmlPolygons(pin), /feature 1 "Pin": is a Point/);
	});
	it('reads an innerBoundaryIs as a clockwise hole', () => {
		const withHole = `<kml xmlns="http://www.opengis.net/kml/2.2"><Placemark><name>Ring field</name><Polygon>
			<outerBoundaryIs><LinearRing><coordinates>0,0 4,0 4,4 0,4 0,0</coordinates></LinearRing></outerBoundaryIs>
			<innerBoundaryIs><LinearRing><coordinates>1,1 1,2 2,2 2,1 1,1</coordinates></LinearRing></innerBoundaryIs>
		</Polygon></Placemark></kml>`;
		const [f] = parseKmlPolygons(withHole);
		const [poly] = f.geometry.coordinates;
		expect(poly).toHaveLength(2);
		expect(ringArea2(poly[0])).toBeCloseTo(32, 12); // 2 × 16
		expect(ringArea2(poly[1])).toBeCloseTo(-2, 12); // 2 × 1, clockwise
	});
	it('refuses an empty upload', () => {
		expectError(() => parsePolygonUpload('   '), /empty/);
	});
});
