/**
 * A placement run as a use case, in three steps that the job handler calls in order:
 *
 *   preparePlacement  reads the network's inputs (recipe version, zone set, sensors, study area,
 *                     exclusions), builds the working grid (runWorkingGrid: the cell-size rule of
 *                     geo/cell-size, recorded as inputs.cellSize) and the engine's input, and a snapshot
 *                     of every input (layer ids with SHA-256 content hashes, positions, radii);
 *   executePlacement  runs the engine off the event loop (worker thread), twice: the network as it
 *                     stands (0 iterations, the "before" figures) and the strategy asked for;
 *   revisionSnapshot  turns the result into what a revision stores: targets (GeoJSON), the
 *                     minimum-travel assignment, the route order, metrics and iteration history.
 *
 * Nothing here writes to the database; createRevisionFromResult (./proposals) stores the snapshot.
 */
import { createHash } from 'node:crypto';
import type { Knex } from 'knex';
import { z } from 'zod';
import { addedSites, place, STRATEGIES, type HistoryEntry, type PlacementOptions, type PlacementResult, type SensorInput, type Strategy, type WorkingGrid, type ZoneMap, type ZoneSummary } from '../../engine';
import { EngineInputError } from '../../engine/errors';
import { rasterizeZones } from '../../engine/rasterize';
import { CrsError, crsLabel, transformer } from '../../geo/crs';
import { projectRings } from '../../geo/geojson';
import { planMoves, type MovePlan } from '../../geo/move-plan';
import { WorkingGridError, type WorkingGridOptions } from '../../geo/working-grid';
import { aggregateToWorkingGrid, bandSource } from '../../geo/aggregate';
import { CellSizeError, type CellSizeChoice } from '../../geo/cell-size';
import type { RasterBand } from '../../geo/geotiff';
import { ImportanceError } from '../../importance/grid';
import { findLayer } from '../repositories/layers';
import { findVersion, networkRecipeVersionId } from '../repositories/recipes';
import { listSensors } from '../repositories/sensors';
import { listSensorTypes } from '../repositories/sensor-types';
import { findZoneSet, listZones, networkZoneSetId } from '../repositories/zones';
import { findNetwork } from '../repositories/networks';
import type { ObjectStore } from '../storage';
import { exclusionList } from './areas';
import { asMultiPolygon } from '../../geo/polygons';
import { recipeLayerIds, recipeVersionImportance, surfaceRasterBand } from './importance';
import { workingCrs } from './working-crs';
import { ServiceError } from './errors';
import type { Recipe } from '../../importance';

/** The engine's version, recorded in every revision. Bump it when the engine's results change. */
export const ENGINE_VERSION = 'cairnfield-engine 1.0.0';

/** Largest working grid a run may use. */
export const MAX_RUN_CELLS = 4_000_000;

export const STRATEGY_HELP: Record<Strategy, { label: string; sentence: string }> = {
	lloyd: {
		label: 'Lloyd',
		sentence: 'Each movable sensor steps to the importance centroid of the area nearest to it; choose it for the lowest overall cost when sensing radii matter little.'
	},
	'range-limited': {
		label: 'Range-limited',
		sentence: 'Each sensor steps to the centroid of what lies within its own sensing radius; choose it when coverage within reach of each sensor is what counts.'
	},
	'zone-balanced': {
		label: 'Zone-balanced',
		sentence: 'Like range-limited, but sensors are pulled from over-served zones towards under-served ones; choose it when every sub-catchment must be represented in proportion.'
	}
};

const positive = (what: string) => z.number({ error: `${what} is a number.` }).positive(`${what} must be more than 0.`);

/** The parameters of a run (API field names). */
export const runInput = z
	.object({
		strategy: z.enum(STRATEGIES as unknown as [Strategy, ...Strategy[]], { error: 'Choose a strategy: lloyd, range-limited or zone-balanced.' }),
		recipeVersionId: z.number().int().positive().optional(),
		zoneSetId: z.number().int().positive().nullable().optional(),
		/** Sensors taking part (ids); default: every active sensor (fixed ones anchor). */
		sensorIds: z.array(z.number().int().positive()).max(10_000).optional(),
		addCount: z.number({ error: 'The number of new sensors is a whole number.' }).int('The number of new sensors is a whole number.').min(0, 'Add 0 or more sensors.').max(500, 'Add at most 500 sensors at once.').default(0),
		addTypeId: z.number().int().positive().optional(),
		maxIterations: z.number().int('Iterations are a whole number.').min(0, 'Use 0 or more iterations.').max(5000, 'Use at most 5000 iterations.').default(200),
		tolerance: z.number().min(0, 'The tolerance cannot be negative.').max(100_000).optional(),
		minSpacing: z.number().min(0, 'The minimum spacing cannot be negative.').max(1_000_000).optional(),
		maxTravel: positive('The maximum travel').max(1_000_000).optional(),
		cellSize: positive('The cell size').max(100_000).optional(),
		seed: z.number().int().min(1).max(2 ** 31 - 1).default(1)
	})
	.strict();

