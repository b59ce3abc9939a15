/**
 * Zone sets: (a) uploaded polygons, (b) a regular grid of square cells in the working CRS clipped
 * to the study area, (c) K zones computed from the importance (engine computeZones), traced back
 * from the raster cells to polygons. Zones are stored as GeoJSON MultiPolygons in WGS 84 with
 * their importance share (null until an importance surface exists). Counts of active sensors per
 * zone are computed on read, so they follow the inventory.
 */
import type { Knex } from 'knex';
import { z } from 'zod';
import { recordAudit } from '../repositories/audit';
import type { NetworkRow } from '../repositories/networks';
import type { SensorStatus, ZoneSet } from '../../api/client';
import { listSensors } from '../repositories/sensors';
import {
	deleteZoneSet,
	findZoneSet,
	insertZones,
	insertZoneSet,
	listZones,
	listZoneSets,
	networkZoneSetId,
	setNetworkZoneSet,
	setZoneShares,
	type ZoneRow,
	type ZoneSetKind,
	type ZoneSetRow
} from '../repositories/zones';
import { asMultiPolygon, parsePolygonUpload, PolygonError, type MultiPolygonGeometry, type Position } from '../../geo/polygons';
import { boundsOf, clipPolygonToRect, closeRing, orientRing, pointInPolygons, ringArea2 } from '../../geo/geometry';
import { projectRings } from '../../geo/geojson';
import { CrsError, parseEpsg, transformer } from '../../geo/crs';
import { computeZones } from '../../engine/zones';
import { rasterizeZones } from '../../engine/rasterize';
import type { WorkingGrid, ZoneMap } from '../../engine/types';
import { EngineInputError } from '../../engine/errors';
import { WorkingGridError, type WorkingGridOptions } from '../../geo/working-grid';
import { aggregateToWorkingGrid, bandSource } from '../../geo/aggregate';
import { CellSizeError } from '../../geo/cell-size';
import type { RasterBand } from '../../geo/geotiff';
import { ImportanceError } from '../../importance/grid';
import type { ObjectStore } from '../storage';
import { networkImportance, surfaceRasterBand } from './importance';
import { exclusionList } from './areas';
import { workingCrs } from './working-crs';
import { ServiceError } from './errors';

/** Cell sizes offered for grid zones: the SMAP EASE-Grid 2.0 product sizes (FIELD-FACTS.md [S]). */
export const GRID_PRESETS_M = [1000, 3000, 9000, 36000] as const;
const MAX_ZONES = 2500;

/** The importance on the working grid, with the recipe version it came from. */
export interface ImportanceSurface {
	grid: WorkingGrid;
	recipeVersionId: number | null;
}

export interface NewZone {
	code: string;
	name: string;
	geometry: MultiPolygonGeometry;
}

// ---------------------------------------------------------------- pure geometry helpers

/** A rectangle in working-CRS metres as a lon/lat ring, edges densified so it follows the projection. */
export function rectToLonLat(xmin: number, ymin: number, xmax: number, ymax: number, inverse: (x: number, y: number) => [number, number], pieces = 8): Position[] {
	const pts: Position[] = [];
	const side = (ax: number, ay: number, bx: number, by: number) => {
		for (let k = 0; k < pieces; k++) pts.push(inverse(ax + ((bx - ax) * k) / pieces, ay + ((by - ay) * k) / pieces));
	};
	side(xmin, ymin, xmax, ymin);
	side(xmax, ymin, xmax, ymax);
	side(xmax, ymax, xmin, ymax);
	side(xmin, ymax, xmin, ymin);
	pts.push(pts[0]);
	return orientRing(pts, true);
}

function roundPos(p: Position): Position {
	return [Math.round(p[0] * 1e7) / 1e7, Math.round(p[1] * 1e7) / 1e7];
}

/**
 * Square cells of `cellSize` metres in the working CRS, aligned on multiples of the cell size,
 * over the study area's extent; each cell is clipped to the study area (in working-CRS metres,
 * then taken back to lon/lat) and cells that keep no area are dropped. Ids "G1".."Gn" row by
 * row from the north-west; names give the row and column ("r1 c1").
 */
