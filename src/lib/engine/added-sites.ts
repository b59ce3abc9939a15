import { toX, toY } from './grid-frame';
import { kMeansPlusPlusSeeds } from './seeding';
import type { WorkingGrid } from './types';

/**
 * Starting sites for n sensors added to a network that already has some: weighted k-means++
 * continued from the existing sensors. Each cell's weight is φ·D², D the distance from its centre
 * to the nearest existing sensor, so new sensors start where importance is high and no sensor is
 * near (the first new site follows Arthur & Vassilvitskii's k-means++ rule exactly; later new
 * sites weigh D² to the existing sensors times D² to the new ones, a close and cheaper form).
 * With no existing sensors this is plain k-means++ on φ. Deterministic for a given seed; returns
 * working-CRS metres at cell centres. Pure: the grid is not modified.
 */
export function addedSites(grid: WorkingGrid, existing: ReadonlyArray<{ x: number; y: number }>, n: number, seed = 1): { x: number; y: number }[] {
	if (!Number.isInteger(n) || n < 0) throw new RangeError(`addedSites: n must be a whole number ≥ 0, not ${n}`);
	if (n === 0) return [];
	const { width, height, cellSize } = grid;
	const weight = new Float64Array(width * height);
	for (let r = 0; r < height; r++) {
		const y = grid.y0 - (r + 0.5) * cellSize;
		for (let c = 0; c < width; c++) {
			const k = r * width + c;
			const m = grid.mass[k];
			if (!(m > 0)) continue;
			if (existing.length === 0) {
				weight[k] = m;
				continue;
			}
			const x = grid.x0 + (c + 0.5) * cellSize;
			let d2 = Infinity;
			for (const s of existing) d2 = Math.min(d2, (s.x - x) ** 2 + (s.y - y) ** 2);
			weight[k] = m * (d2 / (cellSize * cellSize));
		}
	}
	const { u, v } = kMeansPlusPlusSeeds(weight, grid.feasible, width, height, n, seed);
	return Array.from(u, (uu, i) => ({ x: toX(grid, uu), y: toY(grid, v[i]) }));
}