export type RunInput = z.output<typeof runInput>;

export interface SensorSnapshot {
	id: number | null;
	code: string;
	typeId: number;
	typeName: string;
	radiusM: number;
	mobility: SensorInput['mobility'];
	status: string;
	/** 'moves', 'anchor' (fixed) or 'new' (added by this run, starting site by k-means++). */
	role: 'moves' | 'anchor' | 'new';
	lon: number;
	lat: number;
	x: number;
	y: number;
}

/** How the working grid's cell size was chosen (src/lib/geo/cell-size.ts), as a revision records it. */
export interface CellSizeRecord {
	rule: CellSizeChoice['rule'];
	reason: string;
	/** The cell size asked for (the run's `cellSize`), or null for the rule's own choice. */
	requestedM: number | null;
	chosenM: number;
	pixelM: number;
	smallestRadiusM: number | null;
	budgetCells: number;
}

export interface RevisionInputs {
	crs: string;
	grid: { cellSizeM: number; width: number; height: number; x0: number; y0: number };
	/** Absent in revisions made before runs used the cell-size rule. */
	cellSize?: CellSizeRecord;
	recipeVersion: { id: number; recipeId: number; version: number };
	layers: { id: number; name: string; sha256: string | null }[];
	zoneSet: { id: number; name: string; zones: { code: string; name: string }[] } | null;
	sensors: SensorSnapshot[];
	added: { count: number; typeId: number | null; typeName: string | null };
	studyArea: unknown;
	exclusions: unknown;
}

export interface PreparedPlacement {
	networkId: number;
	epsg: number;
	grid: WorkingGrid;
	zones: ZoneMap | null;
	/** Engine input: current sensors taking part, then the added ones. */
	sensors: SensorInput[];
	/** How many of `sensors` are current ones (the rest are added). */
	currentCount: number;
	inputs: RevisionInputs;
	parameters: RunInput;
}

function inputFailure(e: unknown): never {
	if (e instanceof CellSizeError) throw new ServiceError(422, 'invalid_input', `The cell size cannot be used: ${e.message}`, 'cellSize');
	if (e instanceof ImportanceError || e instanceof WorkingGridError || e instanceof CrsError) throw new ServiceError(422, 'inputs_unusable', `The inputs cannot be used: ${e.message}`);
	if (e instanceof EngineInputError) throw new ServiceError(422, 'inputs_unusable', e.message, e.field);
	throw e;
}

/**
 * The run's working grid: the importance surface aggregated (mass-preserving) into cells of the
 * size chooseCellSize's rule gives for the smallest sensing radius taking part, the study area's
 * extent and the cell budget, never finer than the surface's pixels; `cellSize` overrides the rule
 * (still never finer than the pixels). The same rule and aggregation as the command line's `place`.
 */
export async function runWorkingGrid(
	band: RasterBand,
	opts: Pick<WorkingGridOptions, 'crs' | 'studyArea' | 'exclusions'> & { smallestRadius: number | null; cellSize?: number | null }
): Promise<{ grid: WorkingGrid; epsg: number; cellSize: CellSizeRecord }> {
	const out = await aggregateToWorkingGrid(bandSource(band), { ...opts, maxCells: MAX_RUN_CELLS });
	const c = out.cellSize;
	return {
		grid: out.grid,
		epsg: out.epsg,
		cellSize: { rule: c.rule, reason: c.reason, requestedM: c.requested, chosenM: c.cellSize, pixelM: c.pixelSize, smallestRadiusM: c.smallestRadius, budgetCells: c.budget }
	};
}

