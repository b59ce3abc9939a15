/**
 * Importance recipes and their versions. A version's definition never changes once inserted
 * (there is no update function for it); only `surface_key`, the cache of its computed surface,
 * is filled in later.
 */
import type { Db } from '../db';

export interface RecipeRow {
	id: number;
	network_id: number;
	name: string;
	latest_version: number;
	created_at: Date;
}

export interface RecipeVersionRow {
	id: number;
	recipe_id: number;
	version: number;
	definition: unknown;
	note: string;
	surface_key: string | null;
	/** EPSG code of the surface's grid (null for versions stored before it was recorded). */
	grid_epsg: number | null;
	created_by: number | null;
	created_by_name: string | null;
	created_at: Date;
}

const recipeColumns = ['id', 'network_id', 'name', 'latest_version', 'created_at'] as const;

function parseVersion(row: Record<string, unknown>): RecipeVersionRow {
	const def = row.definition;
	return { ...(row as unknown as RecipeVersionRow), definition: typeof def === 'string' ? JSON.parse(def) : def, created_by_name: (row.created_by_name as string | null) ?? null };
}

function versionQuery(db: Db) {
	return db('importance_recipe_versions as v')
		.leftJoin('users as u', 'u.id', 'v.created_by')
		.select('v.id', 'v.recipe_id', 'v.version', 'v.definition', 'v.note', 'v.surface_key', 'v.grid_epsg', 'v.created_by', 'u.name as created_by_name', 'v.created_at');
}

export async function listRecipes(db: Db, networkId: number): Promise<RecipeRow[]> {
	return db('importance_recipes').select(recipeColumns).where({ network_id: networkId }).orderBy('name');
}

export async function findRecipe(db: Db, networkId: number, id: number, opts: { forUpdate?: boolean } = {}): Promise<RecipeRow | undefined> {
	const q = db('importance_recipes').select(recipeColumns).where({ network_id: networkId, id }).first();
	return opts.forUpdate ? q.forUpdate() : q;
}

export async function findRecipeByName(db: Db, networkId: number, name: string): Promise<RecipeRow | undefined> {
	return db('importance_recipes').select(recipeColumns).where({ network_id: networkId, name }).first();
}

export async function insertRecipe(db: Db, networkId: number, name: string): Promise<number> {
	const [id] = await db('importance_recipes').insert({ network_id: networkId, name, latest_version: 0 });
	return id;
}

export async function bumpLatestVersion(db: Db, recipeId: number, version: number): Promise<void> {
	await db('importance_recipes').where({ id: recipeId }).update({ latest_version: version });
}

export async function deleteRecipeRow(db: Db, recipeId: number): Promise<void> {
	await db('importance_recipes').where({ id: recipeId }).delete();
}

export async function listVersions(db: Db, recipeIds: number[]): Promise<RecipeVersionRow[]> {
	if (recipeIds.length === 0) return [];
	const rows = await versionQuery(db).whereIn('v.recipe_id', recipeIds).orderBy('v.recipe_id').orderBy('v.version', 'desc');
	return rows.map(parseVersion);
}

/** A version, only when its recipe belongs to the network. */
export async function findVersion(db: Db, networkId: number, versionId: number): Promise<RecipeVersionRow | undefined> {
	const row = await versionQuery(db).join('importance_recipes as r', 'r.id', 'v.recipe_id').where({ 'v.id': versionId, 'r.network_id': networkId }).first();
	return row ? parseVersion(row) : undefined;
}

export interface NewVersion {
	recipe_id: number;
	version: number;
	definition: unknown;
	note: string;
	surface_key: string | null;
	/** EPSG code of the computed surface's grid. */
	grid_epsg: number | null;
	created_by: number | null;
}

export async function insertVersion(db: Db, v: NewVersion): Promise<number> {
	const [id] = await db('importance_recipe_versions').insert({ ...v, definition: JSON.stringify(v.definition) });
	return id;
}

/** Fill the cache key of a version's surface (only while none is set: the first writer wins). */
export async function setSurfaceKey(db: Db, versionId: number, key: string): Promise<boolean> {
	const n = await db('importance_recipe_versions').where({ id: versionId }).whereNull('surface_key').update({ surface_key: key });
	return n === 1;
}

/** Ids of the versions (in the network) whose definition cites the layer. */
export async function versionsCitingLayer(db: Db, networkId: number, layerId: number): Promise<{ recipe: string; version: number }[]> {
	const rows = await db('importance_recipe_versions as v')
		.join('importance_recipes as r', 'r.id', 'v.recipe_id')
		.select('r.name', 'v.version', 'v.definition')
		.where('r.network_id', networkId);
	const out: { recipe: string; version: number }[] = [];
	for (const row of rows) {
		const def = typeof row.definition === 'string' ? JSON.parse(row.definition) : row.definition;
		const layers: { layerId?: unknown }[] = Array.isArray(def?.layers) ? def.layers : [];
		if (layers.some((l) => String(l.layerId) === String(layerId))) out.push({ recipe: row.name, version: row.version });
	}
	return out;
}

export async function networkRecipeVersionId(db: Db, networkId: number): Promise<number | null> {
	const row = await db('networks').select('recipe_version_id').where({ id: networkId }).first();
	return row?.recipe_version_id ?? null;
}

export async function setNetworkRecipeVersion(db: Db, networkId: number, versionId: number | null): Promise<void> {
	await db('networks').where({ id: networkId }).update({ recipe_version_id: versionId, updated_at: db.fn.now() });
}
