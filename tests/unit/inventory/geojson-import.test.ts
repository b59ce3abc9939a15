import { describe, expect, it } from 'vitest';
import { importSensorsGeoJson } from '../../../src/lib/server/inventory';

const opts = { knownTypes: ['capacitance probe', 'CRNS'] };
const pt = (coords: unknown, props: Record<string, unknown>, id?: unknown) => ({ type: 'Feature', ...(id !== undefined ? { id } : {}), geometry: { type: 'Point', coordinates: coords }, properties: props });

describe('importSensorsGeoJson', () => {
	it('imports Point features, taking [lon, lat] order (RFC 7946 §3.1.1) and the feature id', () => {
		const fc = { type: 'FeatureCollection', features: [pt([-3.51, 54.48], { serial: 1042, type: 'CRNS', status: 'faulty' }, 'C-01'), pt([-3.5, 54.47, 210], { id: 'P-01', serial: 'A', type: 'capacitance probe', install_date: '2024-09-30' })] };
		const res = importSensorsGeoJson(JSON.stringify(fc), opts);
		expect(res).toEqual({
			ok: true,
			rows: [
				{ id: 'C-01', serial: '1042', type: 'CRNS', lon: -3.51, lat: 54.48, installDate: null, status: 'faulty', notes: null },
				{ id: 'P-01', serial: 'A', type: 'capacitance probe', lon: -3.5, lat: 54.47, installDate: '2024-09-30', status: 'active', notes: null }
			]
		});
	});

	it('reports per-feature problems with feature numbers', () => {
		const fc = {
			type: 'FeatureCollection',
			features: [
				pt([54.48, -300], { id: 'A', serial: '1', type: 'CRNS' }), // lat out of range (swapped order)
				{ type: 'Feature', geometry: { type: 'LineString', coordinates: [[0, 0], [1, 1]] }, properties: { id: 'B' } },
				pt([0, 0], { id: 'C', serial: '1', type: 'CRNS', lon: 1 }),
				pt([0, 0], { id: 'D', serial: '1', type: 'CRNS' }, 'E'),
				pt([0, 0], { id: 'F', serial: '2', type: 'CRNS' }),
				pt([1, 1], { id: 'f', serial: '3', type: 'CRNS' })
			]
		};
		const res = importSensorsGeoJson(fc, opts);
		expect(res.ok).toBe(false);
		if (res.ok) return;
		expect(res.errors).toEqual([
			{ row: 1, field: 'lat', message: 'lat -300 is outside −90…90' },
			{ row: 2, field: 'geometry', message: 'geometry must be a Point' },
			{ row: 3, field: 'lon', message: 'the position comes from the geometry; remove the "lon" property' },
			{ row: 4, field: 'id', message: 'feature id "E" differs from properties.id "D"' },
			{ row: 6, field: 'id', message: 'duplicate id "f" (first used in row 5)' }
		]);
	});

	it('refuses non-JSON, a crs member, a non-collection and an empty collection', () => {
		expect(importSensorsGeoJson('{nope', opts)).toEqual({ ok: false, errors: [{ row: 0, field: '', message: 'the file is not valid JSON' }] });
		const withCrs = { type: 'FeatureCollection', crs: { type: 'name', properties: { name: 'EPSG:32633' } }, features: [] };
		expect(importSensorsGeoJson(withCrs, opts)).toMatchObject({ ok: false, errors: [{ field: 'crs' }] });
		expect(importSensorsGeoJson({ type: 'Point', coordinates: [0, 0] }, opts).ok).toBe(false);
		expect(importSensorsGeoJson({ type: 'FeatureCollection', features: [] }, opts)).toEqual({ ok: false, errors: [{ row: 0, field: '', message: 'the collection has no features' }] });
	});
});
