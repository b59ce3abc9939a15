/**
 * The network map's one JSON document (GET /api/v1/networks/:id/map) and its importance backdrop
 * (GET /api/v1/networks/:id/map/importance.png).
 *
 * The map is drawn in the network's projected working CRS (metres as map units), not in Web
 * Mercator: sensing disks are then true circles of their radius in metres, the scale bar is exact
 * anywhere on the map, and the importance raster lies on the map as the axis-aligned grid it is.
 * Every WGS 84 geometry is converted here with proj4 (src/lib/geo/crs.ts), so the browser receives
 * working-CRS x/y only (plus the proj4 string, to show lon/lat under the cursor).
 *
 * Pure assembly functions (project, bounds, resample, contours, PNG) come first and are unit-tested;
 * the database reads (read-only) and the document assembly follow.
 */
import { contours as d3Contours } from 'd3-contour';
import { chooseWorkingCrs, crsDefinition, isProjected, transformer, utmZoneFor, type PointTransform } from '../../geo/crs';
import { legendStops } from '../../importance/colour-ramp';
import { rampPng } from '../layers/preview';
import type { GridSpec } from '../../importance/grid';
import type { Db } from '../db';
import type { NetworkRow } from '../repositories/networks';

import type { MapBackdrop, MapBounds, MapContour, MapDocument, MapPoint, MapRings, MapSensor, MapSensorType, MapZone, SensorStatus } from '../../api/client';

export type { MapBackdrop, MapBounds, MapContour, MapDocument, MapPoint, MapRings, MapSensor, MapSensorType, MapZone, SensorStatus };

/** Something the map cannot be drawn from, with a message fit for the user. */
export class MapDataError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'MapDataError';
	}
}

// ---------------------------------------------------------------------------------------------
// Pure assembly

/**
 * All rings (exteriors and holes, closing point dropped) of a GeoJSON Polygon, MultiPolygon,
 * GeometryCollection, Feature or FeatureCollection, lon/lat. Anything else gives no rings.
 */
export function lonLatRings(value: unknown): MapPoint[][] {
	const out: MapPoint[][] = [];
	const ring = (r: unknown) => {
		if (!Array.isArray(r)) return;
		const pts: MapPoint[] = [];
		for (const p of r) {
			if (Array.isArray(p) && typeof p[0] === 'number' && typeof p[1] === 'number' && Number.isFinite(p[0]) && Number.isFinite(p[1])) pts.push([p[0], p[1]]);
		}
		if (pts.length > 1 && pts[0][0] === pts[pts.length - 1][0] && pts[0][1] === pts[pts.length - 1][1]) pts.pop();
		if (pts.length >= 3) out.push(pts);
	};
	const walk = (v: unknown) => {
		if (typeof v !== 'object' || v === null) return;
		const o = v as Record<string, unknown>;
		if (o.type === 'FeatureCollection' && Array.isArray(o.features)) o.features.forEach(walk);
		else if (o.type === 'Feature') walk(o.geometry);
		else if (o.type === 'GeometryCollection' && Array.isArray(o.geometries)) o.geometries.forEach(walk);
		else if (o.type === 'Polygon' && Array.isArray(o.coordinates)) o.coordinates.forEach(ring);
		else if (o.type === 'MultiPolygon' && Array.isArray(o.coordinates)) for (const poly of o.coordinates) if (Array.isArray(poly)) poly.forEach(ring);
	};
	walk(typeof value === 'string' ? safeJson(value) : value);
	return out;
}

function safeJson(text: string): unknown {
	try {
		return JSON.parse(text);
	} catch {
		return null;
	}
}

/** Rings converted point by point (a new array). */
export function projectMapRings(rings: readonly (readonly MapPoint[])[], forward: PointTransform): MapRings {
	return rings.map((r) => r.map(([x, y]) => forward(x, y)));
}

/** Bounds of points and rings together; null when there is nothing. */
export function boundsOf(points: readonly MapPoint[], ...ringSets: readonly (readonly (readonly MapPoint[])[])[]): MapBounds | null {
	let minX = Infinity;
	let minY = Infinity;
	let maxX = -Infinity;
	let maxY = -Infinity;
	const add = ([x, y]: MapPoint) => {
		if (!Number.isFinite(x) || !Number.isFinite(y)) return;
		if (x < minX) minX = x;
		if (x > maxX) maxX = x;
		if (y < minY) minY = y;
		if (y > maxY) maxY = y;
	};
	points.forEach(add);
	for (const set of ringSets) for (const r of set) r.forEach(add);
	return minX <= maxX ? [minX, minY, maxX, maxY] : null;
}

