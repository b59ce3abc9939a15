/**
 * `cairnfield place`: files in, a GeoJSON FeatureCollection out. Reads the inputs, builds the
 * working grid, runs the engine, plans the moves, and returns the document (writing is the
 * caller's job, so nothing is written when anything fails).
 */
import { readFile, stat } from 'node:fs/promises';
import { place, zoneGrid, type PlacementResult, type SensorInput, type WorkingGrid, type ZoneMap } from '../lib/engine';
import { rasterizeZones } from '../lib/engine/rasterize';
import { decoderPoolFor, openGeoTiff, type DecoderPool } from '../lib/geo/geotiff';
import { aggregateToWorkingGrid } from '../lib/geo/aggregate';
import { GeoJsonError, projectRings, readPolygons, readSensors, readZones } from '../lib/geo/geojson';
import { transformer } from '../lib/geo/crs';
import { planMoves } from '../lib/geo/move-plan';
import { CliError, type PlaceArgs } from './args';

async function readBytes(file: string): Promise<ArrayBuffer> {
	try {
		const buf = await readFile(file);
		// Large files get their own ArrayBuffer: use it as is; small ones share Node's pool, so copy.
		if (buf.byteOffset === 0 && buf.byteLength === buf.buffer.byteLength) return buf.buffer as ArrayBuffer;
		return buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.byteLength) as ArrayBuffer;
	} catch (e) {
		const code = (e as NodeJS.ErrnoException).code;
		if (code === 'ENOENT') throw new CliError(`${file}: no such file`);
		if (code === 'EISDIR') throw new CliError(`${file}: is a directory, not a file`);
		throw new CliError(`${file}: cannot be read (${code ?? String(e)})`);
	}
}

/** The file must exist and be a file: the same messages as for the other inputs. */
async function checkFile(file: string): Promise<void> {
	try {
		if ((await stat(file)).isDirectory()) throw new CliError(`${file}: is a directory, not a file`);
	} catch (e) {
		if (e instanceof CliError) throw e;
		const code = (e as NodeJS.ErrnoException).code;
		if (code === 'ENOENT') throw new CliError(`${file}: no such file`);
		throw new CliError(`${file}: cannot be read (${code ?? String(e)})`);
	}
}

async function readJson(file: string): Promise<unknown> {
	const text = new TextDecoder().decode(await readBytes(file));
	try {
		return JSON.parse(text);
	} catch (e) {
		throw new GeoJsonError(`${file}: not valid JSON (${e instanceof Error ? e.message : String(e)})`);
	}
}

export interface PlaceOutput {
	type: 'FeatureCollection';
	features: unknown[];
	placement: Record<string, unknown>;
}

/** Below this share of the importance inside the zones, the command warns that the rest is left out. */
export const ZONE_SHARE_WARNING = 0.95;

/**
 * The zones' union bounds the placement: cells in no zone lose their importance and may hold no
 * sensor, as outside a study area. Returns the clipped grid and the share of the importance that
 * the zones held before (1 when the grid holds none).
 */
export function clipToZones(grid: WorkingGrid, zones: ZoneMap): { grid: WorkingGrid; shareInZones: number } {
	const mass = new Float64Array(grid.mass.length);
	const feasible = new Uint8Array(grid.feasible.length);
	let total = 0;
	let inside = 0;
	for (let k = 0; k < mass.length; k++) {
		total += grid.mass[k];
		if (zones.cellZone[k] < 0) continue;
		inside += grid.mass[k];
		mass[k] = grid.mass[k];
		feasible[k] = grid.feasible[k];
	}
	if (inside > 0) for (let k = 0; k < mass.length; k++) mass[k] /= inside;
	return { grid: { ...grid, mass, feasible }, shareInZones: total > 0 ? inside / total : 1 };
}

const percent = (share: number) => `${Math.round(share * 1000) / 10} %`;

