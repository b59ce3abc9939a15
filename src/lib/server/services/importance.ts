/**
 * Importance recipes as a use case: preview a recipe on the network's layers, save it as a new
 * immutable version, choose the version the network works with, and hand the network's current
 * importance surface to the zones and map code (networkImportance).
 *
 * Grid of a surface: every layer of the recipe is brought onto ONE grid, the grid of its finest
 * layer (smallest cell area in metres; ties: the first listed), coarsened by an integer factor
 * when it would exceed MAX_SURFACE_CELLS. Each layer is read from storage tile by tile and
 * averaged over blocks of pixels to at most MAX_SURFACE_CELLS first (layerGridBand), so no layer
 * is ever held at full size. Layers in another CRS are reprojected (nearest
 * neighbour, reprojectToGrid), layers in the same CRS are aligned (alignToGrid). Cells outside a
 * layer's extent are nodata, and nodata in any layer is nodata in the surface (combineLayers).
 *
 * Stored surface ("surface_key" of a version): a compact binary, see encodeSurface.
 */
import type { Knex } from 'knex';
import { z } from 'zod';
import { cellSizeMetres, combineLayers, ImportanceError, legendStops, parseRecipe, type GridBand, type GridSpec, type LegendStop, type Recipe } from '../../importance';
import type { RasterBand } from '../../geo/geotiff';
import { LayerRejected } from '../layers/errors';
import { renderPreview } from '../layers/preview';
import { reprojectToGrid } from '../layers/reproject';
import { newObjectKey, type ObjectStore } from '../storage/object-store';
import { recordAudit } from '../repositories/audit';
import { findLayer, type LayerRow } from '../repositories/layers';
import {
	bumpLatestVersion,
	deleteRecipeRow,
	findRecipe,
	findRecipeByName,
	findVersion,
	insertRecipe,
	insertVersion,
	listRecipes,
	listVersions,
	networkRecipeVersionId,
	setNetworkRecipeVersion,
	setSurfaceKey,
	type RecipeRow,
	type RecipeVersionRow
} from '../repositories/recipes';
import { ServiceError } from './errors';
import { settleWorkingCrs } from './working-crs';

/** Largest surface, in cells (4 million Float32 = 16 MB). */
const MAX_SURFACE_CELLS = 4_000_000;

/**
 * The importance surface a network currently works with.
 *
 *   band.grid   GridSpec of the surface: north-up, `epsg`, width × height cells, outer upper-left
 *               corner (x0, y0), cell size dx × dy in CRS units (`units` 'metre' or 'degree').
 *   band.data   Float32Array, width·height values, row-major, row 0 the northern-most row;
 *               importance 0..1, NaN where there is no data (band.nodata is always null).
 *   epsg        the surface's CRS (= band.grid.epsg), that of the recipe's finest layer; it is
 *               not necessarily the network's working CRS: reproject before mixing grids.
 *   recipeVersionId  the importance_recipe_versions.id it was computed from.
 *   validCount  cells with a value; min/max over them.
 *
 * For the engine, aggregate it into a working grid (src/lib/geo/aggregate.ts) via surfaceRasterBand(result),
 * which gives the RasterBand form (geotransform) that the aggregation reads (bandSource in src/lib/geo/aggregate.ts).
 */
export interface NetworkImportance {
	band: GridBand & { data: Float32Array; nodata: null };
	grid: GridSpec;
	epsg: number;
	recipeVersionId: number;
	validCount: number;
	min: number;
	max: number;
}

/** The layer ids a recipe definition cites (recipe steps carry them as strings). */
export function recipeLayerIds(recipe: Recipe): number[] {
	return [...new Set(recipe.layers.map((l) => Number(l.layerId)))];
}

async function readyLayer(db: Knex, networkId: number, layerId: string): Promise<LayerRow> {
	const id = Number(layerId);
	const layer = Number.isInteger(id) && id > 0 ? await findLayer(db, networkId, id) : undefined;
	if (!layer) throw new ServiceError(422, 'layer_missing', `Layer ${layerId} does not exist in this network.`, 'layers');
	if (layer.status !== 'ready' || !layer.storage_key) throw new ServiceError(422, 'layer_not_ready', `Layer "${layer.name}" is not ready yet.`, 'layers');
	return layer;
}

/** The GeoTIFF reader, loaded on first use (see the same note in ./layers). */
const inspectModule = () => import('../layers/inspect');

/**
 * A stored layer's band as a grid of at most `maxCells` cells, read from storage tile by tile:
 * a band larger than that is averaged over f × f blocks of pixels (f = ⌈√(pixels / maxCells)⌉, the
 * factor targetGrid coarsens the finest layer by), so no layer is ever held at full size.
 */
