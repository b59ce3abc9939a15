/**
 * Plane geometry on polygons and points, in whatever plane the caller works in (WGS 84 lon/lat or a
 * working CRS in metres): the one place the app answers "is this point inside", "what box holds
 * these", "which way does this ring turn", "clip this to a rectangle", "does this outline cross
 * itself" and "where does a zone's label go".
 *
 * Built on @turf/turf (point-in-polygon, bounding box, orientation, rectangle clipping,
 * self-intersections) and polylabel (pole of inaccessibility, so labels fall inside concave zones).
 * The shoelace area stays our own: turf's `area` is geodesic (square metres on the sphere), while
 * callers here need the plain planar area of a ring in its own units.
 *
 * The engine's typed-array scanline rasteriser (src/lib/engine/rasterize.ts) is the fast path for
 * rasters and does not use this module.
 */
import { bbox as turfBbox, bboxClip, booleanClockwise, booleanPointInPolygon, kinks, multiPoint, multiPolygon, point, polygon } from '@turf/turf';
import polylabel from 'polylabel';

export type Position = [number, number];
/** A closed ring: first position = last. */
export type Ring = Position[];
/** [minX, minY, maxX, maxY]. */
export type Bounds = [number, number, number, number];

/** Twice the signed planar area of a closed ring (shoelace formula): > 0 when counter-clockwise. */
export function ringArea2(ring: readonly (readonly number[])[]): number {
	let a = 0;
	for (let i = 0; i < ring.length - 1; i++) a += ring[i][0] * ring[i + 1][1] - ring[i + 1][0] * ring[i][1];
	return a;
}

/** The ring turned counter-clockwise (`ccw`) or clockwise; the same array when it already turns so. */
export function orientRing(ring: Ring, ccw: boolean): Ring {
	return booleanClockwise(ring) === !ccw ? ring : [...ring].reverse();
}

/** A closed copy of a ring given with or without its closing position. */
export function closeRing(r: readonly (readonly number[])[]): Ring {
	const out = r.map((p) => [p[0], p[1]] as Position);
	if (out.length > 0) {
		const a = out[0];
		const b = out[out.length - 1];
		if (a[0] !== b[0] || a[1] !== b[1]) out.push([a[0], a[1]]);
	}
	return out;
}

/** Whether a point lies inside a polygon set (holes excluded; on the boundary counts as inside). */
export function pointInPolygons(p: readonly number[], polygons: readonly (readonly Ring[])[]): boolean {
	if (polygons.length === 0) return false;
	return booleanPointInPolygon(point([p[0], p[1]]), multiPolygon(polygons as Ring[][]));
}

/** The box holding every position given (points and polygons); null when there is none. */
export function boundsOf(points: readonly (readonly number[])[], polygons: readonly (readonly (readonly (readonly number[])[])[])[] = []): Bounds | null {
	const all: Position[] = points.filter((p) => Number.isFinite(p[0]) && Number.isFinite(p[1])).map((p) => [p[0], p[1]]);
	for (const poly of polygons) for (const ring of poly) for (const p of ring) if (Number.isFinite(p[0]) && Number.isFinite(p[1])) all.push([p[0], p[1]]);
	if (all.length === 0) return null;
	const [minX, minY, maxX, maxY] = turfBbox(multiPoint(all));
	return [minX, minY, maxX, maxY];
}

/** The union of boxes (nulls ignored); null when none is given. */
export function unionBounds(...all: (Bounds | null)[]): Bounds | null {
	return boundsOf(all.flatMap((b) => (b ? [[b[0], b[1]], [b[2], b[3]]] : [])));
}

/** Bounds grown by a fraction of their larger side on every side (at least `minPad` map units). */
export function padBounds(b: Bounds, fraction: number, minPad = 0): Bounds {
	const pad = Math.max(minPad, Math.max(b[2] - b[0], b[3] - b[1]) * fraction);
	return [b[0] - pad, b[1] - pad, b[2] + pad, b[3] + pad];
}

/**
 * A polygon (exterior and holes, closed rings) clipped to a rectangle; holes that vanish are
 * dropped, and an empty array means nothing of the polygon lies inside the rectangle.
 */
export function clipPolygonToRect(rings: readonly Ring[], box: Bounds): Ring[] {
	const clipped = bboxClip(polygon(rings as Ring[]), box).geometry.coordinates as Ring[];
	const minArea2 = 1e-9 * (box[2] - box[0]) * (box[3] - box[1]);
	const kept = clipped.filter((r) => r.length >= 4 && Math.abs(ringArea2(r)) > minArea2);
	// Without its exterior, a polygon is nothing.
	return kept.length > 0 && kept[0] === clipped[0] ? kept : [];
}

/** The first place where a polygon's rings cross themselves or each other; null for a simple polygon. */
export function selfIntersection(rings: readonly Ring[]): Position | null {
	const found = kinks(polygon(rings as Ring[])).features[0];
	return found ? [found.geometry.coordinates[0], found.geometry.coordinates[1]] : null;
}

/**
 * Where to write a zone's label: the pole of inaccessibility of its largest polygon (the inside
 * point farthest from any edge, polylabel), so that it falls inside concave and holed zones too.
 * `precision` is in the polygons' units. Null for no polygons.
 */
export function labelPosition(polygons: readonly (readonly Ring[])[], precision?: number): Position | null {
	let best: { area: number; rings: readonly Ring[] } | null = null;
	for (const rings of polygons) {
		if (rings.length === 0) continue;
		const area = Math.abs(ringArea2(rings[0]));
		if (!best || area > best.area) best = { area, rings };
	}
	if (!best) return null;
	const b = boundsOf([], [best.rings]);
	const step = precision ?? (b ? Math.max(b[2] - b[0], b[3] - b[1]) / 1000 : 1);
	const p = polylabel(best.rings as unknown as number[][][], step > 0 ? step : 1);
	return [p[0], p[1]];
}