export function gridZones(studyArea: MultiPolygonGeometry, epsg: number, cellSize: number, maxZones = MAX_ZONES): NewZone[] {
	if (!(cellSize > 0) || !Number.isFinite(cellSize)) throw new ServiceError(400, 'invalid_input', 'The cell size must be a positive number of metres.', 'cellSize');
	const t = transformer(4326, epsg);
	const polys = studyArea.coordinates.map((poly) => projectRings(poly, t.forward, cellSize / 8).map((r) => closeRing(r)));
	const [xmin, ymin, xmax, ymax] = boundsOf([], polys) ?? [0, 0, 0, 0];
	const c0 = Math.floor(xmin / cellSize), c1 = Math.ceil(xmax / cellSize);
	const r0 = Math.floor(ymin / cellSize), r1 = Math.ceil(ymax / cellSize);
	const total = (c1 - c0) * (r1 - r0);
	if (total > maxZones * 4) throw new ServiceError(422, 'too_many_zones', `A ${cellSize / 1000} km grid makes about ${total} cells over this study area; choose a larger cell size.`, 'cellSize');
	const zones: NewZone[] = [];
	for (let r = r1 - 1, row = 1; r >= r0; r--, row++) {
		for (let c = c0, col = 1; c < c1; c++, col++) {
			const bx0 = c * cellSize, bx1 = bx0 + cellSize, by0 = r * cellSize, by1 = by0 + cellSize;
			const parts: Position[][][] = [];
			for (const poly of polys) {
				const clipped = clipPolygonToRect(poly, [bx0, by0, bx1, by1]);
				if (clipped.length > 0) parts.push(clipped.map((ring, k) => orientRing(ring, k === 0)));
			}
			if (parts.length === 0) continue;
			const whole = parts.length === 1 && parts[0].length === 1 && Math.abs(ringArea2(parts[0][0]) / 2 - cellSize * cellSize) < 1e-6 * cellSize * cellSize;
			const coordinates = whole
				? [[rectToLonLat(bx0, by0, bx1, by1, t.inverse).map(roundPos)]]
				: parts.map((poly) => poly.map((ring, k) => orientRing(ring.map((p) => roundPos(t.inverse(p[0], p[1]))), k === 0)));
			zones.push({ code: `G${zones.length + 1}`, name: `r${row} c${col}`, geometry: { type: 'MultiPolygon', coordinates } });
			if (zones.length > maxZones) throw new ServiceError(422, 'too_many_zones', `More than ${maxZones} grid cells fall in the study area; choose a larger cell size.`, 'cellSize');
		}
	}
	return zones;
}

/**
 * Trace the cells of each zone of a ZoneMap into polygons (cell edges between a zone cell and any
 * other cell, linked into rings: exteriors counter-clockwise, holes clockwise), in lon/lat.
 */
export function traceZoneMap(grid: Pick<WorkingGrid, 'width' | 'height' | 'x0' | 'y0' | 'cellSize' | 'crs'>, zones: ZoneMap): MultiPolygonGeometry[] {
	const { width, height, x0, y0, cellSize } = grid;
	const inv = transformer(parseEpsg(grid.crs), 4326).forward;
	// Vertex (i, j): x = x0 + i·cs, y = y0 − j·cs (j grows southwards).
	const toLonLat = (i: number, j: number) => roundPos(inv(x0 + i * cellSize, y0 - j * cellSize));
	return zones.ids.map((_, z) => {
		const at = (r: number, c: number) => r >= 0 && r < height && c >= 0 && c < width && zones.cellZone[r * width + c] === z;
		// Directed edges keep the zone on the left in (x, y) with y up: counter-clockwise around cells.
		const next = new Map<string, Array<[number, number]>>();
		const add = (a: [number, number], b: [number, number]) => {
			const k = `${a[0]},${a[1]}`;
			const list = next.get(k);
			if (list) list.push(b);
			else next.set(k, [b]);
		};
		for (let r = 0; r < height; r++)
			for (let c = 0; c < width; c++) {
				if (!at(r, c)) continue;
				if (!at(r + 1, c)) add([c, r + 1], [c + 1, r + 1]); // south edge, eastwards
				if (!at(r, c + 1)) add([c + 1, r + 1], [c + 1, r]); // east edge, northwards
				if (!at(r - 1, c)) add([c + 1, r], [c, r]); // north edge, westwards
				if (!at(r, c - 1)) add([c, r], [c, r + 1]); // west edge, southwards
			}
		const rings: Position[][] = [];
		for (const [startKey] of next) {
			while ((next.get(startKey)?.length ?? 0) > 0) {
				const [si, sj] = startKey.split(',').map(Number);
				const ring: Array<[number, number]> = [[si, sj]];
				let cur = next.get(startKey)!.pop()!;
				while (!(cur[0] === si && cur[1] === sj)) {
					ring.push(cur);
					const list = next.get(`${cur[0]},${cur[1]}`);
					if (!list || list.length === 0) break;
					cur = list.pop()!;
				}
				// drop collinear vertices
				const simple = ring.filter((p, k) => {
					const a = ring[(k + ring.length - 1) % ring.length];
					const b = ring[(k + 1) % ring.length];
					return (p[0] - a[0]) * (b[1] - p[1]) - (p[1] - a[1]) * (b[0] - p[0]) !== 0;
				});
				const ll = simple.map(([i, j]) => toLonLat(i, j));
				ll.push(ll[0]);
				if (ll.length >= 4) rings.push(ll);
			}
		}
		const exteriors = rings.filter((r) => ringArea2(r) > 0);
		const holes = rings.filter((r) => ringArea2(r) < 0);
		const polys: Position[][][] = exteriors.map((e) => [e]);
		for (const h of holes) {
			const owner = exteriors
				.map((e, k) => ({ k, a: ringArea2(e) }))
				.filter(({ k }) => h.some((p) => pointInPolygons(p, [[exteriors[k]]])))
				.sort((a, b) => a.a - b.a)[0];
			if (owner) polys[owner.k].push(h);
		}
		return { type: 'MultiPolygon', coordinates: polys };
	});
}

