/**
 * The network map's one JSON document (GET /api/v1/networks/:id/map) and its importance image
 * (GET /api/v1/networks/:id/map/importance.png): assembly only.
 *
 * Every geometry is given in the network's working CRS (services/working-crs.ts, the same one the
 * sensor table, zones and placement use), where all measurement happens: every WGS 84 geometry is
 * converted here with proj4, and the browser gets working-CRS x/y plus the proj4 string. The
 * importance image (and the contours cut from it) is rendered in `imageEpsg`: the working CRS for
 * the server-drawn maps, EPSG:3857 for the web maps (Leaflet), where it lies axis-aligned; the
 * backdrop says which (`backdrop.epsg`), and the contours are converted back to the working CRS.
 *
 * The importance image and its contours are derived from a recipe version's surface, which never
 * changes: a `map-importance` job draws them once per (recipe version, CRS) and keeps them in the
 * object store (services/map-importance.ts), so every app process shares them. A request never
 * draws: it reads the stored view, or queues that job and answers at once with everything else,
 * the job in `importanceJob` for the page to follow (GET …/jobs/{id}) until the image is ready.
 * Raster and contour code lives in src/lib/map and server/map, geometry in src/lib/geo/geometry,
 * queries in the repositories.
 */
import { CrsError, crsDefinition, transformer, type PointTransform } from '../../geo/crs';
import { boundsOf, labelPosition, padBounds, unionBounds, type Bounds, type Position, type Ring } from '../../geo/geometry';
import { legendStops } from '../../importance/colour-ramp';
import type { ImportanceView } from '../map/importance-image';
import { jobView } from '../jobs/queue';
import type { Db } from '../db';
import { latestPreviewedLayer } from '../repositories/layers';
import type { NetworkRow } from '../repositories/networks';
import { listSensorTypes } from '../repositories/sensor-types';
import { listSensors } from '../repositories/sensors';
import { listZones } from '../repositories/zones';
import type { ObjectStore } from '../storage/object-store';
import { asMultiPolygon } from '../../geo/polygons';
import { exclusionList } from './areas';
import { ServiceError } from './errors';
import { workingCrs } from './working-crs';
import { currentZoneSet, sensorsInZones } from './zones';
import { MapImportancePending, queueMapImportance, readMapImportancePng, readMapImportanceView } from './map-importance';

import type { MapBackdrop, MapContour, MapDocument, MapImportanceJob, MapRings, MapSensor, MapZone } from '../../api/client';

/** The network's importance: which recipe version is in use (its image is drawn by a job, never here). */
export interface ImportanceSource {
	versionId(networkId: number): Promise<number | null>;
}

export interface MapInputs {
	network: NetworkRow;
	importance: ImportanceSource;
	/** The object store that holds the drawn importance images (services/map-importance.ts). */
	cache: ObjectStore;
	/** Base of the network's API URLs, e.g. /api/v1/networks/7. */
	apiBase: string;
	/**
	 * Whether the caller may see layers (layer.view): only then does a network without importance
	 * get the latest layer's preview as its backdrop (that PNG is served under layer.view).
	 */
	mayViewLayers?: boolean;
	/** The CRS the backdrop image is drawn in (its bounds are in it too); default the working CRS. */
	imageEpsg?: number;
}

type ImportanceState = { state: 'none' } | { state: 'ready'; versionId: number; view: ImportanceView } | { state: 'pending'; job: MapImportanceJob };

/**
 * The importance of the network's recipe version in use, in the map CRS: the stored view when
 * drawn; else its map-importance job, queued now if there is none (never drawn here). 'none' when
 * the network has no recipe version in use, or its surface holds no value in this CRS.
 */
async function importanceIn(db: Db, networkId: number, epsg: number, importance: ImportanceSource, cache: ObjectStore): Promise<ImportanceState> {
	const versionId = await importance.versionId(networkId);
	if (versionId === null) return { state: 'none' };
	const view = await readMapImportanceView(cache, versionId, epsg);
	if (view) return 'empty' in view ? { state: 'none' } : { state: 'ready', versionId, view };
	const job = jobView(await queueMapImportance(db, { networkId, versionId, epsg }));
	return { state: 'pending', job: { id: job.id, state: job.state, error: job.error } };
}

