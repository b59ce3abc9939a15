/**
 * The CPU tasks that pool threads run (see ../threads.ts). Each takes plain data (typed arrays are
 * copied or transferred) and returns plain data; errors that carry a meaning for the user come back
 * as values, since only an error's message survives the trip between threads.
 */
import type { MessagePort } from 'node:worker_threads';
import { place } from '../../../engine';
import { EngineInputError } from '../../../engine/errors';
import type { PlacementOptions, SensorInput, WorkingGrid, ZoneMap } from '../../../engine/types';
import { LayerRejected } from '../../layers/errors';
import { portRangeReader } from '../../layers/range-port';
import { analyseStoredLayer } from '../../services/layers';
import { ServiceError } from '../../services/errors';
import { decodeSurface, encodedSurface, surfaceFromLayers, surfaceImportance, surfacePreview, type SurfaceLayer } from '../../services/importance';
import { computeZoneSet, zoneImportanceOfSurface, zoneShares, type ZoneGridOptions } from '../../services/zones';
import { portObjectStore } from '../../storage/store-port';
import { ImportanceImageError, renderImportance } from '../../map/importance-image';
import type { Recipe } from '../../../importance';
import type { MultiPolygonGeometry } from '../../../geo/polygons';
import { parseEpsg, transformer } from '../../../geo/crs';
import { projectRings } from '../../../geo/geojson';
import { rasterizeZones } from '../../../engine/rasterize';

/**
 * Layer processing of a stored file whose byte ranges this thread asks `port` for (the job's side
 * answers them from the object store: layers/range-port.ts). Memory: a few tiles and the preview.
 */
export async function analyseLayer(input: { port: MessagePort; band: number; name: string; maxPixels: number }) {
	try {
		const { metadata, png } = await analyseStoredLayer(portRangeReader(input.port), input);
		return { ok: true as const, metadata, png };
	} catch (e) {
		if (e instanceof LayerRejected) return { ok: false as const, code: e.code, message: e.message };
		throw e;
	} finally {
		input.port.close();
	}
}

export interface PlaceTaskInput {
	grid: WorkingGrid;
	zones: ZoneMap | null;
	sensors: SensorInput[];
	options: Omit<PlacementOptions, 'onIteration'>;
	/** Receives {iteration, cost, coverage} every `progressEvery` iterations. */
	port?: MessagePort;
	progressEvery?: number;
}

export function placeSensors(input: PlaceTaskInput) {
	const every = Math.max(1, input.progressEvery ?? 1);
	try {
		const result = place(input.grid, input.zones, input.sensors, {
			...input.options,
			onIteration: (entry) => {
				if (entry.iteration % every === 0) input.port?.postMessage(entry);
			}
		});
		return { ok: true as const, result };
	} catch (e) {
		if (e instanceof EngineInputError) return { ok: false as const, field: e.field, message: e.message };
		throw e;
	} finally {
		input.port?.close();
	}
}

// ---------------------------------------------------------------- importance, zones, map images
// Each reads the object store through `port` (storage/store-port.ts) and returns plain data; a
// refusal a person can act on (ServiceError) comes back as a value.

/** A ServiceError as a value: `{ok: false, status, code, message, field}`; other errors are thrown. */
export type ThreadRefusal = { ok: false; status: number; code: string; message: string; field?: string };

async function refusing<T>(port: MessagePort, work: () => Promise<T>): Promise<{ ok: true; value: T } | ThreadRefusal> {
	try {
		return { ok: true, value: await work() };
	} catch (e) {
		if (e instanceof ServiceError) return { ok: false, status: e.status, code: e.code, message: e.message, field: e.field };
		if (e instanceof ImportanceImageError) return { ok: false, status: 422, code: 'map_unavailable', message: e.message };
		throw e;
	} finally {
		port.close();
	}
}

/** A recipe's importance surface from its layers: its stored form, or the preview image and figures. */
export function importanceSurface(input: { port: MessagePort; recipe: Recipe; layers: [string, SurfaceLayer][]; what: 'surface' | 'preview' }) {
	return refusing(input.port, async () => {
		const s = await surfaceFromLayers(portObjectStore(input.port), input.recipe, new Map(input.layers));
		return input.what === 'preview' ? surfacePreview(s) : encodedSurface(s);
	});
}

async function storedImportance(port: MessagePort, surfaceKey: string, versionId: number) {
	return surfaceImportance(decodeSurface(await portObjectStore(port).getBuffer(surfaceKey)), versionId);
}

/** Zones from a stored surface: k computed zones with their shares, or the shares of given zones. */
export function zoneWork(input: { port: MessagePort; surfaceKey: string; versionId: number; options: ZoneGridOptions; work: { operation: 'compute'; k: number } | { operation: 'measure'; geometries: MultiPolygonGeometry[] } }) {
	return refusing(input.port, async () => {
		const grid = await zoneImportanceOfSurface(await storedImportance(input.port, input.surfaceKey, input.versionId), input.options);
		if (input.work.operation === 'compute') return computeZoneSet(grid, input.work.k);
		return { zones: null, shares: zoneShares(grid, input.work.geometries) };
	});
}

/** The importance map's view and PNG of a stored surface in `epsg` (null: the surface holds no value there). */
export function mapImportance(input: { port: MessagePort; surfaceKey: string; epsg: number }) {
	return refusing(input.port, async () => {
		const surface = decodeSurface(await portObjectStore(input.port).getBuffer(input.surfaceKey));
		return renderImportance(surface, input.epsg);
	});
}

/**
 * A placement on a stored surface: the working grid (as zones use it), the zones rasterised on it,
 * then the engine, all in this thread; progress as placeSensors sends it, over `progress`.
 */
export function placeOnStoredSurface(input: {
	port: MessagePort;
	surfaceKey: string;
	versionId: number;
	options: ZoneGridOptions;
	zones: { id: string; geometry: MultiPolygonGeometry }[] | null;
	sensors: SensorInput[];
	placement: Omit<PlacementOptions, 'onIteration'>;
	progress?: MessagePort;
}) {
	return refusing(input.port, async () => {
		const grid = await zoneImportanceOfSurface(await storedImportance(input.port, input.surfaceKey, input.versionId), input.options);
		let zones: ZoneMap | null = null;
		if (input.zones) {
			const fwd = transformer(4326, parseEpsg(grid.crs)).forward;
			zones = rasterizeZones(grid, input.zones.map((z) => ({ id: z.id, rings: z.geometry.coordinates.flatMap((poly) => projectRings(poly, fwd, grid.cellSize / 4)) })));
		}
		const reply = placeSensors({ grid, zones, sensors: input.sensors, options: input.placement, port: input.progress });
		if (!reply.ok) throw new ServiceError(422, 'invalid_input', `The placement cannot run: ${reply.message}`, reply.field);
		return reply.result;
	});
}