export async function layerGridBand(store: ObjectStore, layer: LayerRow, maxCells = MAX_SURFACE_CELLS): Promise<GridBand> {
	if (!layer.storage_key) throw new ServiceError(422, 'layer_not_ready', `Layer "${layer.name}" has no stored file.`);
	const [{ toGridBand }, { openGeoTiff, RasterError }, { blockAverage }] = await Promise.all([inspectModule(), import('../../geo/geotiff'), import('../../geo/aggregate')]);
	const reader = await store.openRanges(layer.storage_key);
	try {
		const source = await openGeoTiff(reader, { band: layer.band, name: layer.name, maxPixels: Number.MAX_SAFE_INTEGER });
		try {
			const factor = Math.max(1, Math.ceil(Math.sqrt((source.width * source.height) / maxCells)));
			const avg = await blockAverage(source, factor);
			const { blocks: _b, close: _c, blockWidth: _w, blockHeight: _h, overviews: _o, ...header } = source;
			return toGridBand({ ...header, width: avg.width, height: avg.height, transform: avg.transform, data: avg.data, nodata: null });
		} finally {
			await source.close();
		}
	} catch (e) {
		if (e instanceof LayerRejected || e instanceof RasterError) throw new ServiceError(422, 'layer_unreadable', e.message);
		throw e;
	} finally {
		await reader.close();
	}
}

function cellArea(g: GridSpec): number {
	const m = cellSizeMetres(g);
	return m.x * m.y;
}

/** The grid of the finest band, coarsened by an integer factor to stay within maxCells. */
export function targetGrid(bands: GridBand[], maxCells = MAX_SURFACE_CELLS): GridSpec {
	if (bands.length === 0) throw new ImportanceError('a recipe needs at least one layer');
	let best = bands[0].grid;
	for (const b of bands.slice(1)) if (cellArea(b.grid) < cellArea(best) * (1 - 1e-9)) best = b.grid;
	const n = best.width * best.height;
	if (n <= maxCells) return { ...best };
	const f = Math.ceil(Math.sqrt(n / maxCells));
	return { ...best, width: Math.ceil(best.width / f), height: Math.ceil(best.height / f), dx: best.dx * f, dy: best.dy * f };
}

export interface ComputedSurface {
	grid: GridSpec;
	data: Float32Array;
	validCount: number;
	min: number;
	max: number;
}

/** Validate a recipe against the network's ready layers and compute its surface. */
export async function computeSurface(db: Knex, store: ObjectStore, networkId: number, recipe: Recipe): Promise<ComputedSurface> {
	const ids = [...new Set(recipe.layers.map((l) => l.layerId))];
	const bands = new Map<string, GridBand>();
	for (const id of ids) bands.set(id, await layerGridBand(store, await readyLayer(db, networkId, id)));
	const grid = targetGrid(ids.map((id) => bands.get(id)!));
	const aligned = new Map<string, GridBand>();
	for (const [id, b] of bands) aligned.set(id, reprojectToGrid(b, grid));
	let surface;
	try {
		surface = combineLayers(recipe, aligned);
	} catch (e) {
		if (e instanceof ImportanceError) throw new ServiceError(422, 'recipe_invalid', e.message, 'layers');
		throw e;
	}
	if (surface.validCount === 0) {
		throw new ServiceError(422, 'recipe_empty', 'The layers of this recipe do not overlap with data anywhere: the importance map would be empty.', 'layers');
	}
	let min = Infinity;
	let max = -Infinity;
	for (const v of surface.data) {
		if (Number.isNaN(v)) continue;
		if (v < min) min = v;
		if (v > max) max = v;
	}
	return { grid: surface.grid, data: surface.data, validCount: surface.validCount, min, max };
}

function parseOrFail(definition: unknown): Recipe {
	const parsed = parseRecipe(definition);
	if (!parsed.ok) {
		const first = parsed.issues[0];
		throw new ServiceError(400, 'recipe_invalid', `Recipe: ${first.path ? `${first.path}: ` : ''}${first.message}`, 'layers');
	}
	return parsed.recipe;
}

export interface RecipePreview {
	png: Buffer;
	width: number;
	height: number;
	grid: GridSpec;
	validCount: number;
	min: number;
	max: number;
	mean: number;
	legend: LegendStop[];
}

/**
 * The cheap checks of a recipe, for a request that queues its computation: the definition parses
 * and every layer it names exists in the network and is ready. Throws ServiceError 400/422.
 */
