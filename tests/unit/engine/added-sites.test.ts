import { describe, expect, it } from 'vitest';
import { addedSites } from '../../../src/lib/engine';
import { gridFrom, at } from './grids';

describe('addedSites(grid, existing, n)', () => {
	it('puts a new sensor in the half that no existing sensor serves (k-means++ weight φ·D², Arthur & Vassilvitskii 2007)', () => {
		// Uniform mass on a 20 × 10 strip; one sensor sits in the left half. With weight ∝ D², the
		// right half (D up to 19.5 cells) carries far more weight than the left (D up to 9.5 cells).
		const grid = gridFrom(20, 10, 100, () => 1);
		const existing = [at(grid, 5, 5)];
		let right = 0;
		for (let seed = 1; seed <= 40; seed++) {
			const [site] = addedSites(grid, existing, 1, seed);
			if (site.x > grid.x0 + 10 * grid.cellSize) right++;
		}
		// The right half holds 0.876 of Σ D² here (Σ over cells of (u−5)² + (v−5)², right half over
		// all); 40 draws at p = 0.876 give fewer than 26 on the right with probability below 1e-4
		// (binomial tail). The weight rule is k-means++'s D² sampling (Arthur & Vassilvitskii 2007).
		expect(right).toBeGreaterThan(25);
	});

	it('never draws a cell without mass or an infeasible one, and lands on cell centres', () => {
		const grid = gridFrom(12, 12, 50, (u) => (u < 6 ? 1 : 0), (u, v) => v > 2);
		const sites = addedSites(grid, [], 5, 7);
		expect(sites).toHaveLength(5);
		for (const s of sites) {
			const u = (s.x - grid.x0) / grid.cellSize;
			const v = (grid.y0 - s.y) / grid.cellSize;
			expect(u % 1).toBeCloseTo(0.5, 9);
			expect(v % 1).toBeCloseTo(0.5, 9);
			expect(u).toBeLessThan(6);
			expect(v).toBeGreaterThan(2);
		}
	});

	it('is deterministic for a seed, and refuses a negative count', () => {
		const grid = gridFrom(8, 8, 10, (u, v) => u + v);
		expect(addedSites(grid, [], 3, 4)).toEqual(addedSites(grid, [], 3, 4));
		expect(addedSites(grid, [], 0)).toEqual([]);
		expect(() => addedSites(grid, [], -1)).toThrow(RangeError);
	});
});
