import { describe, expect, it } from 'vitest';
import { routeGpx } from '../../../src/lib/geo/gpx';
import { checkGpx } from '../../helpers/gpx-rules';

describe('routeGpx', () => {
	const points = [
		{ lon: 10.1, lat: 50.2, name: '1. Move P-03', desc: 'From 50.1, 10.0 <north> & "east"', sym: 'Flag' },
		{ lon: 10.2, lat: 50.3, name: '2. Install S-01' }
	];
	it('meets the GPX 1.1 schema’s structural rules, with the waypoints in the order given', () => {
		const xml = routeGpx({ name: 'Route of Tobiah', desc: 'Demo', creator: 'Cairnfield', time: new Date('2026-12-02T06:00:00Z'), points });
		const c = checkGpx(xml);
		expect(c.broken).toEqual([]);
		expect(c.waypoints.map((w) => w.name)).toEqual(['1. Move P-03', '2. Install S-01']);
		expect(c.waypoints[0]).toMatchObject({ lat: 50.2, lon: 10.1, desc: 'From 50.1, 10.0 <north> & "east"' });
		expect(c.routePoints.map((w) => w.name)).toEqual(['1. Move P-03', '2. Install S-01']);
	});
	it('an empty route is still a valid document; longitudes wrap into −180…180; bad latitudes are refused', () => {
		expect(checkGpx(routeGpx({ name: 'Empty', creator: 'Cairnfield', points: [] })).broken).toEqual([]);
		expect(checkGpx(routeGpx({ name: 'Wrap', creator: 'Cairnfield', points: [{ lon: 180, lat: 0, name: 'x' }] })).waypoints[0].lon).toBe(-180);
		expect(() => routeGpx({ name: 'Bad', creator: 'C', points: [{ lon: 0, lat: 91, name: 'x' }] })).toThrow(RangeError);
	});
	it('the rule checker itself catches broken files', () => {
		// Elements out of order, no creator, wrong version, a point without lon: each a rule of gpx.xsd.
		const bad = `<?xml version="1.0"?><gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.0"><wpt lat="1"><name>a</name></wpt><metadata/></gpx>`;
		const broken = checkGpx(bad).broken.join('\n');
		expect(broken).toMatch(/version/);
		expect(broken).toMatch(/creator/);
		expect(broken).toMatch(/lon missing/);
		expect(broken).toMatch(/<metadata> comes after <wpt>/);
		expect(checkGpx('<gpx version="1.1" creator="x"/>').broken.join()).toMatch(/not <gpx> in/);
	});
});