/** Mass share of each zone on an importance grid (zones rasterised by cell centre); null when the grid holds no mass. */
export function zoneShares(grid: WorkingGrid, geometries: readonly MultiPolygonGeometry[]): (number | null)[] {
	const fwd = transformer(4326, parseEpsg(grid.crs)).forward;
	const features = geometries.map((g, k) => ({ id: String(k), rings: g.coordinates.flatMap((poly) => projectRings(poly, fwd, grid.cellSize / 4)) }));
	return sharesOfMap(grid, rasterizeZones(grid, features));
}

function sharesOfMap(grid: WorkingGrid, map: ZoneMap): (number | null)[] {
	let total = 0;
	const sums = new Float64Array(map.ids.length);
	for (let i = 0; i < grid.mass.length; i++) {
		const m = grid.mass[i];
		if (!(m > 0)) continue;
		total += m;
		const z = map.cellZone[i];
		if (z >= 0) sums[z] += m;
	}
	return total > 0 ? Array.from(sums, (s) => s / total) : map.ids.map(() => null);
}

/**
 * Cell budget of the importance grid for zones (rule 2 of chooseCellSize, src/lib/geo/cell-size.ts):
 * zones are coarse, so a quarter of a placement run's budget.
 */
export const ZONE_CELL_BUDGET = 250_000;

/**
 * The importance surface on the working grid that zones are measured and computed on: the same
 * mass-preserving aggregation and cell-size rule as a placement run's grid (aggregateToWorkingGrid,
 * chooseCellSize), with the zones' budget and no sensing radius (zones do not depend on one); the
 * study area and exclusions count as shares of cells, so each zone's importance is the surface's
 * integral over it, up to edge cells. Zones are counted by cell centre, and zones drawn to the study
 * area's outline would leave out the cells it only grazes: a cell whose centre lies outside the
 * study area gives its (partial) mass up, and the rest is normalised again, so that zones which
 * partition the study area hold all of it.
 */
export async function zoneImportanceGrid(band: RasterBand, opts: Pick<WorkingGridOptions, 'crs' | 'studyArea' | 'exclusions'>): Promise<WorkingGrid> {
	const { grid } = await aggregateToWorkingGrid(bandSource(band), { ...opts, smallestRadius: null, cellBudget: ZONE_CELL_BUDGET });
	if (!opts.studyArea?.length) return grid;
	const fwd = transformer(4326, parseEpsg(grid.crs)).forward;
	const inside = rasterizeZones(grid, opts.studyArea.map((p, k) => ({ id: String(k), rings: projectRings(p, fwd, grid.cellSize / 4) }))).cellZone;
	const mass = new Float64Array(grid.mass.length);
	let total = 0;
	for (let i = 0; i < mass.length; i++) if (inside[i] >= 0) total += mass[i] = grid.mass[i];
	if (total > 0) for (let i = 0; i < mass.length; i++) mass[i] /= total;
	return { ...grid, mass };
}

