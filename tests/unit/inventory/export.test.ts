import Papa from 'papaparse';
import { describe, expect, it } from 'vitest';
import { csvTextCell, exportSensorsCsv, exportSensorsGeoJson, importSensorsCsv, importSensorsGeoJson, type SensorRecord } from '../../../src/lib/server/inventory';

const sensors: SensorRecord[] = [
	{ id: 'P-01', serial: '=1+2', type: 'capacitance probe', lon: -3.512345678, lat: 54.481, installDate: '2025-04-02', status: 'active', notes: 'gate, "blue" post\nsecond line' },
	{ id: 'C-01', serial: '@SUM(A1)', type: 'CRNS', lon: 12.5, lat: -0.25, installDate: null, status: 'retired', notes: null }
];

describe('csvTextCell: CSV injection escaping (OWASP "CSV Injection" guidance)', () => {
	it.each([
		['=1+2', "'=1+2"],
		['+41 79', "'+41 79"],
		['-2', "'-2"],
		['@SUM(A1)', "'@SUM(A1)"],
		['\tcmd', "'\tcmd"],
		['\rcmd', '"\'\rcmd"'], // prefixed, then quoted because it holds a CR (RFC 4180)
		['plain', 'plain'],
		['a,b', '"a,b"'],
		['say "hi"', '"say ""hi"""'],
		['=A1,"x"', '"\'=A1,""x"""']
	])('%j → %j', (input, expected) => {
		expect(csvTextCell(input)).toBe(expected);
	});
});

describe('exportSensorsCsv', () => {
	it('writes the header and rows; coordinates stay numbers; text cells are escaped', () => {
		const csv = exportSensorsCsv(sensors);
		const lines = csv.split('\r\n');
		expect(lines[0]).toBe('id,serial,type,lon,lat,install_date,status,notes');
		expect(lines[1]).toBe(`P-01,'=1+2,capacitance probe,-3.5123457,54.481,2025-04-02,active,"gate, ""blue"" post\nsecond line"`);
		// A standard CSV parser (papaparse) reads back exactly the escaped values.
		const parsed = Papa.parse<string[]>(csv, { skipEmptyLines: true }).data;
		expect(parsed[2]).toEqual(['C-01', "'@SUM(A1)", 'CRNS', '12.5', '-0.25', '', 'retired', '']);
		for (const row of parsed.slice(1)) for (const cell of [row[0], row[1], row[2], row[7]]) expect(cell).not.toMatch(/^[=+\-@\t\r]/);
	});

	it('round-trips through importSensorsCsv (escaped cells keep their quote)', () => {
		const res = importSensorsCsv(exportSensorsCsv(sensors), { knownTypes: ['capacitance probe', 'CRNS'] });
		expect(res.ok).toBe(true);
		if (res.ok) {
			expect(res.rows[0]).toEqual({ ...sensors[0], serial: "'=1+2", lon: -3.5123457 });
			expect(res.rows[1]).toEqual({ ...sensors[1], serial: "'@SUM(A1)" });
		}
	});
});

describe('exportSensorsGeoJson', () => {
	it('RFC 7946: [lon, lat] positions, no crs member, round-trips through the importer', () => {
		const fc = exportSensorsGeoJson(sensors);
		expect('crs' in fc).toBe(false);
		expect(fc.features[1].geometry).toEqual({ type: 'Point', coordinates: [12.5, -0.25] });
		expect(fc.features[0].properties.serial).toBe('=1+2'); // JSON is not a spreadsheet: no escaping
		const back = importSensorsGeoJson(JSON.stringify(fc), { knownTypes: ['capacitance probe', 'CRNS'] });
		expect(back).toEqual({ ok: true, rows: [{ ...sensors[0], lon: -3.5123457 }, sensors[1]] });
	});
});
