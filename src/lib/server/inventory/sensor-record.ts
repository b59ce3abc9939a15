/**
 * One sensor of an inventory file, validated. Shared by the CSV and GeoJSON importers so both
 * accept exactly the same rows and report problems in the same words.
 */
import { z } from 'zod';
import { CrsError, parseEpsg, transformer } from '../../geo/crs';

import { SENSOR_STATUSES, type SensorStatus } from '../../api/client';
import { zodFields } from '../services/errors';

export { SENSOR_STATUSES, type SensorStatus };

export interface SensorRecord {
	id: string;
	serial: string;
	/** Canonical name of a known sensor type. */
	type: string;
	/** WGS 84 degrees. */
	lon: number;
	lat: number;
	/** ISO date YYYY-MM-DD, or null when not given. */
	installDate: string | null;
	status: SensorStatus;
	notes: string | null;
}

export interface RowError {
	/** CSV: line in the file (header = 1). GeoJSON: feature number (first = 1). 0 = the file as a whole. */
	row: number;
	/** Column / property name, or '' for the whole row. */
	field: string;
	message: string;
}

export type ImportResult = { ok: true; rows: SensorRecord[] } | { ok: false; errors: RowError[] };

export const MAX_IMPORT_ROWS = 10_000;

/** Letters, digits, '.', '_', '-' and ':'; starting with a letter or digit (so never a formula). */
const ID_PATTERN = /^[A-Za-z0-9][A-Za-z0-9._:-]*$/;

const text = (field: string, max: number) =>
	z
		.string({ error: (issue) => (issue.input === undefined ? `${field} is required` : `${field} must be text`) })
		.trim()
		.min(1, { message: `${field} is required`, abort: true })
		.max(max, `${field} is longer than ${max} characters`);

/** A calendar date YYYY-MM-DD that exists (2025-02-30 is refused). */
export const isoDate = z
	.string()
	.trim()
	.regex(/^\d{4}-\d{2}-\d{2}$/, 'install_date must be an ISO date YYYY-MM-DD')
	.refine((s) => {
		const d = new Date(`${s}T00:00:00Z`);
		return !Number.isNaN(d.getTime()) && d.toISOString().slice(0, 10) === s;
	}, 'install_date is not a real calendar date');

/** Raw fields as text (CSV) or JSON values (GeoJSON), before coordinates are resolved. */
const sensorFieldsSchema = z.object({
	id: text('id', 64).regex(ID_PATTERN, 'id may hold only letters, digits, ".", "_", ":" and "-", starting with a letter or digit'),
	serial: text('serial', 100),
	type: text('type', 100),
	install_date: isoDate.nullable().optional(),
	status: z.enum(SENSOR_STATUSES, { error: `status must be one of ${SENSOR_STATUSES.join(', ')}` }).optional(),
	notes: z.string({ error: 'notes must be text' }).max(2000, 'notes are longer than 2000 characters').nullable().optional()
});

/** Number from a CSV cell or a JSON value; '' and null mean "not given". */
function numberField(raw: unknown): number | null | 'invalid' {
	if (raw === undefined || raw === null) return null;
	if (typeof raw === 'number') return Number.isFinite(raw) ? raw : 'invalid';
	if (typeof raw !== 'string') return 'invalid';
	const s = raw.trim();
	if (s === '') return null;
	if (!/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(s)) return 'invalid';
	return Number(s);
}

export interface PositionInput {
	lon?: unknown;
	lat?: unknown;
	x?: unknown;
	y?: unknown;
	crs?: unknown;
}

