/** Zone sets and their zones. Zone geometry is a GeoJSON MultiPolygon in WGS 84. */
import type { Db } from '../db';
import type { MultiPolygonGeometry } from '../../geo/polygons';

import type { ZoneSetKind } from '../../api/client';

export type { ZoneSetKind };

export interface ZoneSetRow {
	id: number;
	network_id: number;
	name: string;
	kind: ZoneSetKind;
	params: Record<string, unknown> | null;
	recipe_version_id: number | null;
	created_at: Date;
}

export interface ZoneRow {
	id: number;
	zone_set_id: number;
	code: string;
	name: string;
	geometry: MultiPolygonGeometry;
	importance_share: number | null;
}

const parse = (v: unknown) => (typeof v === 'string' ? JSON.parse(v) : (v ?? null));

export async function listZoneSets(db: Db, networkId: number): Promise<ZoneSetRow[]> {
	const rows = await db('zone_sets').select('id', 'network_id', 'name', 'kind', 'params', 'recipe_version_id', 'created_at').where({ network_id: networkId }).orderBy('id', 'desc');
	return rows.map((r: ZoneSetRow) => ({ ...r, params: parse(r.params) }));
}

export async function findZoneSet(db: Db, networkId: number, id: number): Promise<ZoneSetRow | undefined> {
	const r = await db('zone_sets').select('id', 'network_id', 'name', 'kind', 'params', 'recipe_version_id', 'created_at').where({ network_id: networkId, id }).first();
	return r ? { ...r, params: parse(r.params) } : undefined;
}

export async function listZones(db: Db, zoneSetIds: number[]): Promise<ZoneRow[]> {
	if (zoneSetIds.length === 0) return [];
	const rows = await db('zones').select('id', 'zone_set_id', 'code', 'name', 'geometry', 'importance_share').whereIn('zone_set_id', zoneSetIds).orderBy('id');
	return rows.map((r: ZoneRow) => ({ ...r, geometry: parse(r.geometry), importance_share: r.importance_share === null ? null : Number(r.importance_share) }));
}

export async function insertZoneSet(
	db: Db,
	networkId: number,
	createdBy: number,
	f: { name: string; kind: ZoneSetKind; params: Record<string, unknown> | null; recipe_version_id: number | null }
): Promise<number> {
	const [id] = await db('zone_sets').insert({ ...f, params: f.params === null ? null : JSON.stringify(f.params), network_id: networkId, created_by: createdBy });
	return id;
}

export async function insertZones(db: Db, zoneSetId: number, zones: { code: string; name: string; geometry: MultiPolygonGeometry; importance_share: number | null }[]): Promise<void> {
	for (let i = 0; i < zones.length; i += 200) {
		await db('zones').insert(zones.slice(i, i + 200).map((z) => ({ ...z, zone_set_id: zoneSetId, geometry: JSON.stringify(z.geometry) })));
	}
}

/** Every zone's importance share in a few UPDATEs (one CASE per 500 zones), not one per zone. */
export async function setZoneShares(db: Db, shares: readonly { id: number; share: number | null }[]): Promise<void> {
	for (let i = 0; i < shares.length; i += 500) {
		const part = shares.slice(i, i + 500);
		const cases = part.map(() => 'WHEN ? THEN ?').join(' ');
		await db('zones')
			.whereIn('id', part.map((s) => s.id))
			.update({ importance_share: db.raw(`CASE id ${cases} END`, part.flatMap((s) => [s.id, s.share])) });
	}
}

export async function deleteZoneSet(db: Db, networkId: number, id: number): Promise<boolean> {
	return (await db('zone_sets').where({ network_id: networkId, id }).delete()) === 1;
}

export async function setNetworkZoneSet(db: Db, networkId: number, zoneSetId: number | null): Promise<void> {
	await db('networks').where({ id: networkId }).update({ zone_set_id: zoneSetId });
}

export async function networkZoneSetId(db: Db, networkId: number): Promise<number | null> {
	const r = await db('networks').select('zone_set_id').where({ id: networkId }).first();
	return r?.zone_set_id ?? null;
}
