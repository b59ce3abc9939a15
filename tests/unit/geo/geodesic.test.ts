import { describe, expect, it } from 'vitest';
import { geodesicDistance, geodesicPathLength } from '../../../src/lib/geo/geodesic';
import { transformer } from '../../../src/lib/geo/crs';

describe('geodesic lengths (GeographicLib is the reference)', () => {
	it('reproduces the package README example: Wellington → Salamanca 19959679.267 m', () => {
		// geographiclib-geodesic README: Inverse(-41.32, 174.81, 40.96, -5.50) prints 19959679.267 m [S].
		expect(geodesicDistance(174.81, -41.32, -5.5, 40.96)).toBeCloseTo(19959679.267, 3);
	});
	it('JFK → LHR is about 5551.76 km (GeographicLib example, 40.6N 73.8W → 51.6N 0.5W)', () => {
		// GeographicLib's example-Geodesic-small.cpp uses these coordinates [S]; the printed result,
		// 5551.76 km, is [from memory].
		expect(geodesicDistance(-73.8, 40.6, -0.5, 51.6) / 1000).toBeCloseTo(5551.76, 2);
	});
	it('sums the legs of a path; a single point has length 0', () => {
		const pts: Array<[number, number]> = [[15, 48], [15.01, 48], [15.01, 48.01]];
		expect(geodesicPathLength(pts)).toBeCloseTo(geodesicDistance(15, 48, 15.01, 48) + geodesicDistance(15.01, 48, 15.01, 48.01), 9);
		expect(geodesicPathLength([[15, 48]])).toBe(0);
		expect(geodesicPathLength([])).toBe(0);
	});
	it('planar UTM lengths over a few km match geodesic ones within the UTM scale band 0.9996–1.0004', () => {
		// Within about 2° of the central meridian the UTM point scale k stays between 0.9996 and about
		// 1.0004 (common practice, no source).
		const { forward } = transformer(4326, 32633);
		for (const [lon, lat] of [[15, 48], [12.5, 48], [16.5, 10], [13, 60], [14, 0.5]]) {
			const a = forward(lon, lat);
			const b = forward(lon + 0.03, lat + 0.02);
			const planar = Math.hypot(b[0] - a[0], b[1] - a[1]);
			const k = planar / geodesicDistance(lon, lat, lon + 0.03, lat + 0.02);
			expect(k).toBeGreaterThan(0.9996 - 1e-6);
			expect(k).toBeLessThan(1.0004);
		}
	});
	it('near a zone edge the length ratio follows the TM point scale formula (Snyder 1987, eq. 8-11)', () => {
		// k = k0 [1 + (1 + C) A²/2 + (5 − 4T + 42C + 13C² − 28e'²) A⁴/24], A = Δλ cos φ, C = e'² cos² φ, T = tan² φ
		const { forward } = transformer(4326, 32633);
		const lon = 17.8, lat = 10;
		const a = forward(lon, lat);
		const b = forward(lon + 0.01, lat + 0.01);
		const ratio = Math.hypot(b[0] - a[0], b[1] - a[1]) / geodesicDistance(lon, lat, lon + 0.01, lat + 0.01);
		const f = 1 / 298.257223563;
		const e2 = f * (2 - f);
		const ep2 = e2 / (1 - e2);
		const phi = ((lat + 0.005) * Math.PI) / 180;
		const A = (((lon + 0.005 - 15) * Math.PI) / 180) * Math.cos(phi);
		const C = ep2 * Math.cos(phi) ** 2;
		const T = Math.tan(phi) ** 2;
		const k = 0.9996 * (1 + ((1 + C) * A * A) / 2 + ((5 - 4 * T + 42 * C + 13 * C * C - 28 * ep2) * A ** 4) / 24);
		expect(Math.abs(ratio - k)).toBeLessThan(5e-6);
		expect(k).toBeGreaterThan(1.0004); // outside the central band: the band is not a zone-wide bound
	});
});