/** lon/lat directly, or x/y in the given CRS converted to WGS 84; errors name the fields. */
export function resolvePosition(p: PositionInput, row: number): { lon: number; lat: number } | RowError[] {
	const lon = numberField(p.lon);
	const lat = numberField(p.lat);
	const x = numberField(p.x);
	const y = numberField(p.y);
	const crsText = typeof p.crs === 'string' ? p.crs.trim() : p.crs === undefined || p.crs === null ? '' : String(p.crs);
	const errors: RowError[] = [];
	const hasLonLat = lon !== null || lat !== null;
	const hasXy = x !== null || y !== null || crsText !== '';
	if (hasLonLat && hasXy) return [{ row, field: 'lon', message: 'give either lon/lat or x/y with crs, not both' }];
	if (!hasLonLat && !hasXy) return [{ row, field: 'lon', message: 'a position is required: lon and lat (WGS 84), or x, y and crs' }];
	if (hasLonLat) {
		if (lon === null) errors.push({ row, field: 'lon', message: 'lon is required with lat' });
		else if (lon === 'invalid') errors.push({ row, field: 'lon', message: 'lon must be a number' });
		else if (lon < -180 || lon > 180) errors.push({ row, field: 'lon', message: `lon ${lon} is outside −180…180` });
		if (lat === null) errors.push({ row, field: 'lat', message: 'lat is required with lon' });
		else if (lat === 'invalid') errors.push({ row, field: 'lat', message: 'lat must be a number' });
		else if (lat < -90 || lat > 90) errors.push({ row, field: 'lat', message: `lat ${lat} is outside −90…90` });
		if (errors.length) return errors;
		return { lon: lon as number, lat: lat as number };
	}
	if (x === null) errors.push({ row, field: 'x', message: 'x is required with y and crs' });
	else if (x === 'invalid') errors.push({ row, field: 'x', message: 'x must be a number' });
	if (y === null) errors.push({ row, field: 'y', message: 'y is required with x and crs' });
	else if (y === 'invalid') errors.push({ row, field: 'y', message: 'y must be a number' });
	let epsg: number | null = null;
	if (crsText === '') errors.push({ row, field: 'crs', message: 'crs is required with x and y (e.g. EPSG:32633)' });
	else {
		try {
			epsg = parseEpsg(crsText);
		} catch (e) {
			errors.push({ row, field: 'crs', message: e instanceof CrsError ? e.message : 'crs is not an EPSG code' });
		}
	}
	if (errors.length || epsg === null) return errors;
	let lonLat: [number, number];
	try {
		lonLat = epsg === 4326 ? [x as number, y as number] : transformer(epsg, 4326).forward(x as number, y as number);
	} catch (e) {
		return [{ row, field: 'crs', message: e instanceof CrsError ? e.message : `cannot convert from EPSG:${epsg}` }];
	}
	const [plon, plat] = lonLat;
	if (!Number.isFinite(plon) || !Number.isFinite(plat) || plon < -180 || plon > 180 || plat < -90 || plat > 90) {
		return [{ row, field: 'x', message: `x/y (${x}, ${y}) in EPSG:${epsg} is not a place on Earth` }];
	}
	return { lon: plon, lat: plat };
}

/** Match a type name case-insensitively against the known names; the canonical spelling is kept. */
function typeMatcher(knownTypes: readonly string[]): (name: string) => string | null {
	const byKey = new Map(knownTypes.map((t) => [t.trim().toLowerCase(), t]));
	return (name) => byKey.get(name.trim().toLowerCase()) ?? null;
}

function emptyToUndefined(v: unknown): unknown {
	return typeof v === 'string' && v.trim() === '' ? undefined : v;
}

/**
 * Validate one record's fields and position. `raw` holds the file's own names
 * (id, serial, type, lon, lat, x, y, crs, install_date, status, notes).
 */
function validateSensor(raw: Record<string, unknown>, row: number, matchType: (name: string) => string | null, knownTypes: readonly string[]): SensorRecord | RowError[] {
	const errors: RowError[] = [];
	const parsed = sensorFieldsSchema.safeParse({
		id: raw.id,
		serial: raw.serial,
		type: raw.type,
		install_date: emptyToUndefined(raw.install_date),
		status: typeof raw.status === 'string' ? emptyToUndefined(raw.status.trim().toLowerCase()) : raw.status,
		notes: emptyToUndefined(raw.notes)
	});
	if (!parsed.success) {
		for (const [field, message] of Object.entries(zodFields(parsed.error))) errors.push({ row, field, message });
	}
	// The type is checked whenever it is present, so one pass shows every problem of the row.
	let type: string | null = null;
	const typeText = typeof raw.type === 'string' ? raw.type.trim() : '';
	if (typeText !== '' && typeText.length <= 100) {
		type = matchType(typeText);
		if (type === null) {
			const list = knownTypes.length ? knownTypes.join(', ') : 'none are defined yet';
			errors.push({ row, field: 'type', message: `unknown sensor type "${typeText}" (known: ${list})` });
		}
	}
	const pos = resolvePosition(raw, row);
	if (Array.isArray(pos)) errors.push(...pos);
	if (errors.length || !parsed.success || type === null || Array.isArray(pos)) return errors;
	const notes = parsed.data.notes?.trim();
	return {
		id: parsed.data.id,
		serial: parsed.data.serial,
		type,
		lon: pos.lon,
		lat: pos.lat,
		installDate: parsed.data.install_date ?? null,
		status: parsed.data.status ?? 'active',
		notes: notes ? notes : null
	};
}

/**
 * Validate all records; duplicates of an id are reported at each later row. Ids compare
 * case-insensitively, as the database's utf8mb4_unicode_ci collation would.
 */
export function validateAll(records: { row: number; raw: Record<string, unknown> }[], knownTypes: readonly string[]): ImportResult {
	const matchType = typeMatcher(knownTypes);
	const errors: RowError[] = [];
	const rows: SensorRecord[] = [];
	const firstRowOfId = new Map<string, number>();
	for (const { row, raw } of records) {
		const res = validateSensor(raw, row, matchType, knownTypes);
		if (Array.isArray(res)) {
			errors.push(...res);
			continue;
		}
		const earlier = firstRowOfId.get(res.id.toLowerCase());
		if (earlier !== undefined) {
			errors.push({ row, field: 'id', message: `duplicate id "${res.id}" (first used in row ${earlier})` });
			continue;
		}
		firstRowOfId.set(res.id.toLowerCase(), row);
		rows.push(res);
	}
	if (errors.length) return { ok: false, errors };
	return { ok: true, rows };
}