/** Reads and checks everything a run needs; throws ServiceError (422) for anything the analyst can fix. */
export async function preparePlacement(db: Knex, store: ObjectStore, networkId: number, raw: unknown): Promise<PreparedPlacement> {
	const parsed = runInput.safeParse(raw);
	if (!parsed.success) throw ServiceError.fromZod(parsed.error);
	const p = parsed.data;
	const network = await findNetwork(db, networkId);
	if (!network) throw new ServiceError(404, 'not_found', 'No such network.');

	const versionId = p.recipeVersionId ?? (await networkRecipeVersionId(db, networkId));
	if (versionId === null) throw new ServiceError(422, 'no_importance', 'Choose an importance recipe version for the network first (Importance tab).', 'recipeVersionId');
	const version = await findVersion(db, networkId, versionId);
	if (!version) throw new ServiceError(422, 'no_importance', 'No such recipe version in this network.', 'recipeVersionId');

	// Sensors taking part and the type of the new ones: their smallest radius sizes the working grid.
	const types = new Map((await listSensorTypes(db, networkId)).map((t) => [t.id, t]));
	const { rows } = await listSensors(db, networkId);
	const chosen = p.sensorIds ? new Set(p.sensorIds) : null;
	if (chosen) {
		const known = new Set(rows.map((r) => r.id));
		const missing = [...chosen].filter((id) => !known.has(id));
		if (missing.length) throw new ServiceError(422, 'invalid_input', `Sensor ${missing[0]} is not in this network.`, 'sensorIds');
	}
	const taking = rows.filter((r) => (chosen ? chosen.has(r.id) : r.status === 'active'));
	let addType = null;
	if (p.addCount > 0) {
		addType = p.addTypeId !== undefined ? types.get(p.addTypeId) : [...types.values()].find((t) => t.mobility !== 'fixed');
		if (!addType) throw new ServiceError(422, 'invalid_input', p.addTypeId !== undefined ? 'No such sensor type in this network.' : 'Choose the type of the new sensors.', 'addTypeId');
	}
	const radii = [...taking.map((r) => Number(types.get(r.sensor_type_id)!.radius_m)), ...(addType ? [Number(addType.radius_m)] : [])].filter((r) => r > 0);

	let grid: WorkingGrid;
	let epsg: number;
	let cellSize: CellSizeRecord;
	const area = asMultiPolygon(network.study_area);
	const workingEpsg = await workingCrs(db, network);
	const exclusions = exclusionList(network.exclusions);
	try {
		const imp = await recipeVersionImportance(db, store, networkId, versionId);
		if (!imp) throw new ServiceError(422, 'no_importance', 'The recipe version has no importance surface.', 'recipeVersionId');
		({ grid, epsg, cellSize } = await runWorkingGrid(surfaceRasterBand(imp), {
			crs: workingEpsg,
			cellSize: p.cellSize,
			smallestRadius: radii.length > 0 ? Math.min(...radii) : null,
			studyArea: area?.coordinates?.length ? area.coordinates : undefined,
			exclusions: exclusions.map((f) => f.geometry.coordinates).flat()
		}));
	} catch (e) {
		if (e instanceof WorkingGridError && /over the limit/.test(e.message)) throw new ServiceError(422, 'grid_too_large', e.message, 'cellSize');
		inputFailure(e);
	}
	const toWork = transformer(4326, epsg).forward;

	// Zones.
	const zoneSetId = p.zoneSetId === null ? null : (p.zoneSetId ?? (await networkZoneSetId(db, networkId)));
	let zones: ZoneMap | null = null;
	let zoneSet: RevisionInputs['zoneSet'] = null;
	if (zoneSetId !== null) {
		const set = await findZoneSet(db, networkId, zoneSetId);
		if (!set) throw new ServiceError(422, 'invalid_input', 'No such zone set in this network.', 'zoneSetId');
		const rows = await listZones(db, [set.id]);
		zones = rasterizeZones(grid, rows.map((z) => ({ id: z.code, rings: z.geometry.coordinates.flatMap((poly) => projectRings(poly, toWork, grid.cellSize / 4)) })));
		zoneSet = { id: set.id, name: set.name, zones: rows.map((z) => ({ code: z.code, name: z.name })) };
	}
	if (p.strategy === 'zone-balanced' && !zones) throw new ServiceError(422, 'no_zones', 'Zone-balanced placement needs a zone set: choose one, or make one on the Area & zones tab.', 'zoneSetId');

	// Sensor snapshots in the working CRS, then the new sensors' starting sites.
	const snapshots: SensorSnapshot[] = taking.map((r) => {
		const t = types.get(r.sensor_type_id)!;
		const [x, y] = toWork(r.lon, r.lat);
		return { id: r.id, code: r.code, typeId: t.id, typeName: t.name, radiusM: Number(t.radius_m), mobility: t.mobility, status: r.status, role: t.mobility === 'fixed' ? 'anchor' : 'moves', lon: r.lon, lat: r.lat, x, y };
	});
	if (addType) {
		const toLonLat = transformer(epsg, 4326).forward;
		const sites = addedSites(grid, snapshots, p.addCount, p.seed);
		sites.forEach((s, k) => {
			const [lon, lat] = toLonLat(s.x, s.y);
			snapshots.push({ id: null, code: `new-${k + 1}`, typeId: addType!.id, typeName: addType!.name, radiusM: Number(addType!.radius_m), mobility: addType!.mobility, status: 'new', role: 'new', lon, lat, x: s.x, y: s.y });
		});
	}
	if (snapshots.length === 0) throw new ServiceError(422, 'no_sensors', 'No sensors take part: choose some, or add new ones.', 'sensorIds');
	if (!snapshots.some((s) => s.mobility !== 'fixed')) throw new ServiceError(422, 'no_sensors', 'Every sensor taking part is fixed: nothing can move.', 'sensorIds');

	const sensors: SensorInput[] = snapshots.map((s) => ({ id: s.code, x: s.x, y: s.y, radius: s.radiusM, mobility: s.mobility, maxTravel: s.role === 'moves' ? p.maxTravel : undefined }));

	// Layers and their content hashes.
	const layers: RevisionInputs['layers'] = [];
	for (const id of recipeLayerIds(version.definition as Recipe)) {
		const layer = await findLayer(db, networkId, id);
		let sha256: string | null = null;
		if (layer?.storage_key && (await store.exists(layer.storage_key))) sha256 = createHash('sha256').update(await store.getBuffer(layer.storage_key)).digest('hex');
		layers.push({ id, name: layer?.name ?? '(deleted)', sha256 });
	}

	return {
		networkId,
		epsg,
		grid,
		zones,
		sensors,
		currentCount: taking.length,
		parameters: p,
		inputs: {
			crs: crsLabel(epsg),
			grid: { cellSizeM: grid.cellSize, width: grid.width, height: grid.height, x0: grid.x0, y0: grid.y0 },
			cellSize,
			recipeVersion: { id: version.id, recipeId: version.recipe_id, version: version.version },
			layers,
			zoneSet,
			sensors: snapshots,
			added: { count: p.addCount, typeId: addType?.id ?? null, typeName: addType?.name ?? null },
			studyArea: network.study_area ?? null,
			exclusions: network.exclusions ?? null
		}
	};
}