/**
 * The network's importance (its chosen recipe version) on the zones' working grid
 * (zoneImportanceGrid: aggregated, study area and exclusions as shares of cells); null when no
 * recipe version is chosen yet.
 */
export async function importanceForZones(db: Knex, store: ObjectStore, network: NetworkRow): Promise<ImportanceSurface | null> {
	try {
		const imp = await networkImportance(db, store, network.id);
		if (!imp) return null;
		const area = asMultiPolygon(network.study_area);
		const opts = {
			crs: await workingCrs(db, network),
			studyArea: area?.coordinates?.length ? area.coordinates : undefined,
			exclusions: exclusionList(network.exclusions).map((f) => f.geometry.coordinates).flat()
		};
		const grid = await zoneImportanceGrid(surfaceRasterBand(imp), opts);
		return { grid, recipeVersionId: imp.recipeVersionId };
	} catch (e) {
		// A recipe that cannot be computed (a layer gone, a grid outside the study area …): say so.
		if (e instanceof ImportanceError || e instanceof WorkingGridError || e instanceof CrsError || e instanceof CellSizeError) {
			throw new ServiceError(422, 'importance_unavailable', `The importance cannot be measured: ${e.message}`);
		}
		throw e;
	}
}

/** Re-measure the shares of a zone set against the current importance (or clear them). */
export async function measureZoneSet(db: Knex, network: NetworkRow, actorId: number, zoneSetId: number, importance: ImportanceSurface | null): Promise<void> {
	await db.transaction(async (trx) => {
		const set = await findZoneSet(trx, network.id, zoneSetId);
		if (!set) throw new ServiceError(404, 'not_found', 'No such zone set.');
		const zones = await listZones(trx, [set.id]);
		const shares = importance ? zoneShares(importance.grid, zones.map((z) => z.geometry)) : zones.map(() => null);
		await setZoneShares(trx, zones.map((z, k) => ({ id: z.id, share: shares[k] })));
		await trx('zone_sets').where({ id: set.id }).update({ recipe_version_id: importance?.recipeVersionId ?? null });
		await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actorId, action: 'zone_set.measure', objectType: 'zone_set', objectId: set.id, after: { recipe_version_id: importance?.recipeVersionId ?? null } });
	});
}

// ---------------------------------------------------------------- inputs

export const gridInput = z.object({
	name: z.string().trim().max(200, 'Keep the name under 200 characters.').default(''),
	cellSizeKm: z.coerce.number({ error: 'The cell size is a number of kilometres.' }).gt(0.05, 'Use cells of at least 0.05 km.').max(500, 'Use cells of at most 500 km.')
});
export const computedInput = z.object({
	name: z.string().trim().max(200, 'Keep the name under 200 characters.').default(''),
	k: z.coerce.number({ error: 'The number of zones is a whole number.' }).int('The number of zones is a whole number.').min(1, 'Ask for at least 1 zone.').max(200, 'Ask for at most 200 zones.')
});
export const zoneSetApiInput = z.discriminatedUnion('kind', [
	z.object({ kind: z.literal('uploaded'), name: z.string().trim().max(200).default(''), geojson: z.unknown() }).strict(),
	z.object({ kind: z.literal('grid'), name: z.string().trim().max(200).default(''), cellSizeKm: z.number().gt(0.05).max(500) }).strict(),
	z.object({ kind: z.literal('computed'), name: z.string().trim().max(200).default(''), k: z.number().int().min(1).max(200) }).strict()
]);

// ---------------------------------------------------------------- use cases

function studyAreaOf(network: NetworkRow): MultiPolygonGeometry {
	const a = asMultiPolygon(network.study_area);
	if (!a) throw new ServiceError(422, 'no_study_area', 'Outline the study area first.');
	return a;
}

async function storeZoneSet(
	db: Knex,
	network: NetworkRow,
	actorId: number,
	set: { name: string; kind: ZoneSetKind; params: Record<string, unknown> },
	zones: NewZone[],
	shares: (number | null)[],
	recipeVersionId: number | null
): Promise<number> {
	if (zones.length === 0) throw new ServiceError(422, 'no_zones', 'No zones came out of this: nothing to store.');
	return db.transaction(async (trx) => {
		const id = await insertZoneSet(trx, network.id, actorId, { name: set.name, kind: set.kind, params: set.params, recipe_version_id: recipeVersionId });
		await insertZones(trx, id, zones.map((z, k) => ({ ...z, importance_share: shares[k] ?? null })));
		await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actorId, action: 'zone_set.create', objectType: 'zone_set', objectId: id, after: { network_id: network.id, ...set, zones: zones.length } });
		return id;
	});
}