/** Union of bounds (nulls ignored). */
export function unionBounds(...all: (MapBounds | null)[]): MapBounds | null {
	const pts: MapPoint[] = [];
	for (const b of all) if (b) pts.push([b[0], b[1]], [b[2], b[3]]);
	return boundsOf(pts);
}

/** Bounds grown by a fraction of their larger side on every side (at least `minPad` map units). */
export function padBounds(b: MapBounds, fraction: number, minPad = 0): MapBounds {
	const pad = Math.max(minPad, Math.max(b[2] - b[0], b[3] - b[1]) * fraction);
	return [b[0] - pad, b[1] - pad, b[2] + pad, b[3] + pad];
}

/** Even-odd point-in-rings test (rings not closed). */
export function insideRings(p: MapPoint, rings: readonly (readonly MapPoint[])[]): boolean {
	let inside = false;
	for (const r of rings) {
		for (let i = 0, j = r.length - 1; i < r.length; j = i++) {
			const [xi, yi] = r[i];
			const [xj, yj] = r[j];
			if (yi > p[1] !== yj > p[1] && p[0] < ((xj - xi) * (p[1] - yi)) / (yj - yi) + xi) inside = !inside;
		}
	}
	return inside;
}

/** Area centroid of the ring with the largest area (shoelace formula); vertex mean for a flat ring. */
export function labelPoint(rings: readonly (readonly MapPoint[])[]): MapPoint {
	let best: { a: number; c: MapPoint } | null = null;
	for (const r of rings) {
		let a2 = 0;
		let cx = 0;
		let cy = 0;
		for (let i = 0, j = r.length - 1; i < r.length; j = i++) {
			const f = r[j][0] * r[i][1] - r[i][0] * r[j][1];
			a2 += f;
			cx += (r[j][0] + r[i][0]) * f;
			cy += (r[j][1] + r[i][1]) * f;
		}
		const area = Math.abs(a2 / 2);
		const c: MapPoint =
			a2 !== 0 ? [cx / (3 * a2), cy / (3 * a2)] : [r.reduce((s, p) => s + p[0], 0) / r.length, r.reduce((s, p) => s + p[1], 0) / r.length];
		if (!best || area > best.a) best = { a: area, c };
	}
	if (!best) throw new MapDataError('a zone without rings has no label position');
	return best.c;
}

/** A raster resampled onto an axis-aligned grid of the map CRS (row 0 north). */
export interface MapRaster {
	x0: number;
	y0: number;
	dx: number;
	dy: number;
	width: number;
	height: number;
	/** NaN where there is no value. */
	values: Float64Array;
}

/** A surface as the importance code produces it (see src/lib/importance/grid.ts). */
export interface SurfaceLike {
	grid: GridSpec;
	data: ArrayLike<number>;
}

/**
 * Nearest-neighbour resampling of a surface onto a grid of the map CRS, at most `maxSize` cells on
 * the longer side (never finer than the source). Same CRS: a box of source cells per output cell,
 * no reprojection. Another CRS: the surface's outline (16 points a side) gives the output bounds,
 * and each output cell centre is transformed back into the source CRS and looked up.
 */