export async function checkRecipe(db: Knex, networkId: number, definition: unknown): Promise<Recipe> {
	const recipe = parseOrFail(definition);
	for (const id of new Set(recipe.layers.map((l) => l.layerId))) await readyLayer(db, networkId, id);
	return recipe;
}

/** The importance map of a recipe, not saved: a PNG (moorland ramp over 0..1) and its figures. */
export async function previewRecipe(db: Knex, store: ObjectStore, networkId: number, definition: unknown): Promise<RecipePreview> {
	const recipe = parseOrFail(definition);
	const s = await computeSurface(db, store, networkId, recipe);
	const preview = renderPreview({ width: s.grid.width, height: s.grid.height, data: s.data, nodata: null }, { range: { min: 0, max: 1 } });
	let sum = 0;
	for (const v of s.data) if (!Number.isNaN(v)) sum += v;
	return { png: preview.png, width: preview.width, height: preview.height, grid: s.grid, validCount: s.validCount, min: s.min, max: s.max, mean: sum / s.validCount, legend: legendStops(0, 1) };
}

// ---------------------------------------------------------------- stored surface format

const MAGIC = 'CFIMP1\n';

/**
 * Compact binary of a surface: the ASCII magic "CFIMP1\n", a little-endian uint32 N, N bytes of
 * UTF-8 JSON ({grid, validCount, min, max}), zero padding to a multiple of 4, then
 * width·height little-endian Float32 values, row-major, NaN = nodata.
 */
export function encodeSurface(s: ComputedSurface): Uint8Array {
	const header = Buffer.from(JSON.stringify({ grid: s.grid, validCount: s.validCount, min: s.min, max: s.max }), 'utf8');
	const magic = Buffer.from(MAGIC, 'ascii');
	const headLen = magic.length + 4 + header.length;
	const pad = (4 - (headLen % 4)) % 4;
	const out = new Uint8Array(headLen + pad + s.data.length * 4);
	out.set(magic, 0);
	new DataView(out.buffer).setUint32(magic.length, header.length, true);
	out.set(header, magic.length + 4);
	const view = new DataView(out.buffer, headLen + pad);
	for (let i = 0; i < s.data.length; i++) view.setFloat32(i * 4, s.data[i], true);
	return out;
}

const headerSchema = z.object({
	grid: z.object({ epsg: z.number().int(), width: z.number().int().positive(), height: z.number().int().positive(), x0: z.number(), y0: z.number(), dx: z.number().positive(), dy: z.number().positive(), units: z.enum(['metre', 'degree']).optional() }),
	validCount: z.number().int().nonnegative(),
	min: z.number(),
	max: z.number()
});

export function decodeSurface(bytes: Uint8Array): ComputedSurface {
	const magic = Buffer.from(MAGIC, 'ascii');
	if (bytes.length < magic.length + 4 || !Buffer.from(bytes.subarray(0, magic.length)).equals(magic)) throw new Error('not a stored importance surface');
	const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
	const n = dv.getUint32(magic.length, true);
	const headLen = magic.length + 4 + n;
	const header = headerSchema.parse(JSON.parse(Buffer.from(bytes.subarray(magic.length + 4, headLen)).toString('utf8')));
	const pad = (4 - (headLen % 4)) % 4;
	const cells = header.grid.width * header.grid.height;
	if (bytes.length !== headLen + pad + cells * 4) throw new Error('stored importance surface is truncated');
	const data = new Float32Array(cells);
	for (let i = 0; i < cells; i++) data[i] = dv.getFloat32(headLen + pad + i * 4, true);
	return { grid: header.grid, data, validCount: header.validCount, min: header.min, max: header.max };
}

async function storeSurface(store: ObjectStore, s: ComputedSurface): Promise<string> {
	const key = newObjectKey('importance');
	await store.put(key, encodeSurface(s), { contentType: 'application/octet-stream' });
	return key;
}

// ---------------------------------------------------------------- recipes and versions

export interface RecipeVersionView {
	id: number;
	recipeId: number;
	version: number;
	definition: unknown;
	note: string;
	createdBy: string | null;
	createdAt: Date;
	hasSurface: boolean;
}

export interface RecipeView {
	id: number;
	name: string;
	latestVersion: number;
	versions: RecipeVersionView[];
}

function versionView(v: RecipeVersionRow): RecipeVersionView {
	return { id: v.id, recipeId: v.recipe_id, version: v.version, definition: v.definition, note: v.note, createdBy: v.created_by_name, createdAt: v.created_at, hasSurface: v.surface_key !== null };
}

