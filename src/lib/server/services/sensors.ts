/**
 * Sensors: list (sorted, filtered, paged in SQL), add, edit (optimistic, by version), remove,
 * import (CSV / GeoJSON, all or nothing) and export. Every change writes its audit entry in the
 * same transaction. Positions are stored in WGS 84 and may be entered in the network's working
 * CRS (x/y metres), which is shown beside lon/lat.
 */
import type { Knex } from 'knex';
import Papa from 'papaparse';
import { z } from 'zod';
import { recordAudit } from '../repositories/audit';
import type { NetworkRow } from '../repositories/networks';
import { listSensorTypes } from '../repositories/sensor-types';
import {
	deleteSensor,
	existingCodes,
	findSensor,
	insertSensor,
	insertSensors,
	listSensors,
	SENSOR_SORTS,
	updateSensor,
	type SensorFields,
	type SensorQuery,
	type SensorRow
} from '../repositories/sensors';
import {
	exportSensorsCsv,
	exportSensorsGeoJson,
	importSensorsCsv,
	importSensorsGeoJson,
	SENSOR_STATUSES,
	type RowError,
	type SensorRecord
} from '../inventory';
import { isoDate, resolvePosition } from '../inventory/sensor-record';
import { transformer } from '../../geo/crs';
import { workingCrs } from './working-crs';
import type { Sensor } from '../../api/client';
import { ServiceError, zodFields } from './errors';

export type FieldErrors = Record<string, string>;

/** A form or request that failed validation, with a message per field. */
export class SensorInputError extends ServiceError {
	constructor(public fields: FieldErrors) {
		super(400, 'invalid_input', 'Some fields are not valid.', undefined, fields);
		this.name = 'SensorInputError';
	}
}

// ---------------------------------------------------------------- views

export function sensorView(s: SensorRow, crs: number | null): Sensor {
	let x: number | null = null;
	let y: number | null = null;
	if (crs) {
		const [px, py] = transformer(4326, crs).forward(s.lon, s.lat);
		x = Math.round(px * 100) / 100;
		y = Math.round(py * 100) / 100;
	}
	return {
		id: s.id,
		code: s.code,
		serial: s.serial,
		typeId: s.sensor_type_id,
		type: s.type_name,
		lon: s.lon,
		lat: s.lat,
		x,
		y,
		status: s.status,
		installedOn: s.installed_on,
		notes: s.notes,
		version: s.version
	};
}

// ---------------------------------------------------------------- list query

export const PER_PAGE_CHOICES = [10, 25, 50, 100] as const;

/** Sort, filter and page from URL query parameters; unknown values fall back to defaults. */
const sensorListQuery = z.object({
	sort: z.enum(SENSOR_SORTS).catch('code'),
	dir: z.enum(['asc', 'desc']).catch('asc'),
	type: z.coerce.number().int().positive().nullable().catch(null),
	status: z.enum(SENSOR_STATUSES).nullable().catch(null),
	q: z.string().max(100).catch(''),
	page: z.coerce.number().int().min(1).catch(1),
	perPage: z.coerce
		.number()
		.int()
		.refine((n) => (PER_PAGE_CHOICES as readonly number[]).includes(n))
		.catch(25)
});
export type SensorListQuery = z.infer<typeof sensorListQuery>;

export function parseListQuery(params: URLSearchParams): SensorListQuery {
	const get = (k: string) => params.get(k) ?? undefined;
	return sensorListQuery.parse({ sort: get('sort'), dir: get('dir'), type: get('type') || null, status: get('status') || null, q: get('q') ?? '', page: get('page'), perPage: get('perPage') });
}

export async function sensorPage(db: Knex, network: NetworkRow, q: SensorListQuery) {
	const crs = await workingCrs(db, network);
	const query: SensorQuery = { sort: q.sort, dir: q.dir, typeId: q.type, status: q.status, text: q.q, page: q.page, perPage: q.perPage };
	let { rows, total } = await listSensors(db, network.id, query);
	const pages = Math.max(1, Math.ceil(total / q.perPage));
	let page = q.page;
	if (page > pages) {
		// Asked past the end (e.g. after a filter): show the last page.
		page = pages;
		({ rows, total } = await listSensors(db, network.id, { ...query, page }));
	}
	return { sensors: rows.map((r) => sensorView(r, crs)), total, page, pages, perPage: q.perPage, workingCrs: crs };
}

// ---------------------------------------------------------------- one sensor

const optionalText = (max: number, msg: string) => z.string().trim().max(max, msg).default('');