export interface PlacementOutcome {
	result: PlacementResult;
	/** The sensors taking part where they stand now (0 iterations), for the "before" figures; null when none stand yet. */
	baseline: PlacementResult | null;
}

/** Runs the engine off the event loop (a worker thread) on the prepared grid and zones. */
export type PlaceRunner = (prep: PreparedPlacement, sensors: SensorInput[], options: Omit<PlacementOptions, 'onIteration'>, onIteration?: (e: HistoryEntry) => void) => Promise<PlacementResult>;

/**
 * The engine on the calling thread, for the seed and tests only: requests never place by
 * themselves, they queue a job (./runs), whose handler runs the engine in the worker's thread pool.
 */
export const directRunner: PlaceRunner = async (prep, sensors, options, onIteration) => place(prep.grid, prep.zones, sensors, { ...options, onIteration });

/** Runs the engine twice: the sensors where they stand (0 iterations, cheap), then the strategy. */
export async function executePlacement(prep: PreparedPlacement, place: PlaceRunner, onIteration?: (e: HistoryEntry) => void): Promise<PlacementOutcome> {
	const p = prep.parameters;
	const options = { strategy: p.strategy, maxIterations: p.maxIterations, tolerance: p.tolerance, minSpacing: p.minSpacing, seed: p.seed };
	try {
		const current = prep.sensors.slice(0, prep.currentCount);
		const baseline = current.length > 0 ? await place(prep, current, { ...options, maxIterations: 0 }) : null;
		const result = await place(prep, prep.sensors, options, onIteration);
		return { result, baseline };
	} catch (e) {
		inputFailure(e);
	}
}

export interface RevisionMetrics {
	cost: number;
	coverage: number;
	p95DistanceM: number;
	sensorCount: number;
	iterations: number;
	converged: boolean;
	zones: ZoneSummary[];
	/** Largest |σ| over the zones (0 without zones). */
	maxAbsSigma: number;
	moves: number;
	installations: number;
	removals: number;
	totalPlanarM: number;
	totalGeodesicM: number;
	routePlanarM: number;
	routeGeodesicM: number;
	/** The same figures for the sensors where they stand (before the run); null with no current sensors. */
	before: { cost: number; coverage: number; p95DistanceM: number; sensorCount: number; zones: ZoneSummary[]; maxAbsSigma: number } | null;
}