function recipeView(r: RecipeRow, versions: RecipeVersionRow[]): RecipeView {
	return { id: r.id, name: r.name, latestVersion: r.latest_version, versions: versions.filter((v) => v.recipe_id === r.id).map(versionView) };
}

export async function listRecipeViews(db: Knex, networkId: number): Promise<{ recipes: RecipeView[]; currentVersionId: number | null }> {
	const recipes = await listRecipes(db, networkId);
	const versions = await listVersions(db, recipes.map((r) => r.id));
	return { recipes: recipes.map((r) => recipeView(r, versions)), currentVersionId: await networkRecipeVersionId(db, networkId) };
}

export async function getRecipeView(db: Knex, networkId: number, recipeId: number): Promise<RecipeView> {
	const r = await findRecipe(db, networkId, recipeId);
	if (!r) throw new ServiceError(404, 'not_found', 'No such recipe.');
	return recipeView(r, await listVersions(db, [r.id]));
}

export const saveVersionInput = z
	.object({
		recipeId: z.number().int().positive().optional(),
		name: z.string().trim().min(1, 'Give the recipe a name.').max(200, 'Keep the name under 200 characters.').optional(),
		definition: z.unknown(),
		note: z.string().trim().max(500, 'Keep the note under 500 characters.').default('')
	})
	.strict()
	.refine((v) => v.recipeId !== undefined || v.name !== undefined, { message: 'Give the recipe a name.', path: ['name'] });

export type SaveVersionInput = z.input<typeof saveVersionInput>;

/**
 * Save a recipe definition as a NEW version (1 for a new recipe, latest + 1 otherwise); older
 * versions are never touched. The surface is computed first (which checks every layer), stored,
 * and the version row cites it; when the transaction fails, the stored surface is removed again.
 */
export async function saveRecipeVersion(db: Knex, store: ObjectStore, networkId: number, organisationId: number, actorId: number, input: SaveVersionInput): Promise<RecipeVersionView> {
	const parsed = saveVersionInput.safeParse(input);
	if (!parsed.success) {
		throw ServiceError.fromZod(parsed.error);
	}
	const { recipeId, name, note } = parsed.data;
	const recipe = parseOrFail(parsed.data.definition);
	const surface = await computeSurface(db, store, networkId, recipe);
	const key = await storeSurface(store, surface);
	try {
		return await db.transaction(async (trx) => {
			let row: RecipeRow | undefined;
			if (recipeId !== undefined) {
				row = await findRecipe(trx, networkId, recipeId, { forUpdate: true });
				if (!row) throw new ServiceError(404, 'not_found', 'No such recipe.', 'recipeId');
			} else {
				const existing = await findRecipeByName(trx, networkId, name!);
				if (existing) throw new ServiceError(409, 'name_taken', `A recipe named "${name}" already exists; save a new version of it instead.`, 'name');
				const id = await insertRecipe(trx, networkId, name!);
				row = (await findRecipe(trx, networkId, id, { forUpdate: true }))!;
			}
			const version = row.latest_version + 1;
			const versionId = await insertVersion(trx, { recipe_id: row.id, version, definition: recipe, note, surface_key: key, grid_epsg: surface.grid.epsg, created_by: actorId });
			await bumpLatestVersion(trx, row.id, version);
			await recordAudit(trx, { organisationId, actorUserId: actorId, action: 'recipe.version.create', objectType: 'importance_recipe_version', objectId: versionId, after: { recipe: row.name, version, definition: recipe, note } });
			return versionView((await findVersion(trx, networkId, versionId))!);
		});
	} catch (e) {
		await store.delete(key).catch(() => undefined);
		throw e;
	}
}

/** "Use this version for the network": sets networks.recipe_version_id, with an audit entry. */
export async function useRecipeVersion(db: Knex, networkId: number, organisationId: number, actorId: number, versionId: number): Promise<void> {
	await db.transaction(async (trx) => {
		const v = await findVersion(trx, networkId, versionId);
		if (!v) throw new ServiceError(404, 'not_found', 'No such recipe version in this network.', 'versionId');
		const before = await networkRecipeVersionId(trx, networkId);
		await setNetworkRecipeVersion(trx, networkId, versionId);
		await settleWorkingCrs(trx, networkId);
		await recordAudit(trx, { organisationId, actorUserId: actorId, action: 'network.recipe_version', objectType: 'network', objectId: networkId, before: { recipeVersionId: before }, after: { recipeVersionId: versionId } });
	});
}