export async function createUploadedZoneSet(db: Knex, network: NetworkRow, actorId: number, name: string, text: string, fileName = '', importance: ImportanceSurface | null = null): Promise<number> {
	let features;
	try {
		const format = /\.kml$/i.test(fileName) ? 'kml' : /\.(geo)?json$/i.test(fileName) ? 'geojson' : undefined;
		features = parsePolygonUpload(text, { format });
	} catch (e) {
		if (e instanceof PolygonError) throw new ServiceError(400, 'invalid_geometry', e.message, 'file');
		throw e;
	}
	const codes = features.map((f, k) => (f.id ?? f.name ?? `Z${k + 1}`).slice(0, 64));
	const dup = codes.find((c, k) => codes.findIndex((d) => d.toLowerCase() === c.toLowerCase()) !== k);
	if (dup) throw new ServiceError(400, 'duplicate_zone', `Two zones share the id "${dup}"; give each feature its own id or name.`, 'file');
	const zones = features.map((f, k) => ({ code: codes[k], name: f.name ?? codes[k], geometry: f.geometry }));
	const shares = importance ? zoneShares(importance.grid, zones.map((z) => z.geometry)) : zones.map(() => null);
	return storeZoneSet(db, network, actorId, { name: name || fileName || 'Uploaded zones', kind: 'uploaded', params: { file: fileName.slice(0, 200) } }, zones, shares, importance?.recipeVersionId ?? null);
}

export async function createGridZoneSet(db: Knex, network: NetworkRow, actorId: number, name: string, cellSizeKm: number, importance: ImportanceSurface | null = null): Promise<number> {
	const area = studyAreaOf(network);
	const epsg = await workingCrs(db, network);
	if (!epsg) throw new ServiceError(422, 'no_crs', 'The working CRS is not known; set it on the overview.');
	const cellSize = cellSizeKm * 1000;
	const zones = gridZones(area, epsg, cellSize);
	const shares = importance ? zoneShares(importance.grid, zones.map((z) => z.geometry)) : zones.map(() => null);
	return storeZoneSet(db, network, actorId, { name: name || `${cellSizeKm} km grid`, kind: 'grid', params: { cellSizeM: cellSize, epsg } }, zones, shares, importance?.recipeVersionId ?? null);
}

export async function createComputedZoneSet(db: Knex, network: NetworkRow, actorId: number, name: string, k: number, importance: ImportanceSurface | null): Promise<number> {
	if (!importance) throw new ServiceError(422, 'no_importance', 'Zones can be computed once an importance recipe is chosen.', 'k');
	let map: ZoneMap;
	try {
		map = computeZones(importance.grid, k);
	} catch (e) {
		if (e instanceof EngineInputError) throw new ServiceError(422, 'invalid_input', e.message, 'k');
		throw e;
	}
	const geometries = traceZoneMap(importance.grid, map);
	const shares = sharesOfMap(importance.grid, map);
	const zones = map.ids.map((id, z) => ({ code: id, name: `Zone ${z + 1}`, geometry: geometries[z] })).filter((z) => z.geometry.coordinates.length > 0);
	const keptShares = map.ids.map((_, z) => shares[z]).filter((_, z) => geometries[z].coordinates.length > 0);
	return storeZoneSet(db, network, actorId, { name: name || `${k} computed zones`, kind: 'computed', params: { k } }, zones, keptShares, importance.recipeVersionId);
}

export async function useZoneSet(db: Knex, network: NetworkRow, actorId: number, zoneSetId: number | null): Promise<void> {
	await db.transaction(async (trx) => {
		if (zoneSetId !== null && !(await findZoneSet(trx, network.id, zoneSetId))) throw new ServiceError(404, 'not_found', 'No such zone set.');
		const before = await networkZoneSetId(trx, network.id);
		await setNetworkZoneSet(trx, network.id, zoneSetId);
		await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actorId, action: 'network.zone_set', objectType: 'network', objectId: network.id, before: { zone_set_id: before }, after: { zone_set_id: zoneSetId } });
	});
}

