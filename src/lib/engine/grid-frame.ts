import type { WorkingGrid } from './types';

/**
 * The engine computes in grid units: u = (x - x0) / cellSize grows with the column,
 * v = (y0 - y) / cellSize grows with the row, so cell (r, c) has its centre at
 * (u, v) = (c + 0.5, r + 0.5) and the raster covers [0, width] x [0, height].
 * This is a similarity transform (scale + reflection), so Voronoi cells, centroids and
 * nearest-sensor relations are the same in both frames; squared distances scale by cellSize².
 */
export function toU(grid: WorkingGrid, x: number): number {
	return (x - grid.x0) / grid.cellSize;
}

export function toV(grid: WorkingGrid, y: number): number {
	return (grid.y0 - y) / grid.cellSize;
}

export function toX(grid: WorkingGrid, u: number): number {
	return grid.x0 + u * grid.cellSize;
}

export function toY(grid: WorkingGrid, v: number): number {
	return grid.y0 - v * grid.cellSize;
}

/** Index of the cell containing grid point (u, v), or -1 outside the raster. */
export function cellIndexAt(width: number, height: number, u: number, v: number): number {
	if (!(u >= 0 && u < width && v >= 0 && v < height)) return -1;
	return Math.floor(v) * width + Math.floor(u);
}