export function resampleToMap(surface: SurfaceLike, mapEpsg: number, maxSize = 512): MapRaster {
	const g = surface.grid;
	if (!(g.width > 0 && g.height > 0 && g.dx > 0 && g.dy > 0)) throw new MapDataError('the importance grid is empty');
	if (surface.data.length !== g.width * g.height) throw new MapDataError(`the importance grid holds ${surface.data.length} values, not ${g.width}×${g.height}`);
	if (!Number.isInteger(maxSize) || maxSize < 2) throw new RangeError(`maxSize must be an integer ≥ 2, not ${maxSize}`);
	const at = (c: number, r: number) => {
		const v = Number(surface.data[r * g.width + c]);
		return Number.isFinite(v) ? v : NaN;
	};
	if (g.epsg === mapEpsg) {
		const scale = Math.min(1, maxSize / Math.max(g.width, g.height));
		const width = Math.max(1, Math.round(g.width * scale));
		const height = Math.max(1, Math.round(g.height * scale));
		const dx = (g.width * g.dx) / width;
		const dy = (g.height * g.dy) / height;
		const values = new Float64Array(width * height);
		for (let r = 0; r < height; r++) {
			const sr = Math.min(g.height - 1, Math.floor(((r + 0.5) * g.height) / height));
			for (let c = 0; c < width; c++) {
				const sc = Math.min(g.width - 1, Math.floor(((c + 0.5) * g.width) / width));
				values[r * width + c] = at(sc, sr);
			}
		}
		return { x0: g.x0, y0: g.y0, dx, dy, width, height, values };
	}
	const t = transformer(g.epsg, mapEpsg);
	const outline: MapPoint[] = [];
	const n = 16;
	for (let k = 0; k <= n; k++) {
		const f = k / n;
		const W = g.width * g.dx;
		const H = g.height * g.dy;
		outline.push(t.forward(g.x0 + f * W, g.y0), t.forward(g.x0 + f * W, g.y0 - H), t.forward(g.x0, g.y0 - f * H), t.forward(g.x0 + W, g.y0 - f * H));
	}
	const b = boundsOf(outline);
	if (!b) throw new MapDataError(`the importance grid cannot be shown in EPSG:${mapEpsg}`);
	const spanX = b[2] - b[0];
	const spanY = b[3] - b[1];
	const longer = Math.max(spanX, spanY);
	// Never finer than the source's cell count along the longer side.
	const size = Math.min(maxSize, Math.max(g.width, g.height));
	const cell = longer / size;
	const width = Math.max(1, Math.round(spanX / cell));
	const height = Math.max(1, Math.round(spanY / cell));
	const dx = spanX / width;
	const dy = spanY / height;
	const values = new Float64Array(width * height);
	for (let r = 0; r < height; r++) {
		const y = b[3] - (r + 0.5) * dy;
		for (let c = 0; c < width; c++) {
			const [sx, sy] = t.inverse(b[0] + (c + 0.5) * dx, y);
			const sc = Math.floor((sx - g.x0) / g.dx);
			const sr = Math.floor((g.y0 - sy) / g.dy);
			values[r * width + c] = sc >= 0 && sc < g.width && sr >= 0 && sr < g.height ? at(sc, sr) : NaN;
		}
	}
	return { x0: b[0], y0: b[3], dx, dy, width, height, values };
}

export function rasterBounds(r: MapRaster): MapBounds {
	return [r.x0, r.y0 - r.height * r.dy, r.x0 + r.width * r.dx, r.y0];
}

/** Smallest and largest finite value; null when the raster has none. */
export function valueRange(values: ArrayLike<number>): { min: number; max: number } | null {
	let min = Infinity;
	let max = -Infinity;
	for (let i = 0; i < values.length; i++) {
		const v = values[i];
		if (!Number.isFinite(v)) continue;
		if (v < min) min = v;
		if (v > max) max = v;
	}
	return min <= max ? { min, max } : null;
}

/** `count` levels evenly inside (min, max), excluding both ends; none for a constant surface. */
export function contourLevels(min: number, max: number, count = 4): number[] {
	if (!Number.isInteger(count) || count < 1) throw new RangeError(`contour count must be a positive integer, not ${count}`);
	if (!(max > min)) return [];
	return Array.from({ length: count }, (_, k) => Number((min + ((max - min) * (k + 1)) / (count + 1)).toPrecision(3)));
}

/**
 * The raster with every cell that has no value filled from its valued neighbours (repeated
 * 8-neighbour means, growing inward from the data), so contouring does not draw a false line
 * around each hole; null when no cell has a value.
 */
export function fillGaps(r: MapRaster): Float64Array | null {
	const { width: w, height: h } = r;
	let cur = Float64Array.from(r.values);
	if (!cur.some((v) => Number.isFinite(v))) return null;
	for (let pass = 0; pass < w + h; pass++) {
		let missing = 0;
		const next = Float64Array.from(cur);
		for (let j = 0; j < h; j++) {
			for (let i = 0; i < w; i++) {
				if (Number.isFinite(cur[j * w + i])) continue;
				let sum = 0;
				let n = 0;
				for (let dj = -1; dj <= 1; dj++) {
					for (let di = -1; di <= 1; di++) {
						const jj = j + dj;
						const ii = i + di;
						if ((di || dj) && jj >= 0 && jj < h && ii >= 0 && ii < w && Number.isFinite(cur[jj * w + ii])) {
							sum += cur[jj * w + ii];
							n++;
						}
					}
				}
				if (n > 0) next[j * w + i] = sum / n;
				else missing++;
			}
		}
		cur = next;
		if (missing === 0) break;
	}
	return cur;
}

