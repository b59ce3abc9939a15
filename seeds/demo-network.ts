/**
 * The demo network's content, loaded from data/demo/ through the same services that an analyst's
 * uploads use: the study area and exclusions, the three rasters, an importance recipe version in use,
 * the sub-catchment zone set with its measured shares, and the 14 sensors.
 *
 * Each stage is its own function, checks first and does nothing when its part is already there,
 * so running the seed twice changes nothing. Stages run in order because each needs the one before
 * (the zone shares need the recipe, the recipe needs the layers); a stage that one day becomes a
 * queued job only has to wait for that job before it returns.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { Readable } from 'node:stream';
import type { Knex } from 'knex';
import { findNetwork, type NetworkRow } from '../src/lib/server/repositories/networks';
import { parseAreaUpload, setArea } from '../src/lib/server/services/areas';
import { saveRecipeVersion, useRecipeVersion } from '../src/lib/server/services/importance';
import { layerLimits, uploadLayer } from '../src/lib/server/services/layers';
import { importSensors } from '../src/lib/server/services/sensors';
import { createUploadedZoneSet, importanceForZones, useZoneSet } from '../src/lib/server/services/zones';
import type { ObjectStore } from '../src/lib/server/storage/object-store';
import { networkRecipeVersionId } from '../src/lib/server/repositories/recipes';
import { prepareMapImportance } from '../src/lib/server/services/map-importance';
import { WEB_MAP_EPSG } from '../src/lib/map/web-map';
import { workingCrs } from '../src/lib/server/services/working-crs';

const demoDir = path.resolve(import.meta.dirname, '../data/demo');
const demoFile = (name: string) => readFileSync(path.join(demoDir, name));

/** The three rasters of data/demo/, under the names the demo network shows. */
export const DEMO_LAYERS = [
	{ name: 'Soil moisture (satellite, 1 km)', kind: 'soil_moisture', units: 'm³/m³', platform: 'satellite', fileName: 'soil-moisture.tif' },
	{ name: 'Vegetation index (drone survey, 30 m)', kind: 'vegetation_index', units: '', platform: 'drone', fileName: 'vegetation-index.tif' },
	{ name: 'Terrain height (elevation model, 100 m)', kind: 'elevation', units: 'm', platform: 'model', fileName: 'terrain-height.tif' }
] as const;

/**
 * The recipe in use: drier ground counts more (probes are most wanted where the soil dries first),
 * so does ground where moisture changes over a few kilometres, and so does higher ground, which
 * drains and dries before the valley floor. The soil moisture and the terrain model cover the
 * whole catchment; the terrain model's 100 m cells are the finest of the recipe, so the
 * importance surface, and with it the working grid of a placement, has 100 m cells (with the
 * soil moisture alone both would have 1 km cells, coarser than a probe's reach). The drone
 * survey covers only a corner of the catchment (a recipe layer without data makes the surface
 * empty there), so it is loaded for looking at but left out of the recipe.
 */
export const DEMO_RECIPE = {
	name: 'Dry ground and its variability',
	note: 'Demo recipe: drier soil first, then where moisture varies within 3 km, then higher ground.',
	steps: [
		{ layer: 0, transform: 'invert', weight: 2 },
		{ layer: 0, transform: 'variability', weight: 1, params: { distanceM: 3000 } },
		{ layer: 2, transform: 'identity', weight: 1 }
	]
} as const;

export const DEMO_ZONE_SET_NAME = 'Sub-catchments';

export interface DemoActors {
	organisationId: number;
	networkId: number;
	/** Who the audit entries name: the demo analyst, who would have done these uploads; null when the demo users are not created. */
	analystId: number | null;
}

/**
 * The actor the services record. They type it as a user id; the columns it lands in (created_by,
 * audit_log.actor_user_id) take null, which is what a seed without demo users has to give.
 */
const actor = (a: DemoActors) => a.analystId as number;

async function network(db: Knex, id: number): Promise<NetworkRow> {
	const n = await findNetwork(db, id);
	if (!n) throw new Error(`demo network ${id} is missing`);
	return n;
}

/**
 * The study area and exclusions from data/demo/ when the network has none. A demo network seeded
 * before it had any content (no layer yet) may still carry the catchment's earlier outline in
 * another place: it is replaced too, so that the rasters fall inside it.
 */
export async function seedDemoArea(db: Knex, a: DemoActors): Promise<void> {
	let n = await network(db, a.networkId);
	const studyArea = parseAreaUpload('studyArea', demoFile('study-area.geojson').toString('utf8'), 'study-area.geojson');
	const neverFilled = !(await db('layers').select('id').where({ network_id: n.id }).first());
	if (!n.study_area || (neverFilled && JSON.stringify(n.study_area) !== JSON.stringify(studyArea.study_area))) {
		n = await setArea(db, n.id, actor(a), n.version, studyArea);
	}
	if (!n.exclusions) {
		await setArea(db, n.id, actor(a), n.version, parseAreaUpload('exclusions', demoFile('exclusions.geojson').toString('utf8'), 'exclusions.geojson'));
	}
}

