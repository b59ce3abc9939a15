import { readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createNetwork } from '../../src/lib/server/services/networks';
import { findNetwork, type NetworkRow } from '../../src/lib/server/repositories/networks';
import { createSensorType, sensorTypeInput, sensorTypesOf } from '../../src/lib/server/services/sensor-types';
import {
	createSensor,
	editSensor,
	exportSensors,
	importSensors,
	parseListQuery,
	removeSensor,
	sensorPage,
	SensorInputError,
	validateSensorInput
} from '../../src/lib/server/services/sensors';
import { seedDemoInventory } from '../../seeds/demo-inventory';
import { workingCrs } from '../../src/lib/server/services/working-crs';
import { createTestDatabase, jsonValue, makeMember, type TestDb } from '../helpers/db';

const demoCsv = readFileSync(path.resolve(import.meta.dirname, '../../data/demo/sensors.csv'), 'utf8');
const studyArea = JSON.parse(readFileSync(path.resolve(import.meta.dirname, '../../data/demo/study-area.geojson'), 'utf8')).features[0].geometry;

describe('sensors service', () => {
	let t: TestDb;
	let member: { userId: number; organisationId: number };
	beforeAll(async () => {
		t = await createTestDatabase();
		member = await makeMember(t.db, 'analyst');
	});
	afterAll(async () => t?.drop());

	let n = 0;
	async function freshNetwork(opts: { area?: boolean } = {}): Promise<NetworkRow> {
		const id = await createNetwork(t.db, member.organisationId, member.userId, { name: `Network ${++n}`, description: '', crsEpsg: null, publicText: '' });
		if (opts.area !== false) await t.db('networks').where({ id }).update({ study_area: JSON.stringify(studyArea) });
		await seedDemoInventory(t.db, id);
		return (await findNetwork(t.db, id))!;
	}

	it('the demo seed creates the two sensor types once (idempotent)', async () => {
		const net = await freshNetwork();
		await seedDemoInventory(t.db, net.id);
		const types = await sensorTypesOf(t.db, net.id);
		expect(types.map((x) => [x.name, x.radiusM, x.footprint, x.mobility])).toEqual([
			// A neutron sensor's reading covers about 130–240 m around it (Köhli et al. 2015): an area sensor.
			['cosmic-ray neutron sensor', 150, 'area', 'fixed'],
			// seeds/demo-inventory.ts: the demo probe stands for the ground within 1 km (the demo's own
			// setting) but still senses a point: its radius is a siting choice, not a footprint.
			['soil moisture probe', 1000, 'point', 'relocatable']
		]);
	});

	it('what a sensor type senses is its own setting (default a point), checked and kept', async () => {
		const net = await freshNetwork();
		const base = { radiusM: 200, mobility: 'fixed', relocationMinutes: null, notes: '' } as const;
		const a = await createSensorType(t.db, member.organisationId, net.id, member.userId, sensorTypeInput.parse({ ...base, name: 'neutron mast', footprint: 'area' }));
		const p = await createSensorType(t.db, member.organisationId, net.id, member.userId, sensorTypeInput.parse({ ...base, name: 'wide probe' }));
		const types = await sensorTypesOf(t.db, net.id);
		expect(types.find((x) => x.id === a)?.footprint).toBe('area');
		expect(types.find((x) => x.id === p)?.footprint).toBe('point');
		const bad = sensorTypeInput.safeParse({ ...base, name: 'odd', footprint: 'line' });
		expect(bad.success).toBe(false);
		expect(bad.error?.issues[0].path).toEqual(['footprint']);
	});

	it('a sensor type name is unique within the network', async () => {
		const net = await freshNetwork();
		await expect(createSensorType(t.db, member.organisationId, net.id, member.userId, { name: 'soil moisture probe', radiusM: 20, mobility: 'mobile', relocationMinutes: null, notes: '' })).rejects.toMatchObject({ code: 'name_taken' });
	});

	it('importing the demo CSV stores 14 sensors, keeps POINT in step (ST_X = lon on MariaDB) and audits the count', async () => {
		const net = await freshNetwork();
		const r = await importSensors(t.db, net, member.userId, demoCsv, 'csv', 'sensors.csv');
		expect(r).toEqual({ ok: true, count: 14 });
		// MariaDB 10.11 has no geographic axis order: WKT 'POINT(lon lat)' with SRID 4326 gives ST_X = lon.
		const rows = await t.db('sensors').select('code', 'lon', 'lat', t.db.raw('ST_X(position) as px'), t.db.raw('ST_Y(position) as py'), t.db.raw('ST_SRID(position) as srid')).where({ network_id: net.id });
		expect(rows).toHaveLength(14);
		for (const row of rows) {
			expect(Number(row.px)).toBeCloseTo(Number(row.lon), 9);
			expect(Number(row.py)).toBeCloseTo(Number(row.lat), 9);
			expect(Number(row.srid)).toBe(4326);
		}
		const p01 = rows.find((x: { code: string }) => x.code === 'VV-P01');
		expect(Number(p01.lon)).toBeCloseTo(143.485353, 9);
		const audit = await t.db('audit_log').where({ action: 'sensor.import', object_id: String(net.id) }).first();
		expect(jsonValue(audit.after)).toMatchObject({ format: 'csv', count: 14 });
	});

	it('an import writes its rows in one multi-row INSERT (500 rows a statement), not one per row', async () => {
		const net = await freshNetwork();
		await t.db('sensors').where({ network_id: net.id }).delete();
		const sql: string[] = [];
		const onQuery = (q: { sql: string }) => sql.push(q.sql);
		t.db.on('query', onQuery);
		const r = await importSensors(t.db, net, member.userId, demoCsv, 'csv', 'sensors.csv');
		t.db.off('query', onQuery);
		expect(r).toEqual({ ok: true, count: 14 });
		expect(sql.filter((q) => /^insert into `sensors`/i.test(q))).toHaveLength(1);
		expect(await t.db('sensors').where({ network_id: net.id })).toHaveLength(14);
	});

	it('one bad row stores nothing and the report names the row and the field', async () => {
		const net = await freshNetwork();
		const lines = demoCsv.trimEnd().split('\n');
		lines[5] = lines[5].replace('143.538715', 'east-ish'); // line 6 of the file (VV-P05)
		const r = await importSensors(t.db, net, member.userId, lines.join('\n'), 'csv');
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.errors).toEqual([{ row: 6, field: 'lon', message: 'lon must be a number' }]);
		expect(await t.db('sensors').where({ network_id: net.id })).toHaveLength(0);
		expect(await t.db('audit_log').where({ action: 'sensor.import', object_id: String(net.id) })).toHaveLength(0);
	});

	it('duplicate ids inside the file and ids already in the network are refused at their rows', async () => {
		const net = await freshNetwork();
		const eol = demoCsv.includes('\r\n') ? '\r\n' : '\n';
		const dupInFile = demoCsv.trimEnd() + `${eol}vv-p01,X-1,soil moisture probe,10.1,52.9,,,${eol}`;
		const r1 = await importSensors(t.db, net, member.userId, dupInFile, 'csv');
		expect(r1.ok).toBe(false);
		if (!r1.ok) expect(r1.errors).toEqual([{ row: 16, field: 'id', message: 'duplicate id "vv-p01" (first used in row 2)' }]);
		expect(await importSensors(t.db, net, member.userId, demoCsv, 'csv')).toEqual({ ok: true, count: 14 });
		const again = 'id,serial,type,lon,lat\nNEW-1,S1,soil moisture probe,10.1,52.9\nVV-N2,S2,soil moisture probe,10.1,52.9\n';
		const r2 = await importSensors(t.db, net, member.userId, again, 'csv');
		expect(r2.ok).toBe(false);
		if (!r2.ok) expect(r2.errors).toEqual([{ row: 3, field: 'id', message: 'a sensor with the id "VV-N2" already exists in this network' }]);
		expect(await t.db('sensors').where({ network_id: net.id })).toHaveLength(14);
	});

	it('GeoJSON import stores the features with positions from the geometry', async () => {
		const net = await freshNetwork();
		const fc = {
			type: 'FeatureCollection',
			features: [
				{ type: 'Feature', id: 'G-1', geometry: { type: 'Point', coordinates: [10.2, 52.95] }, properties: { serial: 'A', type: 'Soil Moisture Probe', status: 'faulty' } },
				{ type: 'Feature', geometry: { type: 'Point', coordinates: [10.21, 52.96] }, properties: { id: 'G-2', serial: 'B', type: 'cosmic-ray neutron sensor', install_date: '2025-04-01' } }
			]
		};
		expect(await importSensors(t.db, net, member.userId, JSON.stringify(fc), 'geojson')).toEqual({ ok: true, count: 2 });
		const page = await sensorPage(t.db, net, parseListQuery(new URLSearchParams()));
		expect(page.sensors.map((s) => [s.code, s.type, s.status, s.installedOn, s.lon])).toEqual([
			['G-1', 'soil moisture probe', 'faulty', null, 10.2],
			['G-2', 'cosmic-ray neutron sensor', 'active', '2025-04-01', 10.21]
		]);
	});

	it('lists with server-side sort, filter and pagination', async () => {
		const net = await freshNetwork();
		await importSensors(t.db, net, member.userId, demoCsv, 'csv');
		const q = (s: string) => sensorPage(t.db, net, parseListQuery(new URLSearchParams(s)));
		const p1 = await q('perPage=10');
		expect(p1.total).toBe(14);
		expect(p1.pages).toBe(2);
		expect(p1.sensors).toHaveLength(10);
		expect(p1.sensors[0].code).toBe('VV-N1');
		const p2 = await q('perPage=10&page=2');
		expect(p2.sensors.map((s) => s.code)).toEqual(['VV-P09', 'VV-P10', 'VV-P11', 'VV-P12']);
		const byLonDesc = await q('sort=lon&dir=desc&perPage=10');
		expect(byLonDesc.sensors[0].code).toBe('VV-P06'); // 143.638876 is the easternmost in data/demo/sensors.csv
		const types = await sensorTypesOf(t.db, net.id);
		const neutron = types.find((x) => x.name === 'cosmic-ray neutron sensor')!;
		expect((await q(`type=${neutron.id}`)).sensors.map((s) => s.code)).toEqual(['VV-N1', 'VV-N2']);
		expect((await q('status=faulty')).sensors.map((s) => s.code)).toEqual(['VV-P07']);
		expect((await q('q=frost')).sensors.map((s) => s.code)).toEqual(['VV-P07']);
		expect((await q('q=100%25')).total).toBe(0); // a literal % is not a wildcard
		expect((await q('sort=nonsense&page=99&perPage=10')).page).toBe(2);
	});

	it('positions entered in the working CRS (UTM of the study area centre) are stored as lon/lat and shown in both', async () => {
		const net = await freshNetwork();
		expect(await workingCrs(t.db, net)).toBe(32754); // the demo area lies near 143.55°E, 32.15°S: UTM zone 54S
		const types = await sensorTypesOf(t.db, net.id);
		// 500000 m E is the zone's central meridian 141°E (UTM definition); 6 440 000 m N ≈ 32.16°S
		// (southern zones count northings from 10 000 000 m at the equator, UTM definition).
		const f = await validateSensorInput(t.db, net, { code: 'XY-1', serial: 's', typeId: String(types[0].id), positionMode: 'xy', x: '500000', y: '6440000', installedOn: '', status: 'active', notes: '' });
		expect(f.lon).toBeCloseTo(141, 9);
		expect(f.lat).toBeGreaterThan(-32.3);
		expect(f.lat).toBeLessThan(-32.0);
		const id = await createSensor(t.db, net, member.userId, f);
		const page = await sensorPage(t.db, net, parseListQuery(new URLSearchParams()));
		const s = page.sensors.find((x) => x.id === id)!;
		expect(s.x).toBeCloseTo(500000, 1);
		expect(s.y).toBeCloseTo(6440000, 1);
	});

	it('form validation names each bad field', async () => {
		const net = await freshNetwork({ area: false });
		const err = await validateSensorInput(t.db, net, { code: '=cmd', serial: '', typeId: '999999', positionMode: 'lonlat', lon: '200', lat: '', installedOn: '2025-02-30', status: 'lost' }).catch((e) => e);
		expect(err).toBeInstanceOf(SensorInputError);
		expect(Object.keys((err as SensorInputError).fields).sort()).toEqual(['code', 'installedOn', 'lat', 'lon', 'serial', 'status'].sort());
		const xy = await validateSensorInput(t.db, net, { code: 'A', serial: 'B', typeId: '1', positionMode: 'xy', x: '1', y: '2' }).catch((e) => e);
		expect((xy as SensorInputError).fields.x).toMatch(/working CRS is not known/);
	});

	it('an edit with a stale version is refused and changes nothing; edits and deletes are audited', async () => {
		const net = await freshNetwork();
		await importSensors(t.db, net, member.userId, demoCsv, 'csv');
		const row = await t.db('sensors').where({ network_id: net.id, code: 'VV-P03' }).first();
		const fields = { code: 'VV-P03', serial: row.serial, sensor_type_id: row.sensor_type_id, lon: 143.6, lat: -32.1, status: 'retired' as const, installed_on: null, notes: 'moved' };
		const after = await editSensor(t.db, net, member.userId, row.id, row.version, fields);
		expect(after.version).toBe(row.version + 1);
		const pos = await t.db('sensors').select(t.db.raw('ST_X(position) as px')).where({ id: row.id }).first();
		expect(Number(pos.px)).toBeCloseTo(143.6, 9);
		await expect(editSensor(t.db, net, member.userId, row.id, row.version, { ...fields, notes: 'second writer' })).rejects.toMatchObject({ status: 409, code: 'stale' });
		expect((await t.db('sensors').where({ id: row.id }).first()).notes).toBe('moved');
		const audit = await t.db('audit_log').where({ action: 'sensor.update', object_id: String(row.id) });
		expect(audit).toHaveLength(1);
		expect(jsonValue(audit[0].before)).toMatchObject({ status: 'active', lon: 143.574347 });
		expect(jsonValue(audit[0].after)).toMatchObject({ status: 'retired', lon: 143.6 });
		await expect(removeSensor(t.db, net, member.userId, row.id, row.version)).rejects.toMatchObject({ code: 'stale' });
		await removeSensor(t.db, net, member.userId, row.id, after.version);
		expect(await t.db('audit_log').where({ action: 'sensor.delete', object_id: String(row.id) })).toHaveLength(1);
	});

	it('CSV export escapes formula cells (OWASP) and quotes per RFC 4180; GeoJSON export is RFC 7946', async () => {
		const net = await freshNetwork();
		const csv = 'id,serial,type,lon,lat,notes\nE-1,=HYPERLINK("x"),soil moisture probe,10.1,52.9,"said ""hi"", left"\nE-2,+44 1,soil moisture probe,-3.5,52.9,@risk\n';
		expect(await importSensors(t.db, net, member.userId, csv, 'csv')).toEqual({ ok: true, count: 2 });
		const out = await exportSensors(t.db, net.id, 'csv');
		expect(out.split('\r\n')).toEqual([
			'id,serial,type,lon,lat,install_date,status,notes',
			`E-1,"'=HYPERLINK(""x"")",soil moisture probe,10.1,52.9,,active,"said ""hi"", left"`,
			"E-2,'+44 1,soil moisture probe,-3.5,52.9,,active,'@risk",
			''
		]);
		const gj = JSON.parse(await exportSensors(t.db, net.id, 'geojson'));
		expect(gj.crs).toBeUndefined();
		expect(gj.features[1].geometry).toEqual({ type: 'Point', coordinates: [-3.5, 52.9] });
	});
});