/**
 * Contour lines of a map raster at the given levels, in map CRS coordinates (d3-contour: marching
 * squares with linear interpolation). d3-contour puts value i at grid coordinate i + 0.5, the cell
 * centre, so grid (gx, gy) maps to (x0 + gx·dx, y0 − gy·dy). Only true contour is kept: d3's
 * polygons are closed along the grid's edge (outside the cell centres, where nothing is known)
 * and those pieces are dropped, as are pieces through cells without a value (filled only to
 * contour across them). Levels with no line are left out.
 */
export function contourLines(r: MapRaster, levels: readonly number[]): MapContour[] {
	if (levels.length === 0) return [];
	const filled = fillGaps(r);
	if (!filled) return [];
	const { width: w, height: h } = r;
	const onEdge = ([gx, gy]: number[]) => gx <= 0 || gx >= w || gy <= 0 || gy >= h;
	const inHole = (a: number[], b: number[]) => {
		const i = Math.min(w - 1, Math.max(0, Math.floor((a[0] + b[0]) / 2)));
		const j = Math.min(h - 1, Math.max(0, Math.floor((a[1] + b[1]) / 2)));
		return !Number.isFinite(r.values[j * w + i]);
	};
	const toMap = ([gx, gy]: number[]): MapPoint => [r.x0 + gx * r.dx, r.y0 - gy * r.dy];
	const shapes = d3Contours().size([w, h]).thresholds(levels as number[])(Array.from(filled));
	const out: MapContour[] = [];
	for (const s of shapes) {
		const lines: MapPoint[][] = [];
		for (const poly of s.coordinates) {
			for (const ring of poly) {
				const runs: number[][][] = [];
				let run: number[][] = [];
				const last = ring.length - 2;
				let firstKept = false;
				let lastKept = false;
				for (let k = 0; k <= last; k++) {
					const a = ring[k];
					const b = ring[k + 1];
					if (onEdge(a) || onEdge(b) || inHole(a, b)) {
						if (run.length > 1) runs.push(run);
						run = [];
						continue;
					}
					if (k === 0) firstKept = true;
					if (k === last) lastKept = true;
					if (run.length === 0) run.push(a);
					run.push(b);
				}
				if (run.length > 1) runs.push(run);
				// A ring cut somewhere whose first and last pieces are kept: they join where it closes.
				if (runs.length > 1 && firstKept && lastKept) {
					const tail = runs.pop() as number[][];
					runs[0] = [...tail, ...runs[0].slice(1)];
				}
				for (const line of runs) lines.push(line.map(toMap));
			}
		}
		if (lines.length > 0) out.push({ level: s.value, lines });
	}
	return out;
}

/** A copy of the raster box-averaged so that its longer side has at most `maxSize` cells. */
export function coarsen(r: MapRaster, maxSize: number): MapRaster {
	const f = Math.ceil(Math.max(r.width, r.height) / maxSize);
	if (f <= 1) return { ...r, values: Float64Array.from(r.values) };
	const width = Math.ceil(r.width / f);
	const height = Math.ceil(r.height / f);
	const values = new Float64Array(width * height);
	for (let j = 0; j < height; j++) {
		for (let i = 0; i < width; i++) {
			let sum = 0;
			let n = 0;
			for (let rr = j * f; rr < Math.min(r.height, (j + 1) * f); rr++) {
				for (let cc = i * f; cc < Math.min(r.width, (i + 1) * f); cc++) {
					const v = r.values[rr * r.width + cc];
					if (Number.isFinite(v)) {
						sum += v;
						n++;
					}
				}
			}
			values[j * width + i] = n > 0 ? sum / n : NaN;
		}
	}
	// Cells of the coarse grid cover f source cells (the last row/column may reach past the edge).
	return { x0: r.x0, y0: r.y0, dx: r.dx * f, dy: r.dy * f, width, height, values };
}

/** PNG of a map raster coloured with the moorland ramp from min to max; no value = transparent. */
export function rasterPng(r: MapRaster, min: number, max: number): Buffer {
	return rampPng(r.values, r.width, r.height, min, max, 'moorland');
}

/**
 * The map's CRS: the network's explicit working CRS when set; else the importance grid's own CRS
 * when it has ground-true metres; else the UTM zone of the centre of everything with a position.
 * Null when nothing has a position.
 */
