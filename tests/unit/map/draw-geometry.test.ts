import { describe, expect, it } from 'vitest';
import proj4 from 'proj4';
import { crsDefinition } from '../../../src/lib/geo/crs';
import { closedCounterClockwise, drawnPolygon, DrawGeometryError, dropRepeats, type XY } from '../../../src/lib/components/map/draw-geometry';
import { closeRing, ringArea2 } from '../../../src/lib/geo/geometry';

// An independent definition of UTM zone 32N (EPSG:32632), written here rather than taken from the app.
const UTM32N = '+proj=utm +zone=32 +datum=WGS84 +units=m +no_defs';
const oracle = proj4(UTM32N, 'EPSG:4326');
// What the map document sends for EPSG:32632 (the app's own definition).
const docDef = crsDefinition(32632)!;

/** Shoelace formula on a closed lon/lat ring, written out again here as the check. */
function shoelace(ring: readonly [number, number][]): number {
	let s = 0;
	for (let i = 0; i < ring.length - 1; i++) s += ring[i][0] * ring[i + 1][1] - ring[i + 1][0] * ring[i][1];
	return s / 2;
}

// A clockwise triangle of about a kilometre in zone 32N (metres).
const clockwise: XY[] = [
	[560000, 5710000],
	[561000, 5709000],
	[559500, 5708800]
];

describe('drawnPolygon', () => {
	it('converts every vertex as proj4 does with an independent UTM 32N definition', () => {
		expect(docDef).toBeTruthy();
		const poly = drawnPolygon(clockwise, docDef);
		const ring = poly.coordinates[0];
		expect(poly.type).toBe('Polygon');
		expect(ring).toHaveLength(4);
		// Every input vertex appears (orientation may have reversed the order).
		for (const v of clockwise) {
			const [lon, lat] = oracle.forward(v);
			const hit = ring.slice(0, 3).find(([a, b]) => Math.abs(a - lon) < 1e-9 && Math.abs(b - lat) < 1e-9);
			expect(hit, `vertex ${v.join(',')}`).toBeDefined();
		}
	});

	it('gives the central meridian on the false easting: (500000, 0) is 9° E on the equator in zone 32N', () => {
		// UTM definition: zone 32 central meridian = 6·32 − 183 = 9° E, false easting 500 000 m,
		// northing 0 on the equator (common practice, no source).
		const poly = drawnPolygon(
			[
				[500000, 0],
				[501000, 0],
				[500000, 1000]
			],
			docDef
		);
		const p = poly.coordinates[0].find(([lon, lat]) => Math.abs(lon - 9) < 1e-9 && Math.abs(lat) < 1e-9);
		expect(p).toBeDefined();
	});

	it('closes the ring and makes it counter-clockwise (RFC 7946) from a clockwise drawing', () => {
		expect(ringArea2(closeRing(clockwise))).toBeLessThan(0);
		const ring = drawnPolygon(clockwise, docDef).coordinates[0];
		expect(ring[0]).toEqual(ring[ring.length - 1]);
		expect(shoelace(ring)).toBeGreaterThan(0);
	});

	it('keeps a counter-clockwise drawing counter-clockwise and in order', () => {
		const ccw = [...clockwise].reverse();
		const ring = drawnPolygon(ccw, docDef).coordinates[0];
		expect(shoelace(ring)).toBeGreaterThan(0);
		const first = oracle.forward(ccw[0]);
		expect(ring[0][0]).toBeCloseTo(first[0], 9);
		expect(ring[0][1]).toBeCloseTo(first[1], 9);
	});

	it('drops a repeated click (double click) and a last point on the first', () => {
		const pts: XY[] = [clockwise[0], clockwise[1], clockwise[1], clockwise[2], clockwise[0]];
		expect(dropRepeats(pts)).toEqual(clockwise);
		expect(drawnPolygon(pts, docDef).coordinates[0]).toHaveLength(4);
	});

	it('does not change its input', () => {
		const pts: XY[] = clockwise.map((p) => [p[0], p[1]]);
		drawnPolygon(pts, docDef);
		expect(pts).toEqual(clockwise);
	});

	it('refuses fewer than 3 distinct points', () => {
		expect(() => drawnPolygon([], docDef)).toThrow(DrawGeometryError);
		expect(() => drawnPolygon(clockwise.slice(0, 2), docDef)).toThrow(/at least 3 different points/);
		expect(() => drawnPolygon([clockwise[0], clockwise[0], clockwise[0]], docDef)).toThrow(/at least 3 different points \(it has 1\)/);
	});

	it('refuses points on one line', () => {
		expect(() =>
			drawnPolygon(
				[
					[560000, 5710000],
					[560500, 5710500],
					[561000, 5711000]
				],
				docDef
			)
		).toThrow(/one line/);
	});

	it('refuses non-finite points and an unknown coordinate system', () => {
		expect(() => drawnPolygon([[NaN, 1], ...clockwise], docDef)).toThrow(DrawGeometryError);
		expect(() => drawnPolygon(clockwise, '+proj=nonsense')).toThrow(DrawGeometryError);
	});
});

describe('closedCounterClockwise', () => {
	it('reverses a clockwise unit square and closes it', () => {
		const cw: [number, number][] = [
			[0, 0],
			[0, 1],
			[1, 1],
			[1, 0]
		];
		const ring = closedCounterClockwise(cw);
		expect(ring).toHaveLength(5);
		expect(ring[0]).toEqual(ring[4]);
		expect(shoelace(ring)).toBeCloseTo(1, 12);
	});

	it('does not close an already closed ring twice', () => {
		const closed: [number, number][] = [
			[0, 0],
			[1, 0],
			[1, 1],
			[0, 0]
		];
		expect(closedCounterClockwise(closed)).toEqual(closed);
	});
});