const sensorFormSchema = z.object({
	code: z
		.string()
		.trim()
		.min(1, 'Give the sensor an id.')
		.max(64, 'Keep the id under 64 characters.')
		.regex(/^[A-Za-z0-9][A-Za-z0-9._:-]*$/, 'Use letters, digits, ".", "_", ":" and "-", starting with a letter or digit.'),
	serial: z.string().trim().min(1, 'Give the serial number.').max(100, 'Keep the serial under 100 characters.'),
	typeId: z.coerce.number({ error: 'Choose a sensor type.' }).int('Choose a sensor type.').positive('Choose a sensor type.'),
	positionMode: z.enum(['lonlat', 'xy']).default('lonlat'),
	installedOn: z.preprocess((v) => (v === '' || v === undefined ? null : v), isoDate.nullable()),
	status: z.enum(SENSOR_STATUSES, { error: 'Choose active, faulty or retired.' }).default('active'),
	notes: optionalText(2000, 'Keep the notes under 2000 characters.')
});

const FIELD_OF: Record<string, string> = { lon: 'lon', lat: 'lat', x: 'x', y: 'y', crs: 'x' };

/**
 * Validate a sensor from form or JSON fields. Positions: lon/lat (positionMode 'lonlat') or x/y
 * in the working CRS (positionMode 'xy'). Type ids must belong to the network.
 */
export async function validateSensorInput(db: Knex, network: NetworkRow, raw: Record<string, unknown>): Promise<SensorFields> {
	const errors: FieldErrors = {};
	const parsed = sensorFormSchema.safeParse(raw);
	if (!parsed.success) Object.assign(errors, zodFields(parsed.error));
	const mode = raw.positionMode === 'xy' ? 'xy' : 'lonlat';
	const crs = await workingCrs(db, network);
	let pos: { lon: number; lat: number } | null = null;
	if (mode === 'xy' && !crs) errors.x = 'The working CRS is not known yet (set it on the overview or outline the study area); enter lon/lat.';
	else {
		const input = mode === 'xy' ? { x: raw.x, y: raw.y, crs: `EPSG:${crs}` } : { lon: raw.lon, lat: raw.lat };
		const r = resolvePosition(input, 0);
		if (Array.isArray(r)) for (const e of r as RowError[]) errors[FIELD_OF[e.field] ?? e.field] ??= e.message.charAt(0).toUpperCase() + e.message.slice(1) + '.';
		else pos = r;
	}
	if (parsed.success) {
		const types = await listSensorTypes(db, network.id);
		if (!types.some((t) => t.id === parsed.data.typeId)) errors.typeId = 'Choose one of this network’s sensor types.';
	}
	if (Object.keys(errors).length || !parsed.success || !pos) throw new SensorInputError(errors);
	const d = parsed.data;
	return { code: d.code, serial: d.serial, sensor_type_id: d.typeId, lon: pos.lon, lat: pos.lat, status: d.status, installed_on: d.installedOn, notes: d.notes };
}

function isDuplicate(err: unknown): boolean {
	return typeof err === 'object' && err !== null && (err as { errno?: number }).errno === 1062;
}

export async function createSensor(db: Knex, network: NetworkRow, actorId: number, f: SensorFields): Promise<number> {
	return db.transaction(async (trx) => {
		if ((await existingCodes(trx, network.id, [f.code])).length) throw new SensorInputError({ code: `A sensor with the id "${f.code}" already exists.` });
		let id: number;
		try {
			id = await insertSensor(trx, network.id, f);
		} catch (e) {
			if (isDuplicate(e)) throw new SensorInputError({ code: `A sensor with the id "${f.code}" already exists.` });
			throw e;
		}
		await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actorId, action: 'sensor.create', objectType: 'sensor', objectId: id, after: { network_id: network.id, ...f } });
		return id;
	});
}

function auditFields(s: SensorRow): SensorFields {
	return { code: s.code, serial: s.serial, sensor_type_id: s.sensor_type_id, lon: s.lon, lat: s.lat, status: s.status, installed_on: s.installed_on, notes: s.notes };
}

const STALE = 'Someone else changed this sensor meanwhile. Reload and try again.';

export async function editSensor(db: Knex, network: NetworkRow, actorId: number, sensorId: number, version: number, f: SensorFields): Promise<SensorRow> {
	return db.transaction(async (trx) => {
		const before = await findSensor(trx, network.id, sensorId, { forUpdate: true });
		if (!before) throw new ServiceError(404, 'not_found', 'No such sensor.');
		if (before.version !== version) throw new ServiceError(409, 'stale', STALE);
		if (f.code.toLowerCase() !== before.code.toLowerCase() && (await existingCodes(trx, network.id, [f.code])).length) {
			throw new SensorInputError({ code: `A sensor with the id "${f.code}" already exists.` });
		}
		if (!(await updateSensor(trx, network.id, sensorId, version, f))) throw new ServiceError(409, 'stale', STALE);
		await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actorId, action: 'sensor.update', objectType: 'sensor', objectId: sensorId, before: auditFields(before), after: f });
		return (await findSensor(trx, network.id, sensorId))!;
	});
}