export function mapCrs(explicitEpsg: number | null, gridEpsg: number | null, lonLatPoints: readonly MapPoint[]): number | null {
	if (explicitEpsg !== null && crsDefinition(explicitEpsg) && isProjected(explicitEpsg)) return explicitEpsg;
	const b = boundsOf(lonLatPoints);
	const centre: MapPoint | null = b ? [(b[0] + b[2]) / 2, (b[1] + b[3]) / 2] : null;
	if (gridEpsg !== null && crsDefinition(gridEpsg)) {
		if (centre) return chooseWorkingCrs(gridEpsg, centre);
		if (isProjected(gridEpsg)) return chooseWorkingCrs(gridEpsg, [0, 0]);
	}
	return centre ? utmZoneFor(centre[0], centre[1]) : null;
}

// ---------------------------------------------------------------------------------------------
// Database reads (read-only)

interface ZoneRow {
	id: number;
	code: string;
	name: string;
	geometry: unknown;
	importance_share: number | null;
}

interface LayerRow {
	id: number;
	name: string;
	epsg: number | null;
	footprint: unknown;
	stat_min: number | null;
	stat_max: number | null;
}

const parseJson = (v: unknown): unknown => (typeof v === 'string' ? safeJson(v) : (v ?? null));

/** The current zone set: the one the network points at, else the newest. */
async function currentZoneSet(db: Db, network: NetworkRow): Promise<{ id: number; name: string; kind: string } | null> {
	const pointed = await db('networks').select('zone_set_id').where({ id: network.id }).first();
	const q = db('zone_sets').select('id', 'name', 'kind').where({ network_id: network.id });
	const row = pointed?.zone_set_id ? await q.clone().andWhere({ id: pointed.zone_set_id }).first() : undefined;
	return row ?? (await q.orderBy([{ column: 'created_at', order: 'desc' }, { column: 'id', order: 'desc' }]).first()) ?? null;
}

async function latestReadyLayer(db: Db, networkId: number): Promise<LayerRow | null> {
	const row = await db('layers')
		.select('id', 'name', 'epsg', 'footprint', 'stat_min', 'stat_max')
		.where({ network_id: networkId, status: 'ready' })
		.whereNotNull('preview_key')
		.orderBy([{ column: 'created_at', order: 'desc' }, { column: 'id', order: 'desc' }])
		.first();
	return row ? { ...row, footprint: parseJson(row.footprint) } : null;
}

/** Provides the network's current importance surface, or null when it has no recipe yet. */
export type ImportanceSource = (networkId: number) => Promise<SurfaceLike | null>;

export interface MapInputs {
	network: NetworkRow;
	importance: ImportanceSource;
	/** Base of the network's API URLs, e.g. /api/v1/networks/7. */
	apiBase: string;
	/**
	 * Whether the caller may see layers (layer.view): only then does a network without importance
	 * get the latest layer's preview as its backdrop (that PNG is served under layer.view).
	 */
	mayViewLayers?: boolean;
}

