import type { SensorInput, WorkingGrid } from '../../../src/lib/engine';

/** A grid whose cell (r, c) carries massAt(u, v) at its centre (grid units), normalised to 1. */
export function gridFrom(
	width: number,
	height: number,
	cellSize: number,
	massAt: (u: number, v: number) => number,
	feasibleAt: (u: number, v: number) => boolean = () => true
): WorkingGrid {
	const mass = new Float64Array(width * height);
	const feasible = new Uint8Array(width * height);
	let total = 0;
	for (let r = 0; r < height; r++) {
		for (let c = 0; c < width; c++) {
			const m = massAt(c + 0.5, r + 0.5);
			mass[r * width + c] = m;
			total += m;
			feasible[r * width + c] = feasibleAt(c + 0.5, r + 0.5) ? 1 : 0;
		}
	}
	if (total > 0) for (let k = 0; k < mass.length; k++) mass[k] /= total;
	// x0 = 500000, y0 = 6000000: a UTM-like origin, so the engine is tested away from 0.
	return { crs: 'EPSG:32633', width, height, x0: 500_000, y0: 6_000_000, cellSize, mass, feasible };
}

export function uniformSquare(cellsPerSide: number, cellSize: number): WorkingGrid {
	return gridFrom(cellsPerSide, cellsPerSide, cellSize, () => 1);
}

/** World coordinates of grid point (u, v). */
export function at(grid: WorkingGrid, u: number, v: number): { x: number; y: number } {
	return { x: grid.x0 + u * grid.cellSize, y: grid.y0 - v * grid.cellSize };
}

export function sensor(grid: WorkingGrid, id: string, u: number, v: number, radius: number, extra: Partial<SensorInput> = {}): SensorInput {
	return { id, ...at(grid, u, v), radius, mobility: 'relocatable', ...extra };
}
