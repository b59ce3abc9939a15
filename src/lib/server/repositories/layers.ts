/** Layers: the uploaded rasters of a network, with their metadata. */
import type { Db } from '../db';
import type { LayerKind, LayerPlatform } from '../../api/client';

export type LayerStatus = 'uploading' | 'processing' | 'ready' | 'failed';

export interface LayerRow {
	id: number;
	network_id: number;
	name: string;
	kind: LayerKind;
	units: string;
	acquired_on: string | null;
	platform: LayerPlatform;
	status: LayerStatus;
	error: string | null;
	original_name: string;
	size_bytes: number;
	storage_key: string | null;
	preview_key: string | null;
	band: number;
	width: number | null;
	height: number | null;
	band_count: number | null;
	epsg: number | null;
	resolution_x: number | null;
	resolution_y: number | null;
	nodata: number | null;
	footprint: unknown | null;
	transform: unknown | null;
	stat_min: number | null;
	stat_max: number | null;
	stat_mean: number | null;
	stat_std: number | null;
	valid_count: number | null;
	histogram: unknown | null;
	created_by: number | null;
	created_at: Date;
	updated_at: Date;
}

const columns = [
	'id', 'network_id', 'name', 'kind', 'units', 'acquired_on', 'platform', 'status', 'error', 'original_name', 'size_bytes',
	'storage_key', 'preview_key', 'band', 'width', 'height', 'band_count', 'epsg', 'resolution_x', 'resolution_y', 'nodata',
	'footprint', 'transform', 'stat_min', 'stat_max', 'stat_mean', 'stat_std', 'valid_count', 'histogram', 'created_by',
	'created_at', 'updated_at'
] as const;

const jsonColumns = ['footprint', 'transform', 'histogram'] as const;

function parseRow(row: Record<string, unknown>): LayerRow {
	const out = { ...row } as Record<string, unknown>;
	for (const c of jsonColumns) out[c] = typeof row[c] === 'string' ? JSON.parse(row[c] as string) : (row[c] ?? null);
	// DATE columns: keep the calendar day as text (no time-zone shift).
	const d = row.acquired_on;
	out.acquired_on = d instanceof Date ? d.toISOString().slice(0, 10) : typeof d === 'string' ? d.slice(0, 10) : null;
	out.size_bytes = Number(row.size_bytes ?? 0);
	out.valid_count = row.valid_count === null || row.valid_count === undefined ? null : Number(row.valid_count);
	return out as unknown as LayerRow;
}

export async function listLayers(db: Db, networkId: number): Promise<LayerRow[]> {
	const rows = await db('layers').select(columns).where({ network_id: networkId }).orderBy('created_at', 'desc').orderBy('id', 'desc');
	return rows.map(parseRow);
}

/** The newest ready layer with a preview image, or undefined. */
export async function latestPreviewedLayer(db: Db, networkId: number): Promise<LayerRow | undefined> {
	const row = await db('layers')
		.select(columns)
		.where({ network_id: networkId, status: 'ready' })
		.whereNotNull('preview_key')
		.orderBy([{ column: 'created_at', order: 'desc' }, { column: 'id', order: 'desc' }])
		.first();
	return row ? parseRow(row) : undefined;
}

export async function findLayer(db: Db, networkId: number, id: number): Promise<LayerRow | undefined> {
	const row = await db('layers').select(columns).where({ network_id: networkId, id }).first();
	return row ? parseRow(row) : undefined;
}

export type NewLayer = Pick<LayerRow, 'network_id' | 'name' | 'kind' | 'units' | 'acquired_on' | 'platform' | 'band' | 'original_name' | 'created_by'> & {
	/** Known before the upload starts, so that a crash mid-upload leaves a key the sweeper can remove. */
	storage_key?: string | null;
};

export async function insertLayer(db: Db, f: NewLayer): Promise<number> {
	const [id] = await db('layers').insert({ ...f, status: 'uploading' });
	return id;
}

export type LayerPatch = Partial<Omit<LayerRow, 'id' | 'network_id' | 'created_at' | 'updated_at' | 'created_by'>>;

export async function updateLayer(db: Db, id: number, patch: LayerPatch): Promise<void> {
	const row: Record<string, unknown> = { ...patch, updated_at: db.fn.now() };
	for (const c of jsonColumns) if (c in patch) row[c] = patch[c] === null ? null : JSON.stringify(patch[c]);
	await db('layers').where({ id }).update(row);
}

export async function deleteLayerRow(db: Db, id: number): Promise<void> {
	await db('layers').where({ id }).delete();
}

/** Uploads that never finished (the server stopped mid-way): still uploading or processing since before `before`. */
export async function abandonedUploads(db: Db, before: Date): Promise<{ id: number; storage_key: string | null; preview_key: string | null }[]> {
	return db('layers').select('id', 'storage_key', 'preview_key').whereIn('status', ['uploading', 'processing']).andWhere('updated_at', '<', before).orderBy('id');
}
