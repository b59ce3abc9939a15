/**
 * Visiting order for a field crew: nearest-neighbour construction, then 2-opt and Or-opt
 * (moving runs of 1–3 sites elsewhere, either way round) until neither shortens the route. Planar lengths (working-CRS metres) by default; any symmetric
 * distance may be supplied (e.g. for published test instances).
 */

export type Point = readonly [number, number];
export type Distance = (a: Point, b: Point) => number;

export interface RouteOptions {
	/** Return to the start at the end (a closed tour); default false (the crew ends at the last site). */
	closed?: boolean;
	/** Distance between two points; default planar Euclidean. */
	distance?: Distance;
}

export interface Route {
	/** Indices into points, in visiting order. */
	order: number[];
	/** Length of the route (from start, through all points, and back if closed). */
	length: number;
}

const euclid: Distance = (a, b) => Math.hypot(a[0] - b[0], a[1] - b[1]);

/**
 * Order in which to visit `points` starting from `start` (the depot or the crew's position; when
 * null the route starts at points[0]).
 */
export function routeOrder(start: Point | null, points: readonly Point[], opts: RouteOptions = {}): Route {
	const dist = opts.distance ?? euclid;
	const closed = opts.closed ?? false;
	for (const p of points) if (!Number.isFinite(p[0]) || !Number.isFinite(p[1])) throw new RangeError('routeOrder: positions must be finite');
	if (points.length === 0) return { order: [], length: 0 };

	// Nodes: 0 = start (a given start, or points[0]); the rest follow.
	const nodes: Point[] = start ? [start, ...points] : [...points];
	const offset = start ? 1 : 0;
	const n = nodes.length;
	const d = new Float64Array(n * n);
	for (let i = 0; i < n; i++)
		for (let j = i + 1; j < n; j++) {
			const v = dist(nodes[i], nodes[j]);
			d[i * n + j] = v;
			d[j * n + i] = v;
		}

	// Nearest neighbour from node 0 (ties: lowest index, so the result is deterministic).
	const tour = new Int32Array(n);
	const used = new Uint8Array(n);
	used[0] = 1;
	for (let k = 1; k < n; k++) {
		const last = tour[k - 1];
		let best = -1;
		let bestD = Infinity;
		for (let j = 0; j < n; j++) {
			if (!used[j] && d[last * n + j] < bestD) {
				bestD = d[last * n + j];
				best = j;
			}
		}
		tour[k] = best;
		used[best] = 1;
	}

	const eps = 1e-9;
	const D = (a: number, b: number) => d[a * n + b];
	let improved = true;
	while (improved) {
		improved = twoOpt(tour, n, closed, D, eps);
		if (orOpt(tour, n, closed, D, eps)) improved = true;
	}

	let length = 0;
	for (let k = 1; k < n; k++) length += d[tour[k - 1] * n + tour[k]];
	if (closed && n > 1) length += d[tour[n - 1] * n + tour[0]];
	const order = Array.from(tour)
		.filter((v) => v >= offset)
		.map((v) => v - offset);
	return { order, length };
}

/** Length of visiting points in the given order from start (planar unless a distance is given). */
export function routeLength(start: Point | null, points: readonly Point[], order: readonly number[], opts: RouteOptions = {}): number {
	const dist = opts.distance ?? euclid;
	const seq: Point[] = [...(start ? [start] : []), ...order.map((i) => points[i])];
	let total = 0;
	for (let k = 1; k < seq.length; k++) total += dist(seq[k - 1], seq[k]);
	if (opts.closed && seq.length > 1) total += dist(seq[seq.length - 1], seq[0]);
	return total;
}

/** 2-opt passes (reverse tour[i..j]) until none helps; node 0 stays first. True if anything changed. */
function twoOpt(tour: Int32Array, n: number, closed: boolean, D: (a: number, b: number) => number, eps: number): boolean {
	let changed = false;
	let improved = true;
	while (improved) {
		improved = false;
		for (let i = 1; i < n - 1; i++) {
			for (let j = i + 1; j < n; j++) {
				const a = tour[i - 1];
				const b = tour[i];
				const c = tour[j];
				const hasNext = j + 1 < n || closed;
				const e = j + 1 < n ? tour[j + 1] : tour[0];
				const before = D(a, b) + (hasNext ? D(c, e) : 0);
				const after = D(a, c) + (hasNext ? D(b, e) : 0);
				if (after < before - eps) {
					for (let p = i, q = j; p < q; p++, q--) {
						const t = tour[p];
						tour[p] = tour[q];
						tour[q] = t;
					}
					improved = true;
					changed = true;
				}
			}
		}
	}
	return changed;
}

/** One Or-opt pass: move a run of 1–3 nodes (not node 0) to a better place, possibly reversed. */
function orOpt(tour: Int32Array, n: number, closed: boolean, D: (a: number, b: number) => number, eps: number): boolean {
	let changed = false;
	for (let len = 1; len <= 3; len++) {
		for (let i = 1; i + len - 1 < n; i++) {
			const j = i + len - 1;
			const prev = tour[i - 1];
			const hasNext = j + 1 < n || closed;
			const next = j + 1 < n ? tour[j + 1] : tour[0];
			const first = tour[i];
			const last = tour[j];
			const gain = D(prev, first) + (hasNext ? D(last, next) - D(prev, next) : 0);
			let bestDelta = -eps;
			let bestP = -1;
			let bestRev = false;
			for (let p = 0; p < n; p++) {
				if (p >= i - 1 && p <= j) continue; // insertion edge (tour[p], tour[p+1]) must lie outside the run
				const a = tour[p];
				const hasB = p + 1 < n || closed;
				const b = p + 1 < n ? tour[p + 1] : tour[0];
				const base = hasB ? D(a, b) : 0;
				const fwd = D(a, first) + (hasB ? D(last, b) : 0) - base;
				const rev = D(a, last) + (hasB ? D(first, b) : 0) - base;
				if (fwd - gain < bestDelta) { bestDelta = fwd - gain; bestP = p; bestRev = false; }
				if (rev - gain < bestDelta) { bestDelta = rev - gain; bestP = p; bestRev = true; }
			}
			if (bestP >= 0) {
				const run = Array.from(tour.subarray(i, j + 1));
				if (bestRev) run.reverse();
				const rest = [...Array.from(tour.subarray(0, i)), ...Array.from(tour.subarray(j + 1))];
				const anchor = tour[bestP];
				const at = rest.indexOf(anchor) + 1;
				const next2 = [...rest.slice(0, at), ...run, ...rest.slice(at)];
				tour.set(next2);
				changed = true;
			}
		}
	}
	return changed;
}
