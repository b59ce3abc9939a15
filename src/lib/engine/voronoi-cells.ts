import { Delaunay } from 'd3-delaunay';

/**
 * Sensors closer than this (grid units, i.e. 1e-5 of a cell) count as coincident: the first
 * owns the cell, the others get none (and place() separates them). Below about 1e-7 cells
 * d3-delaunay was seen to return overlapping or missing cells for such pairs.
 */
export const COINCIDENT_DISTANCE = 1e-5;

/**
 * Voronoi cells of the sensors, clipped to the raster [0, width] x [0, height] (grid units).
 * Each cell is a convex ring as a flat open list [u0, v0, u1, v1, ...] (the last vertex is not
 * a repeat of the first; consecutive duplicates may occur), or null when the sensor owns no
 * part of the raster (it stands outside it, behind others) or coincides with an earlier one.
 *
 * - Collinear sensors (every sensor within 1e-9 of the extent from one line; always the case
 *   for two) are built here as parallel strips: the box clipped by the perpendicular bisectors
 *   of neighbours along the line. d3-delaunay jitters collinear input and, with close
 *   neighbours on the line, was seen to return cells that miss their own sensor.
 * - Otherwise d3-delaunay's Voronoi, checked: the cells must tile the box (areas sum to
 *   width × height) and each sensor inside the box must lie in its own cell. Nearly collinear
 *   sets (offsets ~1e-8 of the extent) were seen to fail that; they are then built by clipping
 *   the box with the bisector of every other sensor (O(N²), exact, only on that rare path).
 */
export function voronoiCells(
	pu: Float64Array,
	pv: Float64Array,
	width: number,
	height: number
): (number[] | null)[] {
	const n = pu.length;
	if (n === 0) return [];
	const owners = distinctSensors(pu, pv);
	const cells: (number[] | null)[] = new Array(n).fill(null);
	const m = owners.length;
	const qu = new Float64Array(m);
	const qv = new Float64Array(m);
	for (let k = 0; k < m; k++) {
		qu[k] = pu[owners[k]];
		qv[k] = pv[owners[k]];
	}
	const unique = distinctCells(qu, qv, width, height);
	for (let k = 0; k < m; k++) cells[owners[k]] = unique[k];
	return cells;
}

/**
 * Indices of the sensors that are not within COINCIDENT_DISTANCE of an earlier kept one.
 * Expected O(N): kept sensors are bucketed by floor(u / COINCIDENT_DISTANCE).
 */
function distinctSensors(pu: Float64Array, pv: Float64Array): number[] {
	const n = pu.length;
	const d = COINCIDENT_DISTANCE;
	const d2 = d * d;
	const buckets = new Map<number, number[]>();
	const owners: number[] = [];
	for (let i = 0; i < n; i++) {
		const b = Math.floor(pu[i] / d);
		let dup = false;
		for (let k = b - 1; k <= b + 1 && !dup; k++) {
			const list = buckets.get(k);
			if (!list) continue;
			for (const j of list) {
				const du = pu[j] - pu[i];
				const dv = pv[j] - pv[i];
				if (du * du + dv * dv <= d2) {
					dup = true;
					break;
				}
			}
		}
		if (dup) continue;
		owners.push(i);
		const list = buckets.get(b);
		if (list) list.push(i);
		else buckets.set(b, [i]);
	}
	return owners;
}

/** Cells of sensors that are pairwise farther apart than COINCIDENT_DISTANCE. */
function distinctCells(pu: Float64Array, pv: Float64Array, width: number, height: number): (number[] | null)[] {
	const n = pu.length;
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
		// d3 judged the set collinear with its own absolute threshold.
		return halfPlaneCells(pu, pv, width, height);
	}
	const voronoi = delaunay.voronoi([0, 0, width, height]);
	// d3-delaunay 6.0.6 (pinned) computes each clipped cell as a flat array in _clip(i), which
	// cellPolygon(i) then copies into [x, y] pairs; reading the flat array directly saves that
	// allocation per cell and iteration. Falls back to cellPolygon if the method is absent.
	const clip = (voronoi as unknown as { _clip?: (i: number) => number[] | null })._clip;
	const cells: (number[] | null)[] = new Array(n);
	let area = 0;
	let sane = true;
	for (let i = 0; i < n; i++) {
		let ring: number[] | null;
		if (typeof clip === 'function') {
			ring = clip.call(voronoi, i);
		} else {
			const poly = voronoi.cellPolygon(i);
			ring = poly ? poly.flat() : null;
		}
		ring = ring && ring.length >= 6 ? ring : null;
		cells[i] = ring;
		const inside = pu[i] > 0 && pu[i] < width && pv[i] > 0 && pv[i] < height;
		if (ring) {
			area += Math.abs(ringArea(ring));
			if (inside && !containsPoint(ring, pu[i], pv[i])) sane = false;
		} else if (inside) {
			sane = false;
		}
	}
	if (!sane || Math.abs(area - width * height) > 1e-9 * width * height) return halfPlaneCells(pu, pv, width, height);
	return cells;
}

function ringArea(ring: number[]): number {
	let a = 0;
	const k = ring.length;
	for (let j = 0; j < k; j += 2) {
		const l = (j + 2) % k;
		a += ring[j] * ring[l + 1] - ring[l] * ring[j + 1];
	}
	return a / 2;
}

/** Point in convex ring (either orientation), with a little slack for points on an edge. */
function containsPoint(ring: number[], u: number, v: number): boolean {
	const k = ring.length;
	let pos = false;
	let neg = false;
	for (let j = 0; j < k; j += 2) {
		const l = (j + 2) % k;
		const ex = ring[l] - ring[j];
		const ey = ring[l + 1] - ring[j + 1];
		if (ex === 0 && ey === 0) continue;
		const cross = ex * (v - ring[j + 1]) - ey * (u - ring[j]);
		// |cross| / |edge| is the distance from the edge line: slack 1e-9 grid units.
		if (cross * cross > 1e-18 * (ex * ex + ey * ey)) {
			if (cross > 0) pos = true;
			else neg = true;
		}
	}
	return !(pos && neg);
}

/**
 * Robust fallback: each cell is the box clipped by the bisector with every other sensor,
 * nearest first, stopping once the cell lies entirely within half the distance to the next
 * sensor (no farther bisector can cut it).
 */
function halfPlaneCells(pu: Float64Array, pv: Float64Array, width: number, height: number): (number[] | null)[] {
	const n = pu.length;
	const cells: (number[] | null)[] = new Array(n).fill(null);
	const others = Array.from({ length: n }, (_, j) => j);
	const d2 = new Float64Array(n);
	for (let i = 0; i < n; i++) {
		for (let j = 0; j < n; j++) d2[j] = (pu[j] - pu[i]) ** 2 + (pv[j] - pv[i]) ** 2;
		others.sort((a, b) => d2[a] - d2[b] || a - b);
		let poly: number[][] = [
			[0, 0],
			[width, 0],
			[width, height],
			[0, height]
		];
		for (const j of others) {
			if (j === i) continue;
			let reach = 0;
			for (const p of poly) reach = Math.max(reach, (p[0] - pu[i]) ** 2 + (p[1] - pv[i]) ** 2);
			if (4 * reach < d2[j]) break;
			poly = clipCloserTo(poly, pu[i], pv[i], pu[j], pv[j]);
			if (poly.length < 3) break;
		}
		if (poly.length >= 3) cells[i] = poly.flat();
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
