/**
 * Scanline rasterisation of polygons onto a working grid (pure).
 *
 * A cell is inside when its centre is inside by the even-odd rule over all rings of a feature, so a
 * feature's rings may be given as one flat list: exterior rings, holes and the parts of a
 * multipolygon alike (valid GeoJSON parts never overlap). Coordinates are working-CRS metres.
 */
import type { ZoneMap } from './types';

export type Ring = ReadonlyArray<readonly [number, number]>;

/** The geometry of a grid (see types.ts for the convention). */
export interface GridGeometry {
	width: number;
	height: number;
	x0: number;
	y0: number;
	cellSize: number;
}

/**
 * For each row, the sorted x positions where the rings' edges cross the row's centre line,
 * as a CSR structure: crossings of row r are xs[start[r] .. start[r+1]).
 */
function rowCrossings(grid: GridGeometry, rings: readonly Ring[]): { start: Int32Array; xs: Float64Array } {
	const { height, y0, cellSize } = grid;
	const counts = new Int32Array(height + 1);
	const rowSpan = (ya: number, yb: number): [number, number] => {
		// rows whose centre y = y0 - (r + 0.5)·cs lies in [min, max)
		const lo = Math.min(ya, yb);
		const hi = Math.max(ya, yb);
		// One row more on each side: `covers` below decides exactly, while this division may round
		// a vertex lying on a centre line to the wrong side (an edge would then lose its crossing).
		const rFirst = Math.max(0, Math.ceil((y0 - hi) / cellSize - 0.5) - 1);
		const rLast = Math.min(height - 1, Math.floor((y0 - lo) / cellSize - 0.5) + 1);
		return [rFirst, rLast];
	};
	const forEachEdge = (fn: (xa: number, ya: number, xb: number, yb: number) => void) => {
		for (const ring of rings) {
			const n = ring.length;
			if (n < 3) continue;
			for (let i = 0; i < n; i++) {
				const a = ring[i];
				const b = ring[(i + 1) % n];
				if (a[1] === b[1]) continue;
				fn(a[0], a[1], b[0], b[1]);
			}
		}
	};
	// Half-open rule on y (an edge covers centre lines with min ≤ y < max) so shared vertices count once.
	const covers = (y: number, ya: number, yb: number) => (ya <= y) !== (yb <= y);
	forEachEdge((_xa, ya, _xb, yb) => {
		const [r0, r1] = rowSpan(ya, yb);
		for (let r = r0; r <= r1; r++) {
			if (covers(y0 - (r + 0.5) * cellSize, ya, yb)) counts[r + 1]++;
		}
	});
	const start = new Int32Array(height + 1);
	for (let r = 0; r < height; r++) start[r + 1] = start[r] + counts[r + 1];
	const xs = new Float64Array(start[height]);
	const fill = start.slice(0, height);
	forEachEdge((xa, ya, xb, yb) => {
		const [r0, r1] = rowSpan(ya, yb);
		for (let r = r0; r <= r1; r++) {
			const y = y0 - (r + 0.5) * cellSize;
			if (covers(y, ya, yb)) xs[fill[r]++] = xa + ((y - ya) * (xb - xa)) / (yb - ya);
		}
	});
	for (let r = 0; r < height; r++) xs.subarray(start[r], start[r + 1]).sort();
	return { start, xs };
}

/** Call fn(r, cFirst, cLast) for every run of cells whose centres are inside the rings. */
function forEachRun(grid: GridGeometry, rings: readonly Ring[], fn: (r: number, c0: number, c1: number) => void): void {
	const { width, height, x0, cellSize } = grid;
	const { start, xs } = rowCrossings(grid, rings);
	for (let r = 0; r < height; r++) {
		for (let k = start[r]; k + 1 < start[r + 1]; k += 2) {
			// centres x0 + (c + 0.5)·cs in [xa, xb)
			const c0 = Math.max(0, Math.ceil((xs[k] - x0) / cellSize - 0.5));
			const c1 = Math.min(width - 1, Math.ceil((xs[k + 1] - x0) / cellSize - 0.5) - 1);
			if (c1 >= c0) fn(r, c0, c1);
		}
	}
}

function checkGrid(grid: GridGeometry): void {
	if (!(Number.isInteger(grid.width) && grid.width >= 0 && Number.isInteger(grid.height) && grid.height >= 0)) {
		throw new RangeError('rasterize: width and height must be non-negative integers');
	}
	if (!(grid.cellSize > 0)) throw new RangeError('rasterize: cellSize must be positive');
}

/** A 0/1 mask (row-major) of the cells whose centres lie inside the rings (even-odd rule). */
export function rasterizeRings(grid: GridGeometry, rings: readonly Ring[]): Uint8Array {
	checkGrid(grid);
	const mask = new Uint8Array(grid.width * grid.height);
	forEachRun(grid, rings, (r, c0, c1) => mask.fill(1, r * grid.width + c0, r * grid.width + c1 + 1));
	return mask;
}

/**
 * A ZoneMap from zone features. Where features overlap the first one listed keeps the cell.
 * Ids must be unique.
 */
export function rasterizeZones(grid: GridGeometry, features: ReadonlyArray<{ id: string; rings: readonly Ring[] }>): ZoneMap {
	checkGrid(grid);
	const ids = features.map((f) => f.id);
	if (new Set(ids).size !== ids.length) throw new RangeError('rasterizeZones: zone ids must be unique');
	const cellZone = new Int32Array(grid.width * grid.height).fill(-1);
	features.forEach((f, z) => {
		forEachRun(grid, f.rings, (r, c0, c1) => {
			const base = r * grid.width;
			for (let c = c0; c <= c1; c++) if (cellZone[base + c] === -1) cellZone[base + c] = z;
		});
	});
	return { ids, cellZone };
}
