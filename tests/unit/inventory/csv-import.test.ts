import { describe, expect, it } from 'vitest';
import { importSensorsCsv } from '../../../src/lib/server/inventory';

const TYPES = ['capacitance probe', 'CRNS'];
const opts = { knownTypes: TYPES };

describe('importSensorsCsv', () => {
	it('imports lon/lat rows with defaults, canonical type names and trimmed cells', () => {
		const csv = '\ufeffid,serial,type,lon,lat,install_date,status,notes\r\n' + 'P-01,SN100, Capacitance Probe ,-3.51,54.48,2025-04-02,active,"north slope, under fence"\r\n' + 'C-01,CR-7,crns,-3.5,54.47,,,\r\n';
		const res = importSensorsCsv(csv, opts);
		expect(res).toEqual({
			ok: true,
			rows: [
				{ id: 'P-01', serial: 'SN100', type: 'capacitance probe', lon: -3.51, lat: 54.48, installDate: '2025-04-02', status: 'active', notes: 'north slope, under fence' },
				{ id: 'C-01', serial: 'CR-7', type: 'CRNS', lon: -3.5, lat: 54.47, installDate: null, status: 'active', notes: null }
			]
		});
	});

	it('converts x, y + crs to WGS 84: UTM 33N (500 000 m, 0 m) is (15°E, 0°)', () => {
		// UTM zone 33 central meridian 15°E, false easting 500 km (UTM definition) [from memory].
		const res = importSensorsCsv('id,serial,type,x,y,crs\nP1,S1,CRNS,500000,0,EPSG:32633\n', opts);
		expect(res.ok).toBe(true);
		if (res.ok) {
			expect(res.rows[0].lon).toBeCloseTo(15, 9);
			expect(res.rows[0].lat).toBeCloseTo(0, 9);
		}
	});

	it('reports every problem with its spreadsheet row and field, importing nothing', () => {
		const csv = [
			'id,serial,type,lon,lat,install_date,status',
			'P1,S1,CRNS,200,54,2025-01-01,active', // row 2: lon out of range
			'P2,S2,radar,-3,54,2025-02-30,broken', // row 3: type, date, status
			'',
			'P1,S3,CRNS,-3,54,,', // row 5: duplicate of row 2's id? row 2 is invalid, so no
			'p1,S4,CRNS,-3,54,,', // row 6: duplicate of row 5 (ids compare case-insensitively)
			',S5,CRNS,-3,abc,,' // row 7: id missing, lat not a number
		].join('\n');
		const res = importSensorsCsv(csv, opts);
		expect(res.ok).toBe(false);
		if (res.ok) return;
		expect(res.errors).toEqual([
			{ row: 2, field: 'lon', message: 'lon 200 is outside −180…180' },
			{ row: 3, field: 'install_date', message: 'install_date is not a real calendar date' },
			{ row: 3, field: 'status', message: 'status must be one of active, faulty, retired' },
			{ row: 3, field: 'type', message: 'unknown sensor type "radar" (known: capacitance probe, CRNS)' },
			{ row: 6, field: 'id', message: 'duplicate id "p1" (first used in row 5)' },
			{ row: 7, field: 'id', message: 'id is required' },
			{ row: 7, field: 'lat', message: 'lat must be a number' }
		]);
	});

	it('refuses unknown and missing columns at row 1', () => {
		const res = importSensorsCsv('id,serial,latitude,longitude\nP1,S1,54,-3\n', opts);
		expect(res.ok).toBe(false);
		if (res.ok) return;
		expect(res.errors).toContainEqual({ row: 1, field: 'latitude', message: expect.stringContaining('unknown column "latitude"') });
		expect(res.errors).toContainEqual({ row: 1, field: 'type', message: 'the required column "type" is missing' });
		expect(res.errors).toContainEqual({ row: 1, field: 'lon', message: 'position columns are missing: lon and lat, or x, y and crs' });
	});

	it('refuses mixed positions, half positions and a bad CRS', () => {
		const csv = 'id,serial,type,lon,lat,x,y,crs\nA,1,CRNS,-3,54,1,2,EPSG:32630\nB,2,CRNS,-3,,,,\nC,3,CRNS,,,1,2,EPSG:99999\nD,4,CRNS,,,1,2,\n';
		const res = importSensorsCsv(csv, opts);
		expect(res.ok).toBe(false);
		if (res.ok) return;
		expect(res.errors).toEqual([
			{ row: 2, field: 'lon', message: 'give either lon/lat or x/y with crs, not both' },
			{ row: 3, field: 'lat', message: 'lat is required with lon' },
			{ row: 4, field: 'crs', message: expect.stringContaining('unknown CRS EPSG:99999') },
			{ row: 5, field: 'crs', message: 'crs is required with x and y (e.g. EPSG:32633)' }
		]);
	});

	it('counts lines correctly across quoted line breaks and blank lines', () => {
		const csv = 'id,serial,type,lon,lat,notes\nA,1,CRNS,-3,54,"two\nlines"\n\nB,2,CRNS,-3,95,\n';
		const res = importSensorsCsv(csv, opts);
		expect(res).toEqual({ ok: false, errors: [{ row: 5, field: 'lat', message: 'lat 95 is outside −90…90' }] });
	});

	it('refuses an empty file, a header alone, ragged rows and too many rows', () => {
		expect(importSensorsCsv('  \n', opts)).toEqual({ ok: false, errors: [{ row: 0, field: '', message: 'the file is empty' }] });
		expect(importSensorsCsv('id,serial,type,lon,lat\n', opts)).toEqual({ ok: false, errors: [{ row: 0, field: '', message: 'the file has a header but no sensors' }] });
		expect(importSensorsCsv('id,serial,type,lon,lat\nA,1,CRNS,-3\n', opts)).toEqual({ ok: false, errors: [{ row: 2, field: '', message: 'expected 5 cells, found 4' }] });
		const many = 'id,serial,type,lon,lat\n' + Array.from({ length: 4 }, (_, i) => `S${i},${i},CRNS,0,0`).join('\n');
		expect(importSensorsCsv(many, { ...opts, maxRows: 3 }).ok).toBe(false);
	});

	it('explains a semicolon-separated file', () => {
		expect(importSensorsCsv('id;serial;type;lon;lat\nA;1;CRNS;0;0\n', opts)).toEqual({
			ok: false,
			errors: [{ row: 1, field: '', message: 'the columns are separated by semicolons or tabs; save the file as comma-separated CSV' }]
		});
	});

	it('says when no sensor types exist yet', () => {
		const res = importSensorsCsv('id,serial,type,lon,lat\nA,1,CRNS,0,0\n', { knownTypes: [] });
		expect(res).toEqual({ ok: false, errors: [{ row: 2, field: 'type', message: 'unknown sensor type "CRNS" (known: none are defined yet)' }] });
	});

	it('refuses ids that could be read as a formula or a path', () => {
		const res = importSensorsCsv('id,serial,type,lon,lat\n=HYPERLINK(1),1,CRNS,0,0\n', opts);
		expect(res.ok).toBe(false);
		if (!res.ok) expect(res.errors[0].field).toBe('id');
	});
});
