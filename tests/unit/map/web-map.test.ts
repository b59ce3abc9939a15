import { describe, expect, it } from 'vitest';
import geodesic from 'geographiclib-geodesic';
import proj4 from 'proj4';
import { crsDefinition } from '../../../src/lib/geo/crs';
import { backdropLonLatBounds, DISK_SEGMENTS, diskOutline, lonLatBounds, lonLatToWebMercator, webMercatorToLonLat, webProjection, WebMapError } from '../../../src/lib/map/web-map';

// GeographicLib's geodesic on WGS 84 is the oracle for ground distances (geographiclib-geodesic, as
// src/lib/geo/geodesic.ts uses it; called directly here, not through our wrapper).
const WGS84 = geodesic.Geodesic.WGS84;
const ground = (a: [number, number], b: [number, number]) => WGS84.Inverse(a[1], a[0], b[1], b[0]).s12 as number;

// The demo network's working CRS (UTM 54S) and a point in it (src/lib/server/layers/demo-data.ts's centre).
const UTM54S = crsDefinition(32754)!;
const centre: [number, number] = [740_000, 6_440_000];
// An independent definition of UTM zone 54S, written here rather than taken from the app.
const oracle54 = proj4('+proj=utm +zone=54 +south +datum=WGS84 +units=m +no_defs', 'EPSG:4326');

describe('webProjection', () => {
	const P = webProjection(UTM54S);
	it('converts working-CRS metres to lon/lat as an independent UTM 54S definition does, and back', () => {
		const [lon, lat] = P.toLonLat(centre);
		const [elon, elat] = oracle54.forward(centre);
		expect(lon).toBeCloseTo(elon, 9);
		expect(lat).toBeCloseTo(elat, 9);
		// A click on the web map comes back as the same working-CRS metres (to well under a millimetre).
		const [x, y] = P.toWorking(lon, lat);
		expect(Math.abs(x - centre[0])).toBeLessThan(1e-3);
		expect(Math.abs(y - centre[1])).toBeLessThan(1e-3);
	});
	it('measures distances in working-CRS metres, not in Mercator metres', () => {
		const a = P.toLonLat(centre);
		const b = P.toLonLat([centre[0] + 300, centre[1] + 400]);
		expect(P.distance(a, b)).toBeCloseTo(500, 6);
		// Mercator metres at about 32° S are 1/cos φ ≈ 1.18 times longer: the map must not show those.
		const [ax, ay] = lonLatToWebMercator(...a);
		const [bx, by] = lonLatToWebMercator(...b);
		expect(Math.hypot(bx - ax, by - ay) / 500).toBeGreaterThan(1.15);
	});
	it('refuses a definition proj4 cannot read', () => {
		expect(() => webProjection('+proj=nonsense')).toThrow(WebMapError);
	});
});

describe('diskOutline (sensing disks on the web map)', () => {
	const P = webProjection(UTM54S);
	for (const radius of [30, 150, 240]) {
		it(`keeps a ${radius} m disk true to scale: every vertex lies ${radius} m from the centre by the WGS 84 geodesic`, () => {
			const c = P.toLonLat(centre);
			const ring = diskOutline(centre, radius, P.toLonLat);
			expect(ring).toHaveLength(DISK_SEGMENTS);
			for (const v of ring) {
				// UTM's point scale stays within 0.9996–1.0010 inside a zone (common practice, no source): 0.15 %.
				expect(Math.abs(ground(c, v) - radius) / radius).toBeLessThan(1.5e-3);
			}
		});
	}
	it('the same check fails for a circle of radius r in Mercator metres (what a Leaflet circle on EPSG:3857 would be without its correction)', () => {
		const c = P.toLonLat(centre);
		const [mx, my] = lonLatToWebMercator(...c);
		const naive = Array.from({ length: 36 }, (_, k) => webMercatorToLonLat([mx + 150 * Math.cos((k * Math.PI) / 18), my + 150 * Math.sin((k * Math.PI) / 18)]));
		const worst = Math.max(...naive.map((v) => Math.abs(ground(c, v) - 150) / 150));
		expect(worst).toBeGreaterThan(0.1);
	});
	it('stays true to scale far from the equator and near a zone edge (UTM 33N at 69° N, 2.5° from its central meridian)', () => {
		const Q = webProjection(crsDefinition(32633)!);
		const at = proj4('EPSG:4326', crsDefinition(32633)!).forward([17.5, 69]) as [number, number];
		const c = Q.toLonLat(at);
		for (const v of diskOutline(at, 100, Q.toLonLat, 36)) expect(Math.abs(ground(c, v) - 100) / 100).toBeLessThan(1.5e-3);
	});
	it('refuses a radius that is not positive and too few segments', () => {
		expect(() => diskOutline(centre, 0, P.toLonLat)).toThrow(RangeError);
		expect(() => diskOutline(centre, Number.NaN, P.toLonLat)).toThrow(RangeError);
		expect(() => diskOutline(centre, 10, P.toLonLat, 4)).toThrow(RangeError);
	});
});

describe('boxes on the web map', () => {
	const P = webProjection(UTM54S);
	it('lonLatBounds holds every point of a working-CRS box (a box in UTM is slightly turned in lon/lat)', () => {
		const b: [number, number, number, number] = [735_000, 6_435_000, 745_000, 6_445_000];
		const ll = lonLatBounds(b, P.toLonLat);
		for (const p of [[735_000, 6_435_000], [745_000, 6_445_000], [735_000, 6_445_000], [745_000, 6_435_000], [740_000, 6_435_000]] as const) {
			const [lon, lat] = oracle54.forward([p[0], p[1]]);
			expect(lon).toBeGreaterThanOrEqual(ll[0] - 1e-12);
			expect(lat).toBeGreaterThanOrEqual(ll[1] - 1e-12);
			expect(lon).toBeLessThanOrEqual(ll[2] + 1e-12);
			expect(lat).toBeLessThanOrEqual(ll[3] + 1e-12);
		}
	});
	it('a backdrop in EPSG:3857 gets the lon/lat of its corners (spherical Mercator, R = 6 378 137 m)', () => {
		// Inverse spherical Mercator written out: lon = x / R, lat = 2·atan(e^(y/R)) − π/2 (EPSG's
		// Popular Visualisation Pseudo-Mercator, method 1024 [from memory]).
		const R = 6378137;
		const b: [number, number, number, number] = [15_000_000, -4_200_000, 15_010_000, -4_190_000];
		const ll = backdropLonLatBounds({ epsg: 3857, bounds: b }, 32754, P);
		const deg = (r: number) => (r * 180) / Math.PI;
		expect(ll[0]).toBeCloseTo(deg(b[0] / R), 9);
		expect(ll[2]).toBeCloseTo(deg(b[2] / R), 9);
		expect(ll[1]).toBeCloseTo(deg(2 * Math.atan(Math.exp(b[1] / R)) - Math.PI / 2), 9);
		expect(ll[3]).toBeCloseTo(deg(2 * Math.atan(Math.exp(b[3] / R)) - Math.PI / 2), 9);
		expect(() => backdropLonLatBounds({ epsg: 3035, bounds: b }, 32754, P)).toThrow(WebMapError);
	});
});