/** Assembles the map document from the database (read-only) and the importance source. */
export async function networkMap(db: Db, inputs: MapInputs): Promise<MapDocument> {
	const { network, apiBase } = inputs;
	const [zoneSet, typeRows, sensorRows, layer] = await Promise.all([
		currentZoneSet(db, network),
		db('sensor_types').select('id', 'name', 'radius_m', 'mobility').where({ network_id: network.id }).orderBy('id'),
		db('sensors')
			.select('id', 'code', 'serial', 'sensor_type_id', 'status', 'lon', 'lat', 'installed_on')
			.where({ network_id: network.id })
			.orderBy('code'),
		latestReadyLayer(db, network.id)
	]);
	const zoneRows: ZoneRow[] = zoneSet
		? (await db('zones').select('id', 'code', 'name', 'geometry', 'importance_share').where({ zone_set_id: zoneSet.id }).orderBy('code')).map((z: ZoneRow) => ({
				...z,
				geometry: parseJson(z.geometry)
			}))
		: [];
	const surface = await inputs.importance(network.id);

	const areaLL = lonLatRings(network.study_area);
	const exclLL = lonLatRings(network.exclusions);
	const zonesLL = zoneRows.map((z) => lonLatRings(z.geometry));
	const sensorLL: MapPoint[] = sensorRows.map((s: { lon: number; lat: number }) => [Number(s.lon), Number(s.lat)]);
	const layerLL = layer ? lonLatRings(layer.footprint) : [];
	const allLL: MapPoint[] = [...sensorLL, ...areaLL.flat(), ...exclLL.flat(), ...zonesLL.flat(2), ...layerLL.flat()];

	const epsg = mapCrs(network.crs_epsg, surface && crsDefinition(surface.grid.epsg) ? surface.grid.epsg : (layer?.epsg ?? null), allLL);
	const base = {
		network: { id: network.id, name: network.name },
		zoneSet,
		sensorTypes: typeRows.map((t: { id: number; name: string; radius_m: number; mobility: MapSensorType['mobility'] }) => ({
			id: t.id,
			name: t.name,
			radiusM: Number(t.radius_m),
			mobility: t.mobility
		}))
	};
	if (epsg === null) {
		return { ...base, crs: null, extent: null, studyArea: [], exclusions: [], zones: [], sensors: [], backdrop: null, contours: [] };
	}
	const fwd = transformer(4326, epsg).forward;
	const studyArea = projectMapRings(areaLL, fwd);
	const exclusions = projectMapRings(exclLL, fwd);
	const sensors: MapSensor[] = sensorRows.map(
		(s: { id: number; code: string; serial: string; sensor_type_id: number; status: SensorStatus; lon: number; lat: number; installed_on: Date | string | null }) => {
			const [x, y] = fwd(Number(s.lon), Number(s.lat));
			return {
				id: s.id,
				code: s.code,
				serial: s.serial,
				typeId: s.sensor_type_id,
				status: s.status,
				lon: Number(s.lon),
				lat: Number(s.lat),
				x,
				y,
				installedOn: s.installed_on ? isoDate(s.installed_on) : null
			};
		}
	);
	const zones: MapZone[] = [];
	zoneRows.forEach((z, i) => {
		const rings = projectMapRings(zonesLL[i], fwd);
		if (rings.length === 0) return;
		const sensorCount = sensors.filter((s) => s.status !== 'retired' && insideRings([s.x, s.y], rings)).length;
		zones.push({ id: z.id, code: z.code, name: z.name, importanceShare: z.importance_share === null ? null : Number(z.importance_share), sensorCount, rings, labelAt: labelPoint(rings) });
	});

	let backdrop: MapBackdrop | null = null;
	let contours: MapContour[] = [];
	const raster = surface && crsDefinition(surface.grid.epsg) ? resampleToMap(surface, epsg, 512) : null;
	const range = raster ? valueRange(raster.values) : null;
	if (raster && range) {
		backdrop = {
			kind: 'importance',
			label: 'Importance',
			url: `${apiBase}/map/importance.png`,
			bounds: rasterBounds(raster),
			min: range.min,
			max: range.max,
			legend: legendStops(range.min, range.max),
			approximate: false
		};
		contours = contourLines(coarsen(raster, 160), contourLevels(range.min, range.max, 4));
	} else if (layer && layerLL.length > 0 && inputs.mayViewLayers) {
		const fp = boundsOf([], projectMapRings(layerLL, fwd));
		if (fp) {
			const min = layer.stat_min ?? 0;
			const max = layer.stat_max ?? min;
			backdrop = {
				kind: 'layer',
				label: layer.name,
				url: `${apiBase}/layers/${layer.id}/preview.png`,
				bounds: fp,
				min,
				max,
				legend: legendStops(Math.min(min, max), Math.max(min, max)),
				approximate: layer.epsg !== epsg
			};
		}
	}
	const extent = unionBounds(boundsOf(sensors.map((s) => [s.x, s.y]), studyArea, exclusions, ...zones.map((z) => z.rings)), backdrop?.bounds ?? null);
	return {
		...base,
		crs: { epsg, proj4: crsDefinition(epsg) as string },
		extent: extent ? padBounds(extent, 0.03, 50) : null,
		studyArea,
		exclusions,
		zones,
		sensors,
		backdrop,
		contours
	};
}

function isoDate(v: Date | string): string {
	if (v instanceof Date) {
		const p = (n: number) => String(n).padStart(2, '0');
		return `${v.getFullYear()}-${p(v.getMonth() + 1)}-${p(v.getDate())}`;
	}
	return String(v).slice(0, 10);
}

/** The importance backdrop PNG for the map, or null when the network has no importance surface. */
export async function importancePng(network: NetworkRow, db: Db, importance: ImportanceSource): Promise<Buffer | null> {
	const surface = await importance(network.id);
	if (!surface || !crsDefinition(surface.grid.epsg)) return null;
	// Same CRS decision as the document, so the image lands on its bounds.
	const doc = await networkMap(db, { network, importance: async () => surface, apiBase: '' });
	if (!doc.crs) return null;
	const raster = resampleToMap(surface, doc.crs.epsg, 512);
	const range = valueRange(raster.values);
	if (!range) return null;
	return rasterPng(raster, range.min, range.max);
}