/** Delete a recipe and its versions; refused while the network uses one of them. */
export async function deleteRecipe(db: Knex, store: ObjectStore, networkId: number, organisationId: number, actorId: number, recipeId: number): Promise<void> {
	const keys = await db.transaction(async (trx) => {
		const r = await findRecipe(trx, networkId, recipeId, { forUpdate: true });
		if (!r) throw new ServiceError(404, 'not_found', 'No such recipe.');
		const versions = await listVersions(trx, [r.id]);
		const current = await networkRecipeVersionId(trx, networkId);
		if (current !== null && versions.some((v) => v.id === current)) {
			throw new ServiceError(409, 'recipe_in_use', `The network uses version ${versions.find((v) => v.id === current)!.version} of "${r.name}"; choose another version before deleting it.`);
		}
		await deleteRecipeRow(trx, r.id);
		await recordAudit(trx, { organisationId, actorUserId: actorId, action: 'recipe.delete', objectType: 'importance_recipe', objectId: r.id, before: { name: r.name, versions: versions.length } });
		return versions.map((v) => v.surface_key).filter((k): k is string => k !== null);
	});
	for (const k of keys) await store.delete(k).catch(() => undefined);
}

/**
 * The network's current importance surface (the version in networks.recipe_version_id), or null
 * when the network has not chosen one. The surface is read from the object store; when it was
 * never computed (or its object is gone) it is computed now and cached under the version's
 * surface_key: for jobs only. A request asks with `{ compute: false }`, which throws
 * ImportancePending instead (see recipeVersionImportance). See NetworkImportance for the shape.
 */
export async function networkImportance(db: Knex, store: ObjectStore, networkId: number, opts: { compute?: boolean } = {}): Promise<NetworkImportance | null> {
	const versionId = await networkRecipeVersionId(db, networkId);
	if (versionId === null) return null;
	return recipeVersionImportance(db, store, networkId, versionId, opts);
}

/**
 * A recipe version's surface is not stored (yet, or any more): a request that needs it does not
 * compute it, it queues a recipe-version job that does (`versionId`; the job's result is
 * {versionId}) and answers "being computed".
 */
export class ImportancePending extends ServiceError {
	constructor(
		public readonly versionId: number,
		public readonly jobId: number
	) {
		super(409, 'importance_pending', 'The importance surface of this recipe version is being computed; try again in a moment.');
	}
}

/**
 * The importance surface of one recipe version of the network (cached like networkImportance), or
 * null when there is no such version. A missing surface is computed here, unless `compute` is
 * false: then the recipe-version job that computes it is queued (once per stored state of the
 * version) and ImportancePending is thrown.
 */
export async function recipeVersionImportance(db: Knex, store: ObjectStore, networkId: number, versionId: number, opts: { compute?: boolean } = {}): Promise<NetworkImportance | null> {
	const version = await findVersion(db, networkId, versionId);
	if (!version) return null;
	let surface: ComputedSurface | null = null;
	if (version.surface_key && (await store.exists(version.surface_key))) {
		surface = decodeSurface(await store.getBuffer(version.surface_key));
	}
	if (!surface && opts.compute === false) {
		const { queueVersionSurface } = await import('./recipe-versions');
		const job = await queueVersionSurface(db, networkId, version.id, version.surface_key);
		throw new ImportancePending(version.id, job.id);
	}
	if (!surface) {
		surface = await computeSurface(db, store, networkId, parseOrFail(version.definition));
		const key = await storeSurface(store, surface);
		if (version.surface_key) {
			// The cached object went missing: point the version at the new one.
			await db('importance_recipe_versions').where({ id: version.id }).update({ surface_key: key });
		} else if (!(await setSurfaceKey(db, version.id, key))) {
			await store.delete(key); // another request cached it first
		}
	}
	return {
		band: { grid: surface.grid, data: surface.data, nodata: null },
		grid: surface.grid,
		epsg: surface.grid.epsg,
		recipeVersionId: version.id,
		validCount: surface.validCount,
		min: surface.min,
		max: surface.max
	};
}

/** The surface in the RasterBand form of src/lib/geo/geotiff.ts (for the aggregation into a working grid: bandSource in src/lib/geo/aggregate.ts). */
export function surfaceRasterBand(s: NetworkImportance): RasterBand {
	const g = s.grid;
	return {
		width: g.width,
		height: g.height,
		data: s.band.data,
		nodata: null,
		epsg: g.epsg,
		transform: [g.x0, g.dx, 0, g.y0, 0, -g.dy],
		bandCount: 1,
		band: 1,
		sampleFormat: 3,
		bitsPerSample: 32,
		compression: 1,
		tiled: false
	};
}
