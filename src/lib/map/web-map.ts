/**
 * The web maps (Leaflet) are drawn in the standard web-map projection, EPSG:3857, so that an XYZ
 * basemap can lie under them; all measurement stays in the network's working CRS. This module is
 * the one bridge between the two, pure (proj4 only, no Leaflet, no DOM):
 *
 * - working-CRS metres → WGS 84 lon/lat for drawing (Leaflet projects lon/lat to 3857 itself), and
 *   back for clicks (a drawn outline's vertices stay working-CRS metres, as before);
 * - sensing disks as polygons computed in the working CRS and then converted: a Leaflet circle in
 *   3857 would take its radius in Mercator metres (1/cos φ too large away from the equator);
 * - distances between two map positions in working-CRS metres (the scale bar), and boxes of
 *   working-CRS or 3857 metres as lon/lat boxes.
 */
import proj4, { type Converter } from 'proj4';
import type { MapBounds, MapPoint } from '../api/client';
import { crsDefinition } from '../geo/crs';

/** The CRS the web maps are drawn in: spherical (Web) Mercator, Leaflet's default. */
export const WEB_MAP_EPSG = 3857;

/** Spherical Mercator as EPSG:3857 defines it (the sphere of radius 6 378 137 m), as Leaflet draws it. */
const WEB_MERCATOR = crsDefinition(WEB_MAP_EPSG) as string;
const WGS84 = crsDefinition(4326) as string;

export type LonLat = [number, number];

/** The deployment's basemap as pages receive it (see src/lib/server/http/basemap.ts); null when it is off. */
export interface BasemapView {
	/** XYZ template, e.g. https://tiles.example.org/{z}/{x}/{y}.png */
	url: string;
	/** The credit the tiles' provider requires, plain text. */
	attribution: string;
	/** The highest zoom level of the tile server. */
	maxZoom: number;
}
/** [minLon, minLat, maxLon, maxLat] in degrees. */
export type LonLatBounds = [number, number, number, number];

export class WebMapError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'WebMapError';
	}
}

export interface WebProjection {
	/** Working-CRS metres → lon/lat degrees. */
	toLonLat(p: readonly [number, number]): LonLat;
	/** Lon/lat degrees → working-CRS metres. */
	toWorking(lon: number, lat: number): MapPoint;
	/** Distance in working-CRS metres between two lon/lat positions (what the scale bar shows). */
	distance(a: LonLat, b: LonLat): number;
}

/** The bridge for a working CRS given by its proj4 definition (the map document's `crs.proj4`). */
export function webProjection(workingProj4: string): WebProjection {
	let conv: Converter;
	try {
		conv = proj4(workingProj4, WGS84);
	} catch (e) {
		throw new WebMapError(`the working CRS cannot be converted to longitude/latitude (${e instanceof Error ? e.message : String(e)})`);
	}
	const toLonLat = (p: readonly [number, number]): LonLat => {
		const q = conv.forward([p[0], p[1]]);
		return [q[0], q[1]];
	};
	const toWorking = (lon: number, lat: number): MapPoint => {
		const q = conv.inverse([lon, lat]);
		return [q[0], q[1]];
	};
	return {
		toLonLat,
		toWorking,
		distance: (a, b) => {
			const [ax, ay] = toWorking(a[0], a[1]);
			const [bx, by] = toWorking(b[0], b[1]);
			return Math.hypot(bx - ax, by - ay);
		}
	};
}

/** Vertices of a sensing disk's outline: smooth at a few hundred pixels across (4° a segment). */
export const DISK_SEGMENTS = 90;

/**
 * The outline of a disk of `radiusM` metres around `centre` (working-CRS metres), computed in the
 * working CRS and converted to lon/lat: `segments` vertices, first not repeated. So the disk is as
 * true to scale as the working CRS (a UTM zone: within 0.1 % of ground metres), whatever the web
 * map's projection does to it.
 */
export function diskOutline(centre: readonly [number, number], radiusM: number, toLonLat: (p: readonly [number, number]) => LonLat, segments = DISK_SEGMENTS): LonLat[] {
	if (!(radiusM > 0) || !Number.isFinite(radiusM)) throw new RangeError(`a disk's radius must be a positive number of metres, not ${radiusM}`);
	if (!Number.isInteger(segments) || segments < 8) throw new RangeError(`a disk needs at least 8 segments, not ${segments}`);
	const out: LonLat[] = [];
	for (let k = 0; k < segments; k++) {
		const a = (2 * Math.PI * k) / segments;
		out.push(toLonLat([centre[0] + radiusM * Math.cos(a), centre[1] + radiusM * Math.sin(a)]));
	}
	return out;
}

/** The lon/lat box around a box of `bounds` metres, converted by `toLonLat` along its outline (a box in one CRS is curved in another). */
export function lonLatBounds(bounds: MapBounds, toLonLat: (p: readonly [number, number]) => LonLat): LonLatBounds {
	const [x0, y0, x1, y1] = bounds;
	let out: LonLatBounds = [Infinity, Infinity, -Infinity, -Infinity];
	const n = 8;
	for (let k = 0; k <= n; k++) {
		const f = k / n;
		for (const p of [
			[x0 + f * (x1 - x0), y0],
			[x0 + f * (x1 - x0), y1],
			[x0, y0 + f * (y1 - y0)],
			[x1, y0 + f * (y1 - y0)]
		] as const) {
			const [lon, lat] = toLonLat(p);
			out = [Math.min(out[0], lon), Math.min(out[1], lat), Math.max(out[2], lon), Math.max(out[3], lat)];
		}
	}
	return out;
}

const mercator = proj4(WEB_MERCATOR, WGS84);

/** EPSG:3857 metres → lon/lat (an axis-aligned box in 3857 is an axis-aligned lon/lat box). */
export function webMercatorToLonLat(p: readonly [number, number]): LonLat {
	const q = mercator.forward([p[0], p[1]]);
	return [q[0], q[1]];
}

/** Lon/lat → EPSG:3857 metres (screen directions on the web map: x east, y north). */
export function lonLatToWebMercator(lon: number, lat: number): [number, number] {
	const q = mercator.inverse([lon, lat]);
	return [q[0], q[1]];
}

/** A backdrop's box (in its own `epsg`: the working CRS or 3857) as lon/lat. */
export function backdropLonLatBounds(backdrop: { epsg: number; bounds: MapBounds }, workingEpsg: number, project: WebProjection): LonLatBounds {
	if (backdrop.epsg === WEB_MAP_EPSG) return lonLatBounds(backdrop.bounds, webMercatorToLonLat);
	if (backdrop.epsg === workingEpsg) return lonLatBounds(backdrop.bounds, project.toLonLat);
	throw new WebMapError(`the backdrop is in EPSG:${backdrop.epsg}, which the web map cannot place`);
}
