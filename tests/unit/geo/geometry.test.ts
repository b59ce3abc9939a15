import { describe, expect, it } from 'vitest';
import { boundsOf, labelPosition, orientRing, pointInPolygons, ringArea2, selfIntersection, type Ring } from '../../../src/lib/geo/geometry';
import { parseGeoJsonPolygons, PolygonError } from '../../../src/lib/geo/polygons';

// An L-shaped (concave) zone: the 10 × 10 square without its upper-right 9 × 9 (worked by hand:
// area 100 − 81 = 19; its area centroid, (2.9, 2.9), lies in the missing part, outside the zone).
const L: Ring = [[0, 0], [10, 0], [10, 1], [1, 1], [1, 10], [0, 10], [0, 0]];

describe('geometry on turf', () => {
	it('ringArea2 is twice the planar shoelace area, signed by turn', () => {
		expect(ringArea2(L) / 2).toBe(19);
		expect(ringArea2([...L].reverse()) / 2).toBe(-19);
	});

	it('orientRing turns a ring as asked (RFC 7946: exteriors counter-clockwise)', () => {
		expect(ringArea2(orientRing([...L].reverse(), true))).toBeGreaterThan(0);
		expect(ringArea2(orientRing(L, false))).toBeLessThan(0);
	});

	it('pointInPolygons leaves out the concave notch and holes', () => {
		expect(pointInPolygons([0.5, 5], [[L]])).toBe(true);
		expect(pointInPolygons([5, 5], [[L]])).toBe(false);
		const square: Ring = [[0, 0], [4, 0], [4, 4], [0, 4], [0, 0]];
		const hole: Ring = [[1, 1], [1, 3], [3, 3], [3, 1], [1, 1]];
		expect(pointInPolygons([2, 2], [[square, hole]])).toBe(false);
		expect(pointInPolygons([0.5, 2], [[square, hole]])).toBe(true);
		expect(pointInPolygons([0.5, 2], [])).toBe(false);
	});

	it('boundsOf holds points and rings; null for nothing', () => {
		expect(boundsOf([[20, -3]], [[L]])).toEqual([0, -3, 20, 10]);
		expect(boundsOf([])).toBeNull();
	});

	it('labelPosition puts a concave zone\'s label inside it, where the area centroid is not', () => {
		const p = labelPosition([[L]], 0.01)!;
		expect(pointInPolygons(p, [[L]])).toBe(true);
		expect(pointInPolygons([2.9, 2.9], [[L]])).toBe(false);
		// The corner square of the L, at its pole: ~0.5 from the nearest edges (polylabel's purpose).
		expect(p[0]).toBeLessThan(1.5);
		expect(p[1]).toBeLessThan(1.5);
		expect(labelPosition([])).toBeNull();
	});

	it('selfIntersection finds the crossing of a bow-tie and nothing in a simple ring', () => {
		expect(selfIntersection([[[0, 0], [2, 2], [2, 0], [0, 2], [0, 0]]])).toEqual([1, 1]);
		expect(selfIntersection([L])).toBeNull();
	});
});

describe('a bow-tie study area, exclusion or zone is refused', () => {
	it('names the feature and where the outline crosses itself', () => {
		// Lobes of unequal size, so the ring still encloses area: edges y = x/2 and y = 1 − x/4 (in
		// hundredths of a degree) cross at x = 4/3, y = 2/3 (worked by hand).
		const bowTie = { type: 'Feature', properties: { name: 'North fen' }, geometry: { type: 'Polygon', coordinates: [[[7, 50], [7.04, 50.02], [7.04, 50], [7, 50.01], [7, 50]]] } };
		expect(() => parseGeoJsonPolygons({ type: 'FeatureCollection', features: [bowTie] })).toThrow(PolygonError);
		expect(() => parseGeoJsonPolygons({ type: 'FeatureCollection', features: [bowTie] })).toThrow(/feature 1 "North fen".*crosses itself near lon\/lat 7\.013333, 50\.006667/);
	});
});
