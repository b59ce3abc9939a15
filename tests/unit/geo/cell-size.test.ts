import { describe, expect, it } from 'vitest';
import { CELL_BUDGET, CellSizeError, chooseCellSize, roundUpTwoDigits } from '../../../src/lib/geo/cell-size';

// The rule under test is our own documented one (src/lib/geo/cell-size.ts); the figures below are
// worked by hand from it.
describe('chooseCellSize', () => {
	it('1/10 of the smallest radius when that is the coarsest need: 150 m over 10 km × 10 km of 5 m pixels → 15 m', () => {
		const c = chooseCellSize({ pixelSize: 5, extentWidth: 10_000, extentHeight: 10_000, smallestRadius: 150 });
		expect(c.cellSize).toBe(15);
		expect(c.rule).toBe('radius');
		expect(Math.ceil(10_000 / 15) ** 2).toBeLessThanOrEqual(CELL_BUDGET);
	});

	it('the budget over a large area: 100 km × 50 km in a million cells → √5000 m² ≈ 70.7 m, rounded up to 71 m', () => {
		const c = chooseCellSize({ pixelSize: 5, extentWidth: 100_000, extentHeight: 50_000, smallestRadius: 150 });
		expect(c.rule).toBe('budget');
		expect(c.cellSize).toBe(71);
		expect(Math.ceil(100_000 / c.cellSize) * Math.ceil(50_000 / c.cellSize)).toBeLessThanOrEqual(CELL_BUDGET);
	});

	it('never finer than the pixels: 1 km pixels keep their exact size, a request for less is raised to them', () => {
		const a = chooseCellSize({ pixelSize: 1000.5, extentWidth: 40_000, extentHeight: 30_000, smallestRadius: 150 });
		expect([a.cellSize, a.rule]).toEqual([1000.5, 'pixel']);
		const b = chooseCellSize({ pixelSize: 30, extentWidth: 6000, extentHeight: 4500, requested: 20 });
		expect([b.cellSize, b.rule, b.requested]).toEqual([30, 'pixel', 20]);
		expect(b.reason).toMatch(/never finer than the pixels/);
	});

	it('a request coarser than the pixels is kept as asked, whatever the budget says', () => {
		const c = chooseCellSize({ pixelSize: 5, extentWidth: 100_000, extentHeight: 100_000, requested: 25 });
		expect([c.cellSize, c.rule]).toEqual([25, 'requested']);
	});

	it('keeps within a small budget after rounding and whole edge cells', () => {
		for (const [w, h, budget] of [[1234, 987, 100], [10_001, 3, 7], [5, 5, 1]] as const) {
			const c = chooseCellSize({ pixelSize: 0.01, extentWidth: w, extentHeight: h, budget });
			expect(Math.ceil(w / c.cellSize) * Math.ceil(h / c.cellSize)).toBeLessThanOrEqual(budget);
		}
	});

	it('refuses nonsense with a sentence', () => {
		expect(() => chooseCellSize({ pixelSize: 0, extentWidth: 1, extentHeight: 1 })).toThrow(CellSizeError);
		expect(() => chooseCellSize({ pixelSize: 1, extentWidth: 0, extentHeight: 1 })).toThrow(/empty/);
		expect(() => chooseCellSize({ pixelSize: 1, extentWidth: 1, extentHeight: 1, requested: -3 })).toThrow(/positive/);
		expect(() => chooseCellSize({ pixelSize: 1, extentWidth: 1, extentHeight: 1, smallestRadius: 0 })).toThrow(/radius/);
	});
});

describe('roundUpTwoDigits', () => {
	it('rounds up to two significant digits', () => {
		expect([3.47, 18.01, 1234, 70.71, 15, 0.0123].map(roundUpTwoDigits)).toEqual([3.5, 19, 1300, 71, 15, 0.013]);
	});
});