export async function removeZoneSet(db: Knex, network: NetworkRow, actorId: number, zoneSetId: number): Promise<void> {
	await db.transaction(async (trx) => {
		const set = await findZoneSet(trx, network.id, zoneSetId);
		if (!set) throw new ServiceError(404, 'not_found', 'No such zone set.');
		await deleteZoneSet(trx, network.id, zoneSetId);
		await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actorId, action: 'zone_set.delete', objectType: 'zone_set', objectId: zoneSetId, before: { name: set.name, kind: set.kind } });
	});
}

/** A zone set as the API returns it: the typed client's ZoneSet, with its timestamp as a Date. */
export type ZoneSetView = Omit<ZoneSet, 'createdAt'> & { createdAt: Date };

/**
 * "The current zone set" of a network: the one it uses (networks.zone_set_id), chosen on the zones
 * page; null when it uses none. Nothing falls back to another set.
 */
export async function currentZoneSet(db: Knex, networkId: number): Promise<ZoneSetRow | null> {
	const id = await networkZoneSetId(db, networkId);
	return id === null ? null : ((await findZoneSet(db, networkId, id)) ?? null);
}

/** Whether a sensor counts as standing in the field: every status but `retired` (a faulty sensor still occupies its site). */
function standsInField(s: { status: SensorStatus }): boolean {
	return s.status !== 'retired';
}

/**
 * "Sensors in a zone": for each zone of one zone set, how many sensors standing in the field
 * (standsInField) lie inside it (lon/lat, holes excluded). A sensor is in one zone only: one on an
 * edge two zones share counts for the first of them, so the counts add up to the sensors in the
 * set's union. Each zone's bounding box is taken once and only sensors inside it are tested.
 */
export function sensorsInZones(zones: readonly unknown[], sensors: readonly { lon: number; lat: number; status: SensorStatus }[]): number[] {
	let left = sensors.filter(standsInField);
	return zones.map((geometry) => {
		const polygons = asMultiPolygon(geometry)?.coordinates ?? [];
		const box = boundsOf([], polygons);
		if (!box) return 0;
		const outside: typeof left = [];
		for (const s of left) {
			const inBox = s.lon >= box[0] && s.lon <= box[2] && s.lat >= box[1] && s.lat <= box[3];
			if (!inBox || !pointInPolygons([s.lon, s.lat], polygons)) outside.push(s);
		}
		const n = left.length - outside.length;
		left = outside;
		return n;
	});
}

function view(set: ZoneSetRow, zones: ZoneRow[], sensors: readonly { lon: number; lat: number; status: SensorStatus }[], inUse: boolean, withGeometry: boolean): ZoneSetView {
	const counts = sensorsInZones(zones.map((z) => z.geometry), sensors);
	return {
		id: set.id,
		name: set.name,
		kind: set.kind,
		params: set.params,
		inUse,
		recipeVersionId: set.recipe_version_id,
		createdAt: set.created_at,
		zones: zones.map((z, i) => ({
			id: z.id,
			code: z.code,
			name: z.name,
			importanceShare: z.importance_share,
			sensorCount: counts[i],
			...(withGeometry ? { geometry: z.geometry } : {})
		}))
	};
}

async function sensorPositions(db: Knex, networkId: number) {
	const { rows } = await listSensors(db, networkId);
	return rows.map((r) => ({ lon: r.lon, lat: r.lat, status: r.status }));
}

export async function zoneSetViews(db: Knex, network: NetworkRow, opts: { withGeometry?: boolean } = {}): Promise<ZoneSetView[]> {
	const sets = await listZoneSets(db, network.id);
	const zones = await listZones(db, sets.map((s) => s.id));
	const points = await sensorPositions(db, network.id);
	const current = await networkZoneSetId(db, network.id);
	return sets.map((s) => view(s, zones.filter((z) => z.zone_set_id === s.id), points, s.id === current, !!opts.withGeometry));
}

export async function zoneSetView(db: Knex, network: NetworkRow, zoneSetId: number): Promise<ZoneSetView> {
	const set = await findZoneSet(db, network.id, zoneSetId);
	if (!set) throw new ServiceError(404, 'not_found', 'No such zone set.');
	const zones = await listZones(db, [set.id]);
	return view(set, zones, await sensorPositions(db, network.id), (await networkZoneSetId(db, network.id)) === set.id, true);
}