export async function removeSensor(db: Knex, network: NetworkRow, actorId: number, sensorId: number, version: number): Promise<void> {
	await db.transaction(async (trx) => {
		const before = await findSensor(trx, network.id, sensorId, { forUpdate: true });
		if (!before) throw new ServiceError(404, 'not_found', 'No such sensor.');
		if (before.version !== version || !(await deleteSensor(trx, network.id, sensorId, version))) throw new ServiceError(409, 'stale', STALE);
		await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actorId, action: 'sensor.delete', objectType: 'sensor', objectId: sensorId, before: auditFields(before) });
	});
}

// ---------------------------------------------------------------- import / export

export type ImportOutcome = { ok: true; count: number } | { ok: false; errors: RowError[] };

/**
 * Line (header = 1) of each CSV record, for reporting ids already in the network. Counts lines
 * as Papa does without skipping; blank lines are counted, so numbers match a text editor's.
 */
function csvRecordLines(text: string, idColumn: string): Map<string, number> {
	const src = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
	const out = new Map<string, number>();
	const parsed = Papa.parse<string[]>(src, { header: false, skipEmptyLines: false, delimiter: ',' });
	const header = (parsed.data[0] ?? []).map((h) => h.trim().toLowerCase());
	const k = header.indexOf(idColumn);
	let line = 1;
	parsed.data.forEach((cells, i) => {
		if (i > 0 && k >= 0 && cells[k] !== undefined) {
			const id = cells[k].trim().toLowerCase();
			if (!out.has(id)) out.set(id, line);
		}
		line += 1 + cells.reduce((n, c) => n + (c.match(/\n/g)?.length ?? 0), 0);
	});
	return out;
}

/**
 * Import sensors from CSV or GeoJSON text: every row is validated, ids already used in the network
 * are refused at their row, and then all rows are inserted in one transaction, or none.
 */
export async function importSensors(db: Knex, network: NetworkRow, actorId: number, text: string, format: 'csv' | 'geojson', fileName = ''): Promise<ImportOutcome> {
	return db.transaction(async (trx) => {
		const types = await listSensorTypes(trx, network.id);
		const opts = { knownTypes: types.map((t) => t.name) };
		const result = format === 'csv' ? importSensorsCsv(text, opts) : importSensorsGeoJson(text, opts);
		if (!result.ok) return { ok: false as const, errors: result.errors };
		const taken = new Set((await existingCodes(trx, network.id, result.rows.map((r) => r.id))).map((c) => c.toLowerCase()));
		if (taken.size) {
			const lines = format === 'csv' ? csvRecordLines(text, 'id') : null;
			const errors: RowError[] = [];
			result.rows.forEach((r, i) => {
				if (taken.has(r.id.toLowerCase())) errors.push({ row: lines?.get(r.id.toLowerCase()) ?? i + 1, field: 'id', message: `a sensor with the id "${r.id}" already exists in this network` });
			});
			return { ok: false as const, errors };
		}
		const typeId = new Map(types.map((t) => [t.name, t.id]));
		await insertSensors(
			trx,
			network.id,
			result.rows.map((r) => ({
				code: r.id,
				serial: r.serial,
				sensor_type_id: typeId.get(r.type)!,
				lon: r.lon,
				lat: r.lat,
				status: r.status,
				installed_on: r.installDate,
				notes: r.notes ?? ''
			}))
		);
		await recordAudit(trx, {
			organisationId: network.organisation_id,
			actorUserId: actorId,
			action: 'sensor.import',
			objectType: 'network',
			objectId: network.id,
			after: { format, file: fileName.slice(0, 200), count: result.rows.length }
		});
		return { ok: true as const, count: result.rows.length };
	});
}

async function sensorRecords(db: Knex, networkId: number): Promise<SensorRecord[]> {
	const { rows } = await listSensors(db, networkId, { sort: 'code' });
	return rows.map((s) => ({ id: s.code, serial: s.serial, type: s.type_name, lon: s.lon, lat: s.lat, installDate: s.installed_on, status: s.status, notes: s.notes || null }));
}

export async function exportSensors(db: Knex, networkId: number, format: 'csv' | 'geojson'): Promise<string> {
	const records = await sensorRecords(db, networkId);
	return format === 'csv' ? exportSensorsCsv(records) : JSON.stringify(exportSensorsGeoJson(records), null, 1);
}
