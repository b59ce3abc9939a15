/**
 * Geometry of a polygon drawn on the network map: the clicked vertices are working-CRS metres
 * (x = easting, y = northing); what the area API stores is GeoJSON in WGS 84 lon/lat (RFC 7946:
 * rings closed, exterior rings counter-clockwise). Pure functions, no Leaflet, no DOM.
 */
import proj4, { type Converter } from 'proj4';

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

/**
 * Twice the signed area of a ring by the shoelace formula (> 0 counter-clockwise in a
 * right-handed x/y or lon/lat frame). Works on open and closed rings alike.
 */
export function signedArea2(ring: readonly (readonly [number, number])[]): number {
	let a = 0;
	for (let i = 0, n = ring.length; i < n; i++) {
		const [x0, y0] = ring[i];
		const [x1, y1] = ring[(i + 1) % n];
		a += x0 * y1 - x1 * y0;
	}
	return a;
}

/** A closed, counter-clockwise copy of an open or closed ring. */
export function closedCounterClockwise(ring: readonly LonLat[]): LonLat[] {
	const open = ring.map(([x, y]) => [x, y] as LonLat);
	if (open.length > 1 && open[0][0] === open[open.length - 1][0] && open[0][1] === open[open.length - 1][1]) open.pop();
	if (signedArea2(open) < 0) open.reverse();
	return [...open, [open[0][0], open[0][1]]];
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
	if (signedArea2(pts) === 0) throw new DrawGeometryError('The points lie on one line and enclose no area; add a point off the line.');
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
	if (signedArea2(ring) === 0) throw new DrawGeometryError('The outline encloses no area once converted to longitude/latitude.');
	return { type: 'Polygon', coordinates: [ring] };
}
