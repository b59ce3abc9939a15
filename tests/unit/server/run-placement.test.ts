import { describe, expect, it } from 'vitest';
import { place } from '../../../src/lib/engine';
import { EngineInputError } from '../../../src/lib/engine/errors';
import type { WorkingGrid } from '../../../src/lib/engine/types';
import { runPlacement } from '../../../src/lib/server/engine/run-placement';

function uniformGrid(n: number, cell: number): WorkingGrid {
	const mass = new Float64Array(n * n).fill(1 / (n * n));
	return { crs: 'EPSG:32632', width: n, height: n, x0: 500_000, y0: 5_800_000, cellSize: cell, mass, feasible: new Uint8Array(n * n).fill(1) };
}

describe('runPlacement (worker thread)', () => {
	it('returns the same result as place() on the main thread, and reports progress', async () => {
		const grid = uniformGrid(200, 10);
		const options = { strategy: 'lloyd' as const, count: 12, radius: 300, seed: 7, maxIterations: 20, tolerance: 0 };
		const seen: number[] = [];
		let ticks = 0;
		const timer = setInterval(() => ticks++, 1);
		const inWorker = await runPlacement(grid, null, [], options, { onIteration: (e) => seen.push(e.iteration) });
		clearInterval(timer);
		const direct = place(grid, null, [], options);
		expect(inWorker.sensors.map((s) => [s.x, s.y])).toEqual(direct.sensors.map((s) => [s.x, s.y]));
		expect(inWorker.cost).toBe(direct.cost);
		expect(seen.at(-1)).toBe(20);
		// The main thread's event loop kept running while the worker computed.
		expect(ticks).toBeGreaterThan(0);
	});

	it('rejects bad input with an EngineInputError, as place() does', async () => {
		const grid = uniformGrid(10, 10);
		await expect(runPlacement(grid, null, [], { strategy: 'lloyd' })).rejects.toBeInstanceOf(EngineInputError);
	});
});
