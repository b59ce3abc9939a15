import { describe, expect, it } from 'vitest';
import { computeZones, EngineInputError, zoneGrid } from '../../../src/lib/engine';
import { gridFrom } from './grids';

describe('zoneGrid(grid, cols, rows)', () => {
	it('zoneGrid(7 × 5 grid, 2, 2) labels Z1..Z4 row-major from the north-west, edges on cell edges', () => {
		const g = gridFrom(7, 5, 10, () => 1);
		const z = zoneGrid(g, 2, 2);
		expect(z.ids).toEqual(['Z1', 'Z2', 'Z3', 'Z4']);
		const rows: string[] = [];
		for (let r = 0; r < 5; r++) rows.push(Array.from(z.cellZone.subarray(r * 7, r * 7 + 7)).join(''));
		expect(rows).toEqual(['0000111', '0000111', '0000111', '2222333', '2222333']);
	});

	it('zoneGrid(…, 0 cols) throws EngineInputError', () => {
		expect(() => zoneGrid(gridFrom(4, 4, 1, () => 1), 0, 1)).toThrow(EngineInputError);
	});
});

describe('computeZones(grid, k, seed)', () => {
	it('computeZones(two blobs, 2) puts each blob in its own zone and is deterministic', () => {
		const g = gridFrom(40, 20, 10, (u, v) => Math.exp(-((u - 8) ** 2 + (v - 10) ** 2) / 8) + Math.exp(-((u - 32) ** 2 + (v - 10) ** 2) / 8));
		const a = computeZones(g, 2, 3);
		const b = computeZones(g, 2, 3);
		expect(a).toEqual(b);
		expect(a.ids).toEqual(['Z1', 'Z2']);
		const at = (u: number, v: number) => a.cellZone[v * 40 + u];
		expect(at(8, 10)).not.toBe(at(32, 10));
		// Each zone holds about half of the mass (the blobs are equal).
		let west = 0;
		for (let k = 0; k < g.mass.length; k++) if (a.cellZone[k] === at(8, 10)) west += g.mass[k];
		expect(west).toBeCloseTo(0.5, 3);
	});

	it('computeZones(…) leaves cells outside the study area (no mass, infeasible) in no zone', () => {
		const g = gridFrom(20, 20, 10, (u) => (u < 10 ? 1 : 0), (u) => u < 10);
		const z = computeZones(g, 3, 1);
		for (let k = 0; k < 400; k++) expect(z.cellZone[k] >= 0).toBe(k % 20 < 10);
	});

	it('computeZones(…, more zones than cells) throws EngineInputError', () => {
		expect(() => computeZones(gridFrom(2, 2, 1, () => 1), 5, 1)).toThrow(EngineInputError);
	});
});