/** The network's working CRS for the map; a CRS the app cannot draw in is the user's to fix. */
async function mapCrs(db: Db, network: NetworkRow): Promise<{ epsg: number; forward: PointTransform } | null> {
	const epsg = await workingCrs(db, network);
	if (epsg === null) return null;
	try {
		return { epsg, forward: transformer(4326, epsg).forward };
	} catch (e) {
		if (e instanceof CrsError) throw new ServiceError(422, 'map_unavailable', `The map cannot be drawn in the network's working CRS: ${e.message}.`);
		throw e;
	}
}

const project = (polygons: readonly (readonly Ring[])[], fwd: PointTransform): Ring[][] => polygons.map((rings) => rings.map((r) => r.map(([x, y]) => fwd(x, y))));
/** The document's flat ring list (even-odd), each ring without its closing position. */
const flatRings = (polygons: readonly (readonly Ring[])[]): MapRings => polygons.flatMap((rings) => rings.map((r) => r.slice(0, -1)));

/** Assembles the map document from the database and the stored importance images (it writes nothing but, on a miss, the image's job). */
export async function networkMap(db: Db, inputs: MapInputs): Promise<MapDocument> {
	const { network, apiBase } = inputs;
	const [zoneSet, types, { rows: sensorRows }, crs] = await Promise.all([
		currentZoneSet(db, network.id),
		listSensorTypes(db, network.id),
		listSensors(db, network.id, { sort: 'code' }),
		mapCrs(db, network)
	]);
	const base = {
		network: { id: network.id, name: network.name },
		zoneSet: zoneSet ? { id: zoneSet.id, name: zoneSet.name, kind: zoneSet.kind } : null,
		sensorTypes: types.map((t) => ({ id: t.id, name: t.name, radiusM: Number(t.radius_m), mobility: t.mobility }))
	};
	if (!crs) return { ...base, crs: null, extent: null, studyArea: [], exclusions: [], zones: [], sensors: [], backdrop: null, contours: [], importanceJob: null };
	const fwd = crs.forward;

	const studyArea = project(asMultiPolygon(network.study_area)?.coordinates ?? [], fwd);
	const exclusions = project(exclusionList(network.exclusions).flatMap((f) => f.geometry.coordinates), fwd);
	const sensors: MapSensor[] = sensorRows.map((s) => {
		const [x, y] = fwd(s.lon, s.lat);
		return { id: s.id, code: s.code, serial: s.serial, typeId: s.sensor_type_id, status: s.status, lon: s.lon, lat: s.lat, x, y, installedOn: s.installed_on };
	});
	const zoneRows = zoneSet ? await listZones(db, [zoneSet.id]) : [];
	const counts = sensorsInZones(zoneRows.map((z) => z.geometry), sensorRows);
	const zones: MapZone[] = [];
	zoneRows.forEach((z, i) => {
		const polygons = project(asMultiPolygon(z.geometry)?.coordinates ?? [], fwd);
		const labelAt = labelPosition(polygons);
		if (!labelAt) return;
		zones.push({ id: z.id, code: z.code, name: z.name, importanceShare: z.importance_share, sensorCount: counts[i], rings: flatRings(polygons), labelAt });
	});

	let backdrop: MapBackdrop | null = null;
	let contours: MapContour[] = [];
	const imageEpsg = inputs.imageEpsg ?? crs.epsg;
	// Image coordinates → working CRS (for the contours and the extent); identity when they agree.
	const imageToWorking: PointTransform = imageEpsg === crs.epsg ? (x, y) => [x, y] : transformer(imageEpsg, crs.epsg).forward;
	const imp = await importanceIn(db, network.id, imageEpsg, inputs.importance, inputs.cache);
	if (imp.state === 'ready') {
		const { bounds, min, max } = imp.view;
		const url = `${apiBase}/map/importance.png${imageEpsg === crs.epsg ? '' : `?epsg=${imageEpsg}`}`;
		backdrop = { kind: 'importance', label: 'Importance', url, epsg: imageEpsg, bounds, min, max, legend: legendStops(min, max), approximate: false };
		contours = imageEpsg === crs.epsg ? imp.view.contours : imp.view.contours.map((c) => ({ level: c.level, lines: c.lines.map((l) => l.map(([x, y]) => imageToWorking(x, y))) }));
	} else if (imp.state === 'none' && inputs.mayViewLayers) {
		backdrop = await layerBackdrop(db, network.id, imageEpsg, transformer(4326, imageEpsg).forward, apiBase);
	}
	const sensorPoints: Position[] = sensors.map((s) => [s.x, s.y]);
	const extent = unionBounds(boundsOf(sensorPoints, [...studyArea, ...exclusions, ...zones.map((z) => z.rings)]), backdrop ? boundsOf([], [[boxOutline(backdrop.bounds).map(([x, y]) => imageToWorking(x, y))]]) : null);
	return {
		...base,
		crs: { epsg: crs.epsg, proj4: crsDefinition(crs.epsg) as string },
		extent: extent ? padBounds(extent, 0.03, 50) : null,
		studyArea: flatRings(studyArea),
		exclusions: flatRings(exclusions),
		zones,
		sensors,
		backdrop,
		contours,
		importanceJob: imp.state === 'pending' ? imp.job : null
	};
}

