/**
 * Sensors of a network. `position` (POINT, SRID 4326) is written from the same lon/lat as the
 * lon/lat columns in every insert and update, as WKT 'POINT(lon lat)': MariaDB 10.11 has no
 * geographic axis order, so ST_X(position) is the longitude (checked in tests/integration/sensors).
 */
import type { Db } from '../db';
import type { SensorStatus } from '../inventory';

export interface SensorRow {
	id: number;
	network_id: number;
	code: string;
	serial: string;
	sensor_type_id: number;
	type_name: string;
	lon: number;
	lat: number;
	status: SensorStatus;
	installed_on: string | null;
	notes: string;
	version: number;
	updated_at: Date;
}

export interface SensorFields {
	code: string;
	serial: string;
	sensor_type_id: number;
	lon: number;
	lat: number;
	status: SensorStatus;
	installed_on: string | null;
	notes: string;
}

export const SENSOR_SORTS = ['code', 'serial', 'type', 'status', 'installed_on', 'lon', 'lat'] as const;
export type SensorSort = (typeof SENSOR_SORTS)[number];

export interface SensorQuery {
	sort?: SensorSort;
	dir?: 'asc' | 'desc';
	typeId?: number | null;
	status?: SensorStatus | null;
	/** Matches code, serial or notes (substring, case-insensitive by collation). */
	text?: string;
	page?: number;
	perPage?: number;
}

const sortColumn: Record<SensorSort, string> = {
	code: 's.code',
	serial: 's.serial',
	type: 't.name',
	status: 's.status',
	installed_on: 's.installed_on',
	lon: 's.lon',
	lat: 's.lat'
};

function base(db: Db, networkId: number) {
	return db('sensors as s').join('sensor_types as t', 't.id', 's.sensor_type_id').where('s.network_id', networkId);
}

function selectRow(db: Db) {
	return [
		's.id',
		's.network_id',
		's.code',
		's.serial',
		's.sensor_type_id',
		't.name as type_name',
		's.lon',
		's.lat',
		's.status',
		db.raw("DATE_FORMAT(s.installed_on, '%Y-%m-%d') as installed_on"),
		's.notes',
		's.version',
		's.updated_at'
	];
}

function escapeLike(s: string): string {
	return s.replace(/[\\%_]/g, (c) => `\\${c}`);
}

/** One page of sensors, sorted and filtered in SQL, with the total count of matches. */
export async function listSensors(db: Db, networkId: number, q: SensorQuery = {}): Promise<{ rows: SensorRow[]; total: number }> {
	const filtered = () => {
		const b = base(db, networkId);
		if (q.typeId) b.where('s.sensor_type_id', q.typeId);
		if (q.status) b.where('s.status', q.status);
		if (q.text && q.text.trim()) {
			const like = `%${escapeLike(q.text.trim())}%`;
			b.where((w) => w.where('s.code', 'like', like).orWhere('s.serial', 'like', like).orWhere('s.notes', 'like', like));
		}
		return b;
	};
	const [{ n }] = await filtered().count<{ n: number }[]>({ n: 's.id' });
	const sel = filtered().select(selectRow(db));
	const dir = q.dir === 'desc' ? 'desc' : 'asc';
	sel.orderBy(sortColumn[q.sort ?? 'code'], dir).orderBy('s.code', 'asc');
	if (q.perPage) sel.limit(q.perPage).offset(((q.page ?? 1) - 1) * q.perPage);
	const rows = (await sel) as SensorRow[];
	return { rows: rows.map(normalise), total: Number(n) };
}

function normalise(r: SensorRow): SensorRow {
	return { ...r, lon: Number(r.lon), lat: Number(r.lat) };
}

export async function findSensor(db: Db, networkId: number, id: number, opts: { forUpdate?: boolean } = {}): Promise<SensorRow | undefined> {
	const q = base(db, networkId).select(selectRow(db)).where('s.id', id).first();
	const row = (await (opts.forUpdate ? q.forUpdate() : q)) as SensorRow | undefined;
	return row ? normalise(row) : undefined;
}

export async function findSensorByCode(db: Db, networkId: number, code: string): Promise<SensorRow | undefined> {
	const row = (await base(db, networkId).select(selectRow(db)).where('s.code', code).first()) as SensorRow | undefined;
	return row ? normalise(row) : undefined;
}

/** Codes among `codes` that the network already uses (compared by the column's collation). */
export async function existingCodes(db: Db, networkId: number, codes: string[]): Promise<string[]> {
	if (codes.length === 0) return [];
	const out: string[] = [];
	for (let i = 0; i < codes.length; i += 500) {
		const rows = await db('sensors').select('code').where({ network_id: networkId }).whereIn('code', codes.slice(i, i + 500));
		out.push(...rows.map((r: { code: string }) => r.code));
	}
	return out;
}

function pointWkt(db: Db, lon: number, lat: number) {
	return db.raw('ST_GeomFromText(?, 4326)', [`POINT(${lon} ${lat})`]);
}

export async function insertSensor(db: Db, networkId: number, f: SensorFields): Promise<number> {
	const [id] = await db('sensors').insert({ ...f, network_id: networkId, position: pointWkt(db, f.lon, f.lat) });
	return id;
}

/** Many sensors in a few multi-row INSERTs (500 rows each). */
export async function insertSensors(db: Db, networkId: number, rows: readonly SensorFields[]): Promise<void> {
	for (let i = 0; i < rows.length; i += 500) {
		await db('sensors').insert(rows.slice(i, i + 500).map((f) => ({ ...f, network_id: networkId, position: pointWkt(db, f.lon, f.lat) })));
	}
}

/** Optimistic update: succeeds only when the row still has `version`. */
export async function updateSensor(db: Db, networkId: number, id: number, version: number, f: SensorFields): Promise<boolean> {
	const n = await db('sensors')
		.where({ network_id: networkId, id, version })
		.update({ ...f, position: pointWkt(db, f.lon, f.lat), version: version + 1, updated_at: db.fn.now() });
	return n === 1;
}

export async function deleteSensor(db: Db, networkId: number, id: number, version: number): Promise<boolean> {
	return (await db('sensors').where({ network_id: networkId, id, version }).delete()) === 1;
}
