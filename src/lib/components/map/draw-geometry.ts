/**
 * Geometry of a polygon drawn on the network map: the clicked vertices are working-CRS metres
 * (x = easting, y = northing); what the area API stores is GeoJSON in WGS 84 lon/lat (RFC 7946:
 * rings closed, exterior rings counter-clockwise). Pure functions, no Leaflet, no DOM.
 */
import proj4, { type Converter } from 'proj4';
import { closeRing, orientRing, ringArea2 } from '../../geo/geometry';

export type XY = [number, number];
export type LonLat = [number, number];

/** A drawn outline that cannot become a polygon, with a message fit for the user. */
export class DrawGeometryError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'DrawGeometryError';
	}
}

/** Vertices without consecutive repeats (a double click gives two clicks on one spot); a new array. */
export function dropRepeats(points: readonly XY[]): XY[] {
	const out: XY[] = [];
	for (const p of points) {
		const last = out[out.length - 1];
		if (!last || last[0] !== p[0] || last[1] !== p[1]) out.push([p[0], p[1]]);
	}
	// The last vertex on the first one would close the ring twice.
	while (out.length > 1 && out[0][0] === out[out.length - 1][0] && out[0][1] === out[out.length - 1][1]) out.pop();
	return out;
}

/** A closed, counter-clockwise copy of an open or closed ring. */
export function closedCounterClockwise(ring: readonly LonLat[]): LonLat[] {
	return orientRing(closeRing(ring), true) as LonLat[];
}

/**
 * The drawn vertices (working-CRS metres) as a GeoJSON Polygon in WGS 84 lon/lat: converted with
 * proj4 from `proj4Definition` (the map document's working CRS), ring closed and counter-clockwise.
 * Throws DrawGeometryError for fewer than 3 distinct points, points on one line, or a conversion
 * that gives no finite lon/lat.
 */
export function drawnPolygon(vertices: readonly XY[], proj4Definition: string): { type: 'Polygon'; coordinates: [LonLat[]] } {
	for (const [x, y] of vertices) {
		if (!Number.isFinite(x) || !Number.isFinite(y)) throw new DrawGeometryError('A point of the outline has no valid position.');
	}
	const pts = dropRepeats(vertices);
	if (pts.length < 3) throw new DrawGeometryError(`An outline needs at least 3 different points (it has ${pts.length}).`);
	if (ringArea2(closeRing(pts)) === 0) throw new DrawGeometryError('The points lie on one line and enclose no area; add a point off the line.');
	let toLonLat: Converter;
	try {
		toLonLat = proj4(proj4Definition, 'EPSG:4326');
	} catch {
		throw new DrawGeometryError('The map’s coordinate system is not understood; reload the page.');
	}
	const lonLat = pts.map(([x, y]) => {
		const [lon, lat] = toLonLat.forward([x, y]);
		if (!Number.isFinite(lon) || !Number.isFinite(lat) || Math.abs(lon) > 180 || Math.abs(lat) > 90) {
			throw new DrawGeometryError('A point of the outline lies outside the area the map’s coordinate system covers.');
		}
		return [lon, lat] as LonLat;
	});
	const ring = closedCounterClockwise(lonLat);
	if (ringArea2(ring) === 0) throw new DrawGeometryError('The outline encloses no area once converted to longitude/latitude.');
	return { type: 'Polygon', coordinates: [ring] };
}