/** Uploads each demo raster that the network does not hold yet (by name); returns the layer ids in DEMO_LAYERS order. */
export async function seedDemoLayers(db: Knex, store: ObjectStore, a: DemoActors): Promise<number[]> {
	const ids: number[] = [];
	for (const l of DEMO_LAYERS) {
		const found = await db('layers').select('id').where({ network_id: a.networkId, name: l.name, status: 'ready' }).first();
		if (found) {
			ids.push(found.id);
			continue;
		}
		const view = await uploadLayer(db, store, { networkId: a.networkId, organisationId: a.organisationId, actorId: actor(a) }, { ...l }, Readable.from([demoFile(l.fileName)]), layerLimits(process.env));
		ids.push(view.id);
	}
	return ids;
}

/** Saves version 1 of the demo recipe when the network has no recipe of that name, and uses it when the network uses none. */
export async function seedDemoRecipe(db: Knex, store: ObjectStore, a: DemoActors, layerIds: readonly number[]): Promise<void> {
	let version = await db('importance_recipe_versions as v')
		.join('importance_recipes as r', 'r.id', 'v.recipe_id')
		.select('v.id')
		.where({ 'r.network_id': a.networkId, 'r.name': DEMO_RECIPE.name })
		.orderBy('v.version', 'desc')
		.first();
	if (!version) {
		const definition = { layers: DEMO_RECIPE.steps.map(({ layer, ...step }) => ({ ...step, layerId: String(layerIds[layer]) })) };
		version = await saveRecipeVersion(db, store, a.networkId, a.organisationId, actor(a), { name: DEMO_RECIPE.name, note: DEMO_RECIPE.note, definition });
	}
	const inUse = await db('networks').select('recipe_version_id').where({ id: a.networkId }).first();
	if (inUse?.recipe_version_id == null) await useRecipeVersion(db, a.networkId, a.organisationId, actor(a), version.id);
}

/** Uploads the four sub-catchments with shares measured on the importance in use, and uses them when the network uses no zone set. */
export async function seedDemoZones(db: Knex, store: ObjectStore, a: DemoActors): Promise<void> {
	const n = await network(db, a.networkId);
	let set = await db('zone_sets').select('id').where({ network_id: n.id, name: DEMO_ZONE_SET_NAME }).first();
	if (!set) {
		const importance = await importanceForZones(db, store, n);
		set = { id: await createUploadedZoneSet(db, n, actor(a), DEMO_ZONE_SET_NAME, demoFile('zones.geojson').toString('utf8'), 'zones.geojson', importance) };
	}
	const inUse = await db('networks').select('zone_set_id').where({ id: n.id }).first();
	if (inUse?.zone_set_id == null) await useZoneSet(db, n, actor(a), set.id);
}

/** Imports data/demo/sensors.csv when the network holds no sensors yet (the import is all or nothing). */
export async function seedDemoSensors(db: Knex, a: DemoActors): Promise<void> {
	const any = await db('sensors').select('id').where({ network_id: a.networkId }).first();
	if (any) return;
	const outcome = await importSensors(db, await network(db, a.networkId), actor(a), demoFile('sensors.csv').toString('utf8'), 'csv', 'sensors.csv');
	if (!outcome.ok) throw new Error(`the demo sensors.csv does not import: ${outcome.errors.map((e) => `row ${e.row} ${e.field}: ${e.message}`).join('; ')}`);
}

/** Every stage, in the order the data depend on each other. */
export async function seedDemoNetwork(db: Knex, store: ObjectStore, a: DemoActors): Promise<void> {
	await seedDemoArea(db, a);
	const layerIds = await seedDemoLayers(db, store, a);
	await seedDemoRecipe(db, store, a, layerIds);
	await seedDemoZones(db, store, a);
	await seedDemoSensors(db, a);
	await seedDemoMapImportance(db, store, a);
}

/**
 * Draws the importance map of the recipe version in use, in the working CRS (server-drawn maps) and
 * in EPSG:3857 (the web maps), as its map-importance jobs would (here, in the seeding process): the
 * demo's maps open with their importance at once. Does nothing when they are drawn already.
 */
export async function seedDemoMapImportance(db: Knex, store: ObjectStore, a: DemoActors): Promise<void> {
	const versionId = await networkRecipeVersionId(db, a.networkId);
	const epsg = await workingCrs(db, await network(db, a.networkId));
	if (versionId === null || epsg === null) return;
	for (const e of new Set([epsg, WEB_MAP_EPSG])) await prepareMapImportance(db, store, { networkId: a.networkId, versionId, epsg: e });
}