/** The latest ready layer's preview as the backdrop (networks without importance), or null. */
async function layerBackdrop(db: Db, networkId: number, epsg: number, fwd: PointTransform, apiBase: string): Promise<MapBackdrop | null> {
	const layer = await latestPreviewedLayer(db, networkId);
	const outline = asMultiPolygon((layer?.footprint as { polygon?: unknown } | null)?.polygon ?? layer?.footprint);
	if (!layer || !outline) return null;
	const bounds = boundsOf([], project(outline.coordinates, fwd));
	if (!bounds) return null;
	const min = layer.stat_min ?? 0;
	const max = layer.stat_max ?? min;
	return { kind: 'layer', label: layer.name, url: `${apiBase}/layers/${layer.id}/preview.png`, epsg, bounds, min, max, legend: legendStops(Math.min(min, max), Math.max(min, max)), approximate: layer.epsg !== epsg };
}

/** A box's outline, 8 points a side (a box in one CRS is curved in another). */
function boxOutline([x0, y0, x1, y1]: Bounds): Position[] {
	const out: Position[] = [];
	for (let k = 0; k <= 8; k++) {
		const f = k / 8;
		out.push([x0 + f * (x1 - x0), y0], [x0 + f * (x1 - x0), y1], [x0, y0 + f * (y1 - y0)], [x1, y0 + f * (y1 - y0)]);
	}
	return out;
}

/**
 * The importance image for the map in `epsg` (default the network's working CRS; the web maps ask
 * for EPSG:3857), or null when the network has no importance surface (or it holds no value in that
 * CRS). Not drawn yet: its job is queued and MapImportancePending (409 importance_pending) thrown; a
 * job that failed gives its reason (422 map_unavailable).
 */
export async function importancePng(db: Db, network: NetworkRow, importance: ImportanceSource, cache: ObjectStore, epsg?: number): Promise<Buffer | null> {
	const crs = await mapCrs(db, network);
	if (!crs) return null;
	const imageEpsg = epsg ?? crs.epsg;
	const versionId = await importance.versionId(network.id);
	if (versionId === null) return null;
	const view = await readMapImportanceView(cache, versionId, imageEpsg);
	if (view) return 'empty' in view ? null : readMapImportancePng(cache, versionId, imageEpsg);
	const job = await queueMapImportance(db, { networkId: network.id, versionId, epsg: imageEpsg });
	if (job.state === 'failed') throw new ServiceError(422, 'map_unavailable', job.error ?? 'The importance map could not be drawn.');
	throw new MapImportancePending(job);
}
