/**
 * Sensor inventory from GeoJSON (RFC 7946): a FeatureCollection of Point features (or one Point
 * Feature) in WGS 84 [lon, lat]. Properties carry the same names as the CSV columns (id, serial,
 * type, install_date, status, notes); the id may also be the feature's own `id`. Errors use the
 * feature number (first feature = 1) as their row.
 */
import { MAX_IMPORT_ROWS, validateAll, type ImportResult, type RowError } from './sensor-record';
import type { SensorImportOptions } from './csv-import';

function isObject(v: unknown): v is Record<string, unknown> {
	return typeof v === 'object' && v !== null && !Array.isArray(v);
}

export function importSensorsGeoJson(input: string | unknown, opts: SensorImportOptions): ImportResult {
	let doc: unknown = input;
	if (typeof input === 'string') {
		try {
			doc = JSON.parse(input.charCodeAt(0) === 0xfeff ? input.slice(1) : input);
		} catch {
			return fail(0, '', 'the file is not valid JSON');
		}
	}
	if (!isObject(doc)) return fail(0, '', 'expected a GeoJSON FeatureCollection');
	if ('crs' in doc) {
		// RFC 7946 §4 removed the crs member: positions are always WGS 84 lon/lat.
		return fail(0, 'crs', 'GeoJSON must use WGS 84 lon/lat (RFC 7946) and has no "crs" member; export the file as WGS 84');
	}
	const features = doc.type === 'FeatureCollection' ? doc.features : doc.type === 'Feature' ? [doc] : null;
	if (!Array.isArray(features)) return fail(0, 'type', 'expected a GeoJSON FeatureCollection of Point features');
	if (features.length === 0) return fail(0, '', 'the collection has no features');
	const maxRows = opts.maxRows ?? MAX_IMPORT_ROWS;
	if (features.length > maxRows) return fail(0, '', `the file has ${features.length} features; at most ${maxRows} can be imported at once`);

	const errors: RowError[] = [];
	const records: { row: number; raw: Record<string, unknown> }[] = [];
	features.forEach((f: unknown, i: number) => {
		const row = i + 1;
		if (!isObject(f) || f.type !== 'Feature') return void errors.push({ row, field: '', message: 'not a GeoJSON Feature' });
		const g = f.geometry;
		if (!isObject(g) || g.type !== 'Point') return void errors.push({ row, field: 'geometry', message: 'geometry must be a Point' });
		const c = g.coordinates;
		if (!Array.isArray(c) || c.length < 2 || c.length > 3 || !c.every((v) => typeof v === 'number' && Number.isFinite(v))) {
			return void errors.push({ row, field: 'geometry', message: 'Point coordinates must be [lon, lat] numbers' });
		}
		const props = f.properties === null || f.properties === undefined ? {} : f.properties;
		if (!isObject(props)) return void errors.push({ row, field: 'properties', message: 'properties must be an object' });
		for (const k of ['lon', 'lat', 'x', 'y', 'crs']) {
			if (k in props) return void errors.push({ row, field: k, message: `the position comes from the geometry; remove the "${k}" property` });
		}
		// Numbers are accepted for id and serial (a JSON writer may have turned "1042" into 1042).
		const asText = (v: unknown) => (typeof v === 'number' && Number.isFinite(v) ? String(v) : v);
		const featureId = asText(f.id);
		const propId = asText(props.id);
		if (propId !== undefined && featureId !== undefined && propId !== featureId) {
			return void errors.push({ row, field: 'id', message: `feature id "${String(featureId)}" differs from properties.id "${String(propId)}"` });
		}
		records.push({ row, raw: { ...props, id: propId ?? featureId, serial: asText(props.serial), lon: c[0], lat: c[1] } });
	});
	const result = validateAll(records, opts.knownTypes);
	if (errors.length) return { ok: false, errors: [...errors, ...(result.ok ? [] : result.errors)].sort((a, b) => a.row - b.row) };
	return result;
}

function fail(row: number, field: string, message: string): ImportResult {
	return { ok: false, errors: [{ row, field, message }] };
}
