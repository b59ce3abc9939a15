import { cellMoments, forEachOwnedRun, rowScratch } from './cell-moments';
import { EngineInputError } from './errors';
import { rowPrefixSums } from './prefix-sums';
import { kMeansPlusPlusSeeds } from './seeding';
import type { WorkingGrid, ZoneMap } from './types';

/**
 * A regular cols × rows grid of zones over the raster extent. Ids "Z1", "Z2", … in row-major
 * order from the north-west corner (Z1 is the north-west zone, Z{cols} the north-east one).
 * Cell (r, c) belongs to zone floor(r·rows/height)·cols + floor(c·cols/width), so zone edges
 * fall on cell edges and the zones differ in size by at most one cell per axis.
 */
export function zoneGrid(grid: WorkingGrid, cols: number, rows: number): ZoneMap {
	const { width, height } = grid;
	if (!(Number.isInteger(cols) && cols >= 1 && cols <= width)) {
		throw new EngineInputError('cols', `must be an integer from 1 to the grid width ${width}, got ${cols}`);
	}
	if (!(Number.isInteger(rows) && rows >= 1 && rows <= height)) {
		throw new EngineInputError('rows', `must be an integer from 1 to the grid height ${height}, got ${rows}`);
	}
	const ids = Array.from({ length: cols * rows }, (_, k) => `Z${k + 1}`);
	const cellZone = new Int32Array(width * height);
	for (let r = 0; r < height; r++) {
		const zr = Math.floor((r * rows) / height);
		for (let c = 0; c < width; c++) cellZone[r * width + c] = zr * cols + Math.floor((c * cols) / width);
	}
	return { ids, cellZone };
}

/**
 * K zones computed from the importance: weighted k-means on the cell centres (k-means++
 * seeding from `seed`, then up to 100 Lloyd iterations, stopping when the centres move less
 * than 0.01 cell), then every cell that is feasible or carries mass is labelled with its
 * nearest centre; cells that are neither (outside the study area) get -1. Ids "Z1".."ZK" in
 * the order of the centres sorted north to south, then west to east, so labels do not depend
 * on the seeding order. Each zone is convex (a Voronoi cell) clipped to the study area.
 */
export function computeZones(grid: WorkingGrid, k: number, seed = 1): ZoneMap {
	const { width, height } = grid;
	const cells = width * height;
	if (!(Number.isInteger(k) && k >= 1)) throw new EngineInputError('k', `must be an integer >= 1, got ${k}`);
	let total = 0;
	let usable = 0;
	for (let idx = 0; idx < cells; idx++) {
		total += grid.mass[idx];
		if (grid.mass[idx] > 0 || grid.feasible[idx]) usable++;
	}
	if (usable < k) throw new EngineInputError('k', `${k} zones asked for, but only ${usable} cells are in the study area`);
	const mass = new Float64Array(cells);
	// With no importance at all, zones split the study area evenly.
	for (let idx = 0; idx < cells; idx++) {
		const inArea = grid.mass[idx] > 0 || grid.feasible[idx] ? 1 : 0;
		mass[idx] = total > 0 ? grid.mass[idx] / total : inArea;
	}
	const inArea = new Uint8Array(cells);
	for (let idx = 0; idx < cells; idx++) inArea[idx] = grid.mass[idx] > 0 || grid.feasible[idx] ? 1 : 0;
	const seeds = kMeansPlusPlusSeeds(mass, inArea, width, height, k, seed);
	let pu = seeds.u;
	let pv = seeds.v;
	const prefix = rowPrefixSums(mass, width, height);
	const scratch = rowScratch(height);
	for (let it = 0; it < 100; it++) {
		const m = cellMoments(prefix, pu, pv, null, scratch);
		const nu = pu.slice();
		const nv = pv.slice();
		let move = 0;
		for (let i = 0; i < k; i++) {
			if (m.mass[i] > 0) {
				nu[i] = m.su[i] / m.mass[i];
				nv[i] = m.sv[i] / m.mass[i];
			}
			move = Math.max(move, Math.hypot(nu[i] - pu[i], nv[i] - pv[i]));
		}
		pu = nu;
		pv = nv;
		if (move < 0.01) break;
	}
	const order = Array.from({ length: k }, (_, i) => i).sort((a, b) => pv[a] - pv[b] || pu[a] - pu[b] || a - b);
	const rank = new Int32Array(k);
	order.forEach((i, r) => (rank[i] = r));
	const cellZone = new Int32Array(cells).fill(-1);
	forEachOwnedRun(width, height, pu, pv, (r, c0, c1, i) => {
		for (let c = c0; c < c1; c++) if (inArea[r * width + c]) cellZone[r * width + c] = rank[i];
	});
	return { ids: Array.from({ length: k }, (_, z) => `Z${z + 1}`), cellZone };
}