export async function runPlace(args: PlaceArgs): Promise<PlaceOutput> {
	const studyDoc = args.studyArea ? readPolygons(await readJson(args.studyArea), args.studyArea) : null;
	const exclusionDoc = args.exclusions ? readPolygons(await readJson(args.exclusions), args.exclusions) : null;
	const zoneDoc = args.zones ? readZones(await readJson(args.zones), args.zones) : null;
	const sensorDoc = args.sensors ? readSensors(await readJson(args.sensors), args.sensors) : null;
	if (sensorDoc && sensorDoc.length === 0) throw new GeoJsonError(`${args.sensors}: no sensors`);
	const radii = [args.radius, ...(sensorDoc ?? []).map((s) => s.radius)].filter((r): r is number => typeof r === 'number' && r > 0);

	// The raster is streamed into the working grid; compressed tiles are decoded in worker threads.
	await checkFile(args.importance);
	const source = await openGeoTiff({ path: args.importance }, { band: args.band, name: args.importance, maxPixels: Number.MAX_SAFE_INTEGER });
	let pool: DecoderPool | null = null;
	let ingest;
	try {
		pool = await decoderPoolFor(source);
		ingest = await aggregateToWorkingGrid(source, {
			crs: args.crs,
			cellSize: args.cellSize,
			smallestRadius: radii.length > 0 ? Math.min(...radii) : null,
			studyArea: studyDoc ?? undefined,
			exclusions: exclusionDoc ?? undefined,
			pool
		});
	} finally {
		await pool?.destroy();
		await source.close();
	}
	const warnings: string[] = [];
	let { grid } = ingest;
	const { epsg } = ingest;
	const toWork = transformer(4326, epsg).forward;
	const toLonLat = transformer(epsg, 4326).forward;

	let zones: ZoneMap | null = null;
	if (zoneDoc) {
		zones = rasterizeZones(grid, zoneDoc.map((z) => ({ id: z.id, rings: projectRings(z.rings, toWork, grid.cellSize * 4) })));
		const clipped = clipToZones(grid, zones);
		if (!clipped.grid.feasible.some((v) => v === 1)) throw new CliError(`${args.zones}: no valid cell of the raster lies inside the zones`);
		if (clipped.shareInZones < ZONE_SHARE_WARNING) {
			warnings.push(
				`the zones hold ${percent(clipped.shareInZones)} of the importance; the ${percent(1 - clipped.shareInZones)} outside every zone is left out` +
					(args.studyArea ? '' : ' (give --study-area to bound the raster to the area the zones divide)')
			);
		}
		grid = clipped.grid;
	} else if (args.zoneGrid) {
		const { cols, rows } = args.zoneGrid;
		if (cols > grid.width || rows > grid.height) {
			throw new CliError(`--zone-grid ${cols}x${rows} has more zones per side than the ${grid.width}x${grid.height} working grid has cells`);
		}
		zones = zoneGrid(grid, cols, rows);
	}

	// Lloyd's step ignores the radius, so lloyd runs without one; the engine still wants a number for
	// its coverage figure, which is then meaningless and left out of the output.
	const standIn = grid.cellSize;
	const withoutRadius = new Set<string>();
	let sensors: SensorInput[] = [];
	if (sensorDoc) {
		sensors = sensorDoc.map((s) => {
			let radius = s.radius ?? args.radius;
			if (radius === null || radius === undefined) {
				if (args.strategy !== 'lloyd') throw new CliError(`${args.sensors}: sensor "${s.id}" has no radius_m and no --radius was given`);
				withoutRadius.add(s.id);
				radius = standIn;
			}
			const [x, y] = toWork(s.lon, s.lat);
			return { id: s.id, x, y, radius, mobility: s.mobility, ...(args.maxTravel !== null ? { maxTravel: args.maxTravel } : {}) };
		});
	}

	const result: PlacementResult = place(grid, zones, sensors, {
		strategy: args.strategy,
		maxIterations: args.maxIterations,
		tolerance: args.tolerance ?? undefined,
		seed: args.seed,
		count: args.count ?? undefined,
		radius: args.count !== null ? (args.radius ?? standIn) : (args.radius ?? undefined),
		minSpacing: args.minSpacing ?? undefined
	});
	if (args.count !== null && args.radius === null) for (const s of result.sensors) withoutRadius.add(s.id);
	const coverage = (c: number) => (withoutRadius.size === 0 ? c : null);

	const features = result.sensors.map((s) => ({
		type: 'Feature',
		geometry: { type: 'Point', coordinates: toLonLat(s.x, s.y) },
		properties: { id: s.id, x: s.x, y: s.y, zone: s.zone, moved_m: s.movedM, radius_m: withoutRadius.has(s.id) ? null : s.radius, mobility: s.mobility }
	}));

	const placement: Record<string, unknown> = {
		crs: result.crs,
		strategy: result.strategy,
		iterations: result.iterations,
		converged: result.converged,
		cost: result.cost,
		coverage: coverage(result.coverage),
		p95_distance_m: result.p95DistanceM,
		cell_size_m: grid.cellSize,
		cell_size: { rule: ingest.cellSize.rule, reason: ingest.cellSize.reason, requested_m: ingest.cellSize.requested, pixel_m: ingest.cellSize.pixelSize, smallest_radius_m: ingest.cellSize.smallestRadius, budget_cells: ingest.cellSize.budget },
		grid: { width: grid.width, height: grid.height, x0: grid.x0, y0: grid.y0, read: ingest.image.index === 0 ? 'full resolution' : `overview ${ingest.image.width}×${ingest.image.height}` },
		zones: result.zones.map((z) => ({ id: z.id, mass: z.mass, sensors: z.sensors, sigma: z.sigma })),
		history: result.history.map((h) => ({ iteration: h.iteration, cost: h.cost, coverage: coverage(h.coverage) })),
		warnings
	};
	if (sensors.length > 0) placement.moves = movesOutput(sensors, result, toLonLat);
	return { type: 'FeatureCollection', features, placement };
}

/** The CLI's snake_case form of the move plan. */
function movesOutput(sensors: SensorInput[], result: PlacementResult, toLonLat: (x: number, y: number) => [number, number]) {
	const plan = planMoves(sensors, result, toLonLat);
	return {
		assignment: plan.assignment.map((m) => ({ id: m.id, target: m.target, from: m.from, to: m.to, planar_m: m.planarM, geodesic_m: m.geodesicM })),
		total_planar_m: plan.totalPlanarM,
		total_geodesic_m: plan.totalGeodesicM,
		fixed: plan.fixed,
		route: { order: plan.route.order, planar_m: plan.route.planarM, geodesic_m: plan.route.geodesicM }
	};
}
