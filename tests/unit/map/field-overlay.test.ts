import { describe, expect, it } from 'vitest';
import proj4 from 'proj4';
import { fieldBounds, fieldOverlay, type FieldTaskForOverlay } from '../../../src/lib/components/map/field-overlay';
import { geodesicDistanceBearing } from '../../../src/lib/geo/geodesic';

// UTM zone 32N, whose central meridian is 9° E (EPSG:32632).
const UTM32 = '+proj=utm +zone=32 +datum=WGS84 +units=m +no_defs';
const toUtm = proj4('EPSG:4326', UTM32);
const project = (lon: number, lat: number) => toUtm.forward([lon, lat]) as [number, number];

const task = (over: Partial<FieldTaskForOverlay>): FieldTaskForOverlay => ({
	id: 1,
	kind: 'install',
	sensorCode: 'S-1',
	state: 'open',
	target: { lon: 9, lat: 47.5 },
	installed: null,
	offsetM: null,
	offsetFlagged: false,
	...over
});

describe('fieldOverlay', () => {
	it('puts planned and installed points where proj4 puts them; their map distance is the geodesic offset times UTM scale 0.9996 on the central meridian', () => {
		// Installed 0.0002° of latitude north of the site, on the central meridian.
		const installed = { lon: 9, lat: 47.5002 };
		const offset = geodesicDistanceBearing(9, 47.5, installed.lon, installed.lat).distanceM;
		const o = fieldOverlay([task({ state: 'done', installed, offsetM: offset, offsetFlagged: offset > 10 })], project);
		const [item] = o.items;
		expect(item.planned).toEqual(project(9, 47.5));
		expect(item.installed).toEqual(project(9, 47.5002));
		// UTM's scale factor on the central meridian is k0 = 0.9996 (Snyder, Map Projections: A Working
		// Manual, USGS PP 1395, 1987, p. 57 [from memory]), so a short north-south offset there is
		// 0.9996 × the geodesic length on the map.
		const planar = Math.hypot(item.installed![0] - item.planned[0], item.installed![1] - item.planned[1]);
		expect(planar / offset).toBeCloseTo(0.9996, 5);
		// One second of latitude ≈ 30.9 m near 47.5° N, so 0.0002° ≈ 22.2 m: beyond a 10 m tolerance
		// (common practice, no source, for the figure of 30.9 m per second [from memory]).
		expect(offset).toBeGreaterThan(22);
		expect(offset).toBeLessThan(22.5);
		expect(item.flagged).toBe(true);
	});

	it('leaves cancelled tasks out and keeps tasks not yet done without an installed point', () => {
		const o = fieldOverlay([task({ id: 1, state: 'cancelled' }), task({ id: 2, state: 'blocked' })], project);
		expect(o.items.map((i) => i.id)).toEqual([2]);
		expect(o.items[0].installed).toBeNull();
	});
});

describe('fieldBounds', () => {
	it('frames every planned and installed point with the padding, and is null when empty', () => {
		const near = { lon: 9.001, lat: 47.5 };
		const o = fieldOverlay([task({ id: 1, state: 'done', installed: near, offsetM: geodesicDistanceBearing(9, 47.5, near.lon, near.lat).distanceM }), task({ id: 2, target: { lon: 8.999, lat: 47.501 } })], project);
		const pts = [project(9, 47.5), project(9.001, 47.5), project(8.999, 47.501)];
		const b = fieldBounds(o, 100)!;
		expect(b[0]).toBeCloseTo(Math.min(...pts.map((p) => p[0])) - 100, 6);
		expect(b[3]).toBeCloseTo(Math.max(...pts.map((p) => p[1])) + 100, 6);
		expect(fieldBounds({ items: [] })).toBeNull();
	});

	it('does not stretch the frame to an installation kilometres from its site, but still draws it', () => {
		const far = { lon: 10, lat: 47.5 }; // about 75 km east of the site at 47.5° N
		const offsetM = geodesicDistanceBearing(9, 47.5, far.lon, far.lat).distanceM;
		expect(offsetM).toBeGreaterThan(70_000);
		const o = fieldOverlay([task({ state: 'done', installed: far, offsetM, offsetFlagged: true })], project);
		const [x, y] = project(9, 47.5);
		expect(fieldBounds(o, 100)).toEqual([x - 100, y - 100, x + 100, y + 100]);
		expect(o.items[0].installed).toEqual(project(10, 47.5));
	});
});