export interface RevisionOutputs {
	targets: { type: 'FeatureCollection'; features: { type: 'Feature'; geometry: { type: 'Point'; coordinates: [number, number] }; properties: Record<string, unknown> }[] };
	moves: MovePlan;
	history: HistoryEntry[];
}

export interface RevisionSnapshot {
	strategy: Strategy;
	engineVersion: string;
	inputs: RevisionInputs;
	parameters: RunInput;
	outputs: RevisionOutputs;
	metrics: RevisionMetrics;
	contentHash: string;
}

const maxAbsSigma = (zones: ZoneSummary[]) => zones.reduce((m, z) => Math.max(m, Math.abs(z.sigma)), 0);

/** JSON with object keys sorted, so equal snapshots hash equally. */
export function canonicalJson(v: unknown): string {
	return JSON.stringify(v, (_k, value) => (value && typeof value === 'object' && !Array.isArray(value) ? Object.fromEntries(Object.entries(value).sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0))) : value));
}

/** SHA-256 of the canonical JSON of a revision's snapshot parts. */
export function snapshotHash(s: Omit<RevisionSnapshot, 'contentHash'>): string {
	return createHash('sha256').update(canonicalJson({ strategy: s.strategy, engineVersion: s.engineVersion, inputs: s.inputs, parameters: s.parameters, outputs: s.outputs, metrics: s.metrics })).digest('hex');
}

/** What a revision stores, from a finished run. Pure. */
export function revisionSnapshot(prep: PreparedPlacement, outcome: PlacementOutcome): RevisionSnapshot {
	const { result, baseline } = outcome;
	const toLonLat = transformer(prep.epsg, 4326).forward;
	const current = prep.sensors.slice(0, prep.currentCount);
	const moves = planMoves(current, result, toLonLat);
	const byCode = new Map(prep.inputs.sensors.map((s) => [s.code, s]));
	const assignedTo = new Map(moves.assignment.map((m) => [m.target, m.id]));
	const features = result.sensors.map((s) => {
		const snap = byCode.get(s.id);
		return {
			type: 'Feature' as const,
			geometry: { type: 'Point' as const, coordinates: toLonLat(s.x, s.y) },
			properties: {
				site: s.id,
				// Which current sensor takes this site (minimum total travel); null for a new installation.
				sensor: s.mobility === 'fixed' ? s.id : (assignedTo.get(s.id) ?? null),
				typeId: snap?.typeId ?? null,
				type: snap?.typeName ?? null,
				mobility: s.mobility,
				radiusM: s.radius,
				zone: s.zone,
				x: s.x,
				y: s.y
			}
		};
	});
	const metrics: RevisionMetrics = {
		cost: result.cost,
		coverage: result.coverage,
		p95DistanceM: result.p95DistanceM,
		sensorCount: result.sensors.length,
		iterations: result.iterations,
		converged: result.converged,
		zones: result.zones,
		maxAbsSigma: maxAbsSigma(result.zones),
		moves: moves.assignment.filter((m) => m.planarM > 1e-6).length,
		installations: moves.installations.length,
		removals: moves.removals.length,
		totalPlanarM: moves.totalPlanarM,
		totalGeodesicM: moves.totalGeodesicM,
		routePlanarM: moves.route.planarM,
		routeGeodesicM: moves.route.geodesicM,
		before: baseline
			? { cost: baseline.cost, coverage: baseline.coverage, p95DistanceM: baseline.p95DistanceM, sensorCount: baseline.sensors.length, zones: baseline.zones, maxAbsSigma: maxAbsSigma(baseline.zones) }
			: null
	};
	const body = { strategy: prep.parameters.strategy, engineVersion: ENGINE_VERSION, inputs: prep.inputs, parameters: prep.parameters, outputs: { targets: { type: 'FeatureCollection' as const, features }, moves, history: result.history }, metrics };
	// Through JSON once, so the hash covers exactly what is stored (no undefined, no typed arrays).
	const plain = JSON.parse(JSON.stringify(body)) as Omit<RevisionSnapshot, 'contentHash'>;
	return { ...plain, contentHash: snapshotHash(plain) };
}
