import type { Db } from '../db';

export interface NetworkRow {
	id: number;
	organisation_id: number;
	slug: string;
	name: string;
	description: string;
	crs_epsg: number | null;
	/** The working CRS decided for the network (services/working-crs.ts); null until something has a position. */
	working_epsg: number | null;
	study_area: unknown | null;
	exclusions: unknown | null;
	publication: 'private' | 'published';
	public_text: string;
	version: number;
	created_at: Date;
	updated_at: Date;
}

const columns = ['id', 'organisation_id', 'slug', 'name', 'description', 'crs_epsg', 'working_epsg', 'study_area', 'exclusions', 'publication', 'public_text', 'version', 'created_at', 'updated_at'] as const;

function parseJsonColumns(row: Record<string, unknown>): NetworkRow {
	const parse = (v: unknown) => (typeof v === 'string' ? JSON.parse(v) : v ?? null);
	return { ...(row as unknown as NetworkRow), study_area: parse(row.study_area), exclusions: parse(row.exclusions) };
}

/** A network in a list: no study-area or exclusion geometry (fetch one network for those). */
export type NetworkSummaryRow = Omit<NetworkRow, 'study_area' | 'exclusions'> & { has_study_area: boolean };

const summaryColumns = ['id', 'organisation_id', 'slug', 'name', 'description', 'crs_epsg', 'publication', 'public_text', 'version', 'created_at', 'updated_at'] as const;

/** One page of the organisations' networks by name, and how many there are in all. */
export async function listNetworks(db: Db, organisationIds: number[], page: { limit: number; offset: number }): Promise<{ rows: NetworkSummaryRow[]; total: number }> {
	if (organisationIds.length === 0) return { rows: [], total: 0 };
	const [rows, count] = await Promise.all([
		db('networks')
			.select(...summaryColumns, db.raw('study_area IS NOT NULL AS has_study_area'))
			.whereIn('organisation_id', organisationIds)
			.orderBy('name')
			.orderBy('id')
			.limit(page.limit)
			.offset(page.offset),
		db('networks').whereIn('organisation_id', organisationIds).count({ n: '*' }).first()
	]);
	return { rows: rows.map((r: Record<string, unknown>) => ({ ...(r as unknown as NetworkSummaryRow), has_study_area: !!Number(r.has_study_area) })), total: Number(count?.n ?? 0) };
}

export async function findNetwork(db: Db, id: number, opts: { forUpdate?: boolean } = {}): Promise<NetworkRow | undefined> {
	const q = db('networks').select(columns).where({ id }).first();
	const row = await (opts.forUpdate ? q.forUpdate() : q);
	return row ? parseJsonColumns(row) : undefined;
}

export async function slugTaken(db: Db, organisationId: number, slug: string): Promise<boolean> {
	return !!(await db('networks').select('id').where({ organisation_id: organisationId, slug }).first());
}

export interface NetworkFields {
	name: string;
	slug: string;
	description: string;
	crs_epsg: number | null;
	publication: 'private' | 'published';
	public_text: string;
	study_area: unknown | null;
	exclusions: unknown | null;
}

export async function insertNetwork(db: Db, organisationId: number, createdBy: number, f: NetworkFields): Promise<number> {
	const [id] = await db('networks').insert({
		...f,
		organisation_id: organisationId,
		created_by: createdBy,
		study_area: f.study_area === null ? null : JSON.stringify(f.study_area),
		exclusions: f.exclusions === null ? null : JSON.stringify(f.exclusions)
	});
	return id;
}

/** Optimistic update: succeeds only when the row still has `version`. Returns whether it did. */
export async function updateNetwork(db: Db, id: number, version: number, patch: Partial<NetworkFields>): Promise<boolean> {
	const row: Record<string, unknown> = { ...patch, version: version + 1, updated_at: db.fn.now() };
	if ('study_area' in patch) row.study_area = patch.study_area === null ? null : JSON.stringify(patch.study_area);
	if ('exclusions' in patch) row.exclusions = patch.exclusions === null ? null : JSON.stringify(patch.exclusions);
	const n = await db('networks').where({ id, version }).update(row);
	return n === 1;
}

/** The facts the working CRS is decided from: the explicit choice, the study area, the grid in use, the sensors' extent. */
export async function workingCrsFacts(db: Db, id: number): Promise<{ crsEpsg: number | null; studyArea: unknown; gridEpsg: number | null; sensorBox: [number, number, number, number] | null } | undefined> {
	const row = await db('networks as n')
		.leftJoin('importance_recipe_versions as v', 'v.id', 'n.recipe_version_id')
		.select('n.crs_epsg', 'n.study_area', 'v.grid_epsg')
		.where('n.id', id)
		.first();
	if (!row) return undefined;
	const box = await db('sensors').where({ network_id: id }).min({ w: 'lon', s: 'lat' }).max({ e: 'lon', n: 'lat' }).first();
	return {
		crsEpsg: row.crs_epsg ?? null,
		studyArea: typeof row.study_area === 'string' ? JSON.parse(row.study_area) : (row.study_area ?? null),
		gridEpsg: row.grid_epsg ?? null,
		sensorBox: box && box.w !== null ? [Number(box.w), Number(box.s), Number(box.e), Number(box.n)] : null
	};
}

export async function setWorkingEpsg(db: Db, id: number, epsg: number | null): Promise<void> {
	await db('networks').where({ id }).update({ working_epsg: epsg });
}
