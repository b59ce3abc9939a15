/**
 * Sensor inventory export: CSV for spreadsheets and GeoJSON (RFC 7946) for GIS.
 *
 * CSV injection: a spreadsheet runs a cell that starts with =, +, -, @, a tab or a carriage
 * return as a formula. Following the OWASP "CSV Injection" guidance, every text cell that starts
 * with one of those characters is prefixed with a single quote, then quoted per RFC 4180 when it
 * holds a comma, a quote or a line break. Numeric cells are written by us from numbers (e.g.
 * "-3.51") and are not prefixed, so coordinates stay numbers in the spreadsheet.
 * A re-import keeps the quote as part of the text (it cannot be told apart from a real one).
 */
import type { SensorRecord } from './sensor-record';

export const EXPORT_COLUMNS = ['id', 'serial', 'type', 'lon', 'lat', 'install_date', 'status', 'notes'] as const;

const FORMULA_START = /^[=+\-@\t\r]/;

/** OWASP CSV-injection escaping of one text cell, then RFC 4180 quoting. */
export function csvTextCell(value: string): string {
	const safe = FORMULA_START.test(value) ? `'${value}` : value;
	return /[",\r\n]/.test(safe) ? `"${safe.replace(/"/g, '""')}"` : safe;
}

/** Seven decimals of a degree is about 1 cm: more than any field position needs. */
function coord(v: number): string {
	return String(Math.round(v * 1e7) / 1e7);
}

export function exportSensorsCsv(sensors: readonly SensorRecord[]): string {
	const lines = [EXPORT_COLUMNS.join(',')];
	for (const s of sensors) {
		lines.push(
			[csvTextCell(s.id), csvTextCell(s.serial), csvTextCell(s.type), coord(s.lon), coord(s.lat), s.installDate ?? '', s.status, csvTextCell(s.notes ?? '')].join(',')
		);
	}
	return lines.join('\r\n') + '\r\n';
}

export interface SensorFeature {
	type: 'Feature';
	id: string;
	geometry: { type: 'Point'; coordinates: [number, number] };
	properties: { id: string; serial: string; type: string; install_date: string | null; status: string; notes: string | null };
}

export interface SensorFeatureCollection {
	type: 'FeatureCollection';
	features: SensorFeature[];
}

/** RFC 7946: positions [lon, lat] in WGS 84, no "crs" member. */
export function exportSensorsGeoJson(sensors: readonly SensorRecord[]): SensorFeatureCollection {
	return {
		type: 'FeatureCollection',
		features: sensors.map((s) => ({
			type: 'Feature',
			id: s.id,
			geometry: { type: 'Point', coordinates: [Number(coord(s.lon)), Number(coord(s.lat))] },
			properties: { id: s.id, serial: s.serial, type: s.type, install_date: s.installDate, status: s.status, notes: s.notes }
		}))
	};
}
