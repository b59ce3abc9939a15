import { Delaunay } from 'd3-delaunay';

/**
 * Voronoi cells of the sensors, clipped to the raster [0, width] x [0, height] (grid units).
 * Each cell is a convex ring as a flat open list [u0, v0, u1, v1, ...] (the last vertex is not
 * a repeat of the first; consecutive duplicates may occur), or null when the sensor
 * owns no part of the raster (it stands outside it, behind others) or coincides with an
 * earlier sensor (the first of coincident sensors owns the cell, as d3-delaunay does).
 *
 * Collinear sensors (every sensor within 1e-9 of the extent from one line; always the case
 * for two) are built here as parallel strips: the box clipped by the perpendicular bisectors
 * of neighbours along the line. d3-delaunay jitters collinear input and, with close
 * neighbours on the line, was seen to return cells that miss their own sensor; the strips are
 * exact. Everything else goes through d3-delaunay's Voronoi.
 */
export function voronoiCells(
	pu: Float64Array,
	pv: Float64Array,
	width: number,
	height: number
): (number[] | null)[] {
	const n = pu.length;
	if (n === 0) return [];
	const line = collinearLine(pu, pv);
	if (line) return stripCells(pu, pv, width, height, line);
	const coords = new Float64Array(2 * n);
	for (let i = 0; i < n; i++) {
		coords[2 * i] = pu[i];
		coords[2 * i + 1] = pv[i];
	}
	// A fresh array: d3-delaunay may jitter the array it is given in place.
	const delaunay = new Delaunay(coords);
	if ((delaunay as unknown as { collinear?: Int32Array }).collinear) {
		// d3 judged the set collinear with its own absolute threshold: use strips along the
		// line through the two extreme points.
		return stripCells(pu, pv, width, height, extremeLine(pu, pv));
	}
	const voronoi = delaunay.voronoi([0, 0, width, height]);
	// d3-delaunay 6.0.6 (pinned) computes each clipped cell as a flat array in _clip(i), which
	// cellPolygon(i) then copies into [x, y] pairs; reading the flat array directly saves that
	// allocation per cell and iteration. Falls back to cellPolygon if the method is absent.
	const clip = (voronoi as unknown as { _clip?: (i: number) => number[] | null })._clip;
	const cells: (number[] | null)[] = new Array(n);
	for (let i = 0; i < n; i++) {
		let ring: number[] | null;
		if (typeof clip === 'function') {
			ring = clip.call(voronoi, i);
		} else {
			const poly = voronoi.cellPolygon(i);
			ring = poly ? poly.flat() : null;
		}
		cells[i] = ring && ring.length >= 6 ? ring : null;
	}
	return cells;
}

interface Line {
	au: number;
	av: number;
	du: number;
	dv: number;
}

/** The line through the first sensor and the one farthest from it (unit direction). */
function extremeLine(pu: Float64Array, pv: Float64Array): Line {
	const n = pu.length;
	let far = 0;
	let farD2 = -1;
	for (let i = 0; i < n; i++) {
		const d2 = (pu[i] - pu[0]) ** 2 + (pv[i] - pv[0]) ** 2;
		if (d2 > farD2) {
			farD2 = d2;
			far = i;
		}
	}
	const len = Math.sqrt(farD2);
	if (len === 0) return { au: pu[0], av: pv[0], du: 1, dv: 0 };
	return { au: pu[0], av: pv[0], du: (pu[far] - pu[0]) / len, dv: (pv[far] - pv[0]) / len };
}

function collinearLine(pu: Float64Array, pv: Float64Array): Line | null {
	const n = pu.length;
	if (n <= 2) return extremeLine(pu, pv);
	const line = extremeLine(pu, pv);
	let extent = 0;
	for (let i = 0; i < n; i++) {
		extent = Math.max(extent, Math.abs((pu[i] - line.au) * line.du + (pv[i] - line.av) * line.dv));
	}
	const tol = 1e-9 * Math.max(1, extent);
	for (let i = 0; i < n; i++) {
		const off = (pu[i] - line.au) * -line.dv + (pv[i] - line.av) * line.du;
		if (Math.abs(off) > tol) return null;
	}
	return line;
}

function stripCells(
	pu: Float64Array,
	pv: Float64Array,
	width: number,
	height: number,
	line: Line
): (number[] | null)[] {
	const n = pu.length;
	const t = new Float64Array(n);
	for (let i = 0; i < n; i++) t[i] = (pu[i] - line.au) * line.du + (pv[i] - line.av) * line.dv;
	const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => t[a] - t[b] || a - b);
	const cells: (number[] | null)[] = new Array(n).fill(null);
	// Group coincident sensors: the first index of a group owns the strip.
	const owners: number[] = [];
	for (const i of order) {
		const last = owners[owners.length - 1];
		if (last !== undefined && pu[last] === pu[i] && pv[last] === pv[i]) {
			if (i < last) owners[owners.length - 1] = i;
			continue;
		}
		owners.push(i);
	}
	const box = [
		[0, 0],
		[width, 0],
		[width, height],
		[0, height]
	];
	for (let k = 0; k < owners.length; k++) {
		const i = owners[k];
		let poly: number[][] = box;
		if (k > 0) poly = clipCloserTo(poly, pu[i], pv[i], pu[owners[k - 1]], pv[owners[k - 1]]);
		if (k < owners.length - 1) poly = clipCloserTo(poly, pu[i], pv[i], pu[owners[k + 1]], pv[owners[k + 1]]);
		if (poly.length >= 3) cells[i] = poly.flat();
	}
	return cells;
}

/**
 * Sutherland–Hodgman clip of a convex polygon (open ring) to the half-plane of points at
 * least as close to (au, av) as to (bu, bv).
 */
export function clipCloserTo(poly: number[][], au: number, av: number, bu: number, bv: number): number[][] {
	const nu = bu - au;
	const nv = bv - av;
	const mu = (au + bu) / 2;
	const mv = (av + bv) / 2;
	const side = (p: number[]) => (p[0] - mu) * nu + (p[1] - mv) * nv; // <= 0: closer to a
	const out: number[][] = [];
	for (let k = 0; k < poly.length; k++) {
		const p = poly[k];
		const q = poly[(k + 1) % poly.length];
		const sp = side(p);
		const sq = side(q);
		if (sp <= 0) out.push(p);
		if ((sp < 0 && sq > 0) || (sp > 0 && sq < 0)) {
			const f = sp / (sp - sq);
			out.push([p[0] + f * (q[0] - p[0]), p[1] + f * (q[1] - p[1])]);
		}
	}
	return out;
}
