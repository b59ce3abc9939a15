import { describe, expect, it } from 'vitest';
import { compassPoint, geodesicDistanceBearing } from '../../../src/lib/geo/geodesic';

describe('geodesicDistanceBearing', () => {
	it('Wellington → Salamanca matches the worked example of GeographicLib’s documentation', () => {
		// Karney, GeographicLib JavaScript docs, inverse example: s12 = 19959679.267 m, azi1 = 161.067669986° [from memory].
		const r = geodesicDistanceBearing(174.81, -41.32, -5.5, 40.96);
		expect(r.distanceM).toBeCloseTo(19959679.267, 2);
		expect(r.bearingDeg).toBeCloseTo(161.067669986, 6);
	});
	it('a point due north has bearing 0°, due east along the equator 90°, due west 270°', () => {
		// Meridians run north–south and the equator is a geodesic (common practice, no source).
		expect(geodesicDistanceBearing(10, 50, 10, 50.01).bearingDeg).toBeCloseTo(0, 9);
		expect(geodesicDistanceBearing(0, 0, 0.01, 0).bearingDeg).toBeCloseTo(90, 9);
		expect(geodesicDistanceBearing(0, 0, -0.01, 0).bearingDeg).toBeCloseTo(270, 9);
		// One degree of longitude on the equator is a × π / 180 with a = 6 378 137 m (WGS 84, NIMA TR8350.2).
		expect(geodesicDistanceBearing(0, 0, 1, 0).distanceM).toBeCloseTo((6378137 * Math.PI) / 180, 3);
	});
	it('coincident points are 0 m apart with bearing 0', () => {
		expect(geodesicDistanceBearing(7, 45, 7, 45)).toEqual({ distanceM: 0, bearingDeg: 0 });
	});
	it('compassPoint names the 16 points, wrapping at north', () => {
		expect([0, 22.5, 90, 180, 247.5, 348.8, 359, -10].map(compassPoint)).toEqual(['N', 'NNE', 'E', 'S', 'WSW', 'N', 'N', 'N']);
	});
});
