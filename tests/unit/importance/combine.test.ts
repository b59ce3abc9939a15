import { describe, expect, it } from 'vitest';
import { alignToGrid, combineLayers, ImportanceError, type GridBand, type GridSpec } from '../../../src/lib/importance';

const g22: GridSpec = { epsg: 32633, width: 2, height: 2, x0: 500_000, y0: 6_000_000, dx: 100, dy: 100 };
const bandOf = (data: number[], grid: GridSpec = g22, nodata: number | null = -9999): GridBand => ({ grid, data: Float32Array.from(data), nodata });

describe('combineLayers', () => {
	it('weighted sum of min–max scaled layers, weights normalised (hand-computed)', () => {
		// moisture inverted: [0.1,0.2,0.3,0.5] → max−v = [0.4,0.3,0.2,0] → scaled [1,0.75,0.5,0]
		// ndvi identity:    [0,0.5,1,1]        → scaled [0,0.5,1,1]
		// weights 3 and 1 → 0.75·a + 0.25·b = [0.75, 0.6875, 0.625, 0.25]
		const out = combineLayers(
			{ layers: [{ layerId: 'm', transform: 'invert', weight: 3 }, { layerId: 'n', transform: 'identity', weight: 1 }] },
			{ m: bandOf([0.1, 0.2, 0.3, 0.5]), n: bandOf([0, 0.5, 1, 1]) }
		);
		expect(Array.from(out.data).map((v) => +v.toFixed(6))).toEqual([0.75, 0.6875, 0.625, 0.25]);
		expect(out.validCount).toBe(4);
		expect(out.grid).toEqual(g22);
	});

	it('scaling weights by a constant changes nothing (normalisation)', () => {
		const bands = new Map([['m', bandOf([1, 2, 3, 4])], ['n', bandOf([4, 1, 3, 2])]]);
		const a = combineLayers({ layers: [{ layerId: 'm', transform: 'identity', weight: 1 }, { layerId: 'n', transform: 'identity', weight: 2 }] }, bands);
		const b = combineLayers({ layers: [{ layerId: 'm', transform: 'identity', weight: 10 }, { layerId: 'n', transform: 'identity', weight: 20 }] }, bands);
		expect(Array.from(a.data)).toEqual(Array.from(b.data));
	});

	it('nodata in any input layer is nodata (NaN) in the importance', () => {
		const out = combineLayers(
			{ layers: [{ layerId: 'm', transform: 'minmax', weight: 1 }, { layerId: 'n', transform: 'minmax', weight: 1 }] },
			{ m: bandOf([1, -9999, 3, 4]), n: bandOf([1, 2, NaN, 4]) }
		);
		expect(out.data[1]).toBeNaN();
		expect(out.data[2]).toBeNaN();
		expect(out.data[0]).toBe(0);
		expect(out.data[3]).toBe(1);
		expect(out.validCount).toBe(2);
	});

	it('band with soft edges feeds into the sum: 0.35 is halfway down the 0.1 ramp above hi = 0.3', () => {
		// Values away from the thresholds: Float32 storage turns 0.3 into 0.30000001, just above hi.
		const out = combineLayers({ layers: [{ layerId: 'm', transform: 'band', weight: 1, params: { lo: 0.2, hi: 0.3, soft: 0.1 } }] }, { m: bandOf([0.05, 0.25, 0.28, 0.35]) });
		expect(Array.from(out.data).map((v) => +v.toFixed(5))).toEqual([0, 1, 1, 0.5]);
	});

	it('a band no cell falls into contributes 0, not a stretched constant', () => {
		// m in band → 1 everywhere... n has no cell in 5..6 → 0; weights 1:1 → 0.5 everywhere
		const out = combineLayers(
			{ layers: [{ layerId: 'm', transform: 'band', weight: 1, params: { lo: 0, hi: 10 } }, { layerId: 'n', transform: 'band', weight: 1, params: { lo: 5, hi: 6 } }] },
			{ m: bandOf([1, 2, 3, 4]), n: bandOf([1, 2, 3, 4]) }
		);
		expect(Array.from(out.data)).toEqual([0.5, 0.5, 0.5, 0.5]);
	});

	it('variability is scaled by its maximum: a flat field contributes 0, the most variable cell 1', () => {
		const g: GridSpec = { ...g22, width: 3, height: 1 };
		const flat = combineLayers({ layers: [{ layerId: 'f', transform: 'variability', weight: 1, params: { distanceM: 100 } }] }, { f: bandOf([2, 2, 2], g) });
		expect(Array.from(flat.data)).toEqual([0, 0, 0]);
		// [0, 0, 3] with ±1 cell: std{0,0}=0, std{0,0,3}=sqrt(2), std{0,3}=1.5 → /1.5 → [0, 0.9428, 1]
		const v = combineLayers({ layers: [{ layerId: 'f', transform: 'variability', weight: 1, params: { distanceM: 100 } }] }, { f: bandOf([0, 0, 3], g) });
		expect(Array.from(v.data).map((x) => +x.toFixed(4))).toEqual([0, +(Math.sqrt(2) / 1.5).toFixed(4), 1]);
	});

	it('refuses a missing layer, mismatched grids and an invalid recipe', () => {
		expect(() => combineLayers({ layers: [{ layerId: 'x', transform: 'identity', weight: 1 }] }, {})).toThrow(/Layer x .*not available/);
		const other = { ...g22, x0: g22.x0 + 50 };
		expect(() =>
			combineLayers({ layers: [{ layerId: 'a', transform: 'identity', weight: 1 }, { layerId: 'b', transform: 'identity', weight: 1 }] }, { a: bandOf([1, 2, 3, 4]), b: bandOf([1, 2, 3, 4], other) })
		).toThrow(/not on the grid .*alignToGrid/);
		expect(() => combineLayers({ layers: [{ layerId: 'a', transform: 'identity', weight: 0 }] }, { a: bandOf([1, 2, 3, 4]) })).toThrow(ImportanceError);
	});

	it('does not read inherited properties as layers', () => {
		expect(() => combineLayers({ layers: [{ layerId: 'toString', transform: 'identity', weight: 1 }] }, {})).toThrow(ImportanceError);
	});
});

describe('alignToGrid (nearest neighbour)', () => {
	it('upsamples a 2×2 grid of 100 m cells onto a 4×4 grid of 50 m cells', () => {
		const target: GridSpec = { ...g22, width: 4, height: 4, dx: 50, dy: 50 };
		const out = alignToGrid(bandOf([1, 2, 3, 4]), target);
		expect(Array.from(out.data)).toEqual([1, 1, 2, 2, 1, 1, 2, 2, 3, 3, 4, 4, 3, 3, 4, 4]);
		expect(out.grid).toEqual(target);
	});
	it('cells whose centre falls outside the source or on source nodata become NaN', () => {
		// target shifted half a source cell east and extended: 3×2 cells of 100 m starting at x0+50
		const target: GridSpec = { ...g22, width: 3, height: 2, x0: g22.x0 + 50 };
		const out = alignToGrid(bandOf([1, -9999, 3, 4]), target);
		// centres at x0+100 (→ col 1), x0+200 (→ col 2: outside), x0+300 (outside)
		expect(Array.from(out.data)).toEqual([NaN, NaN, NaN, 4, NaN, NaN]);
	});
	it('downsamples by picking the cell under each target centre', () => {
		const g44: GridSpec = { ...g22, width: 4, height: 4, dx: 50, dy: 50 };
		const src = bandOf(Array.from({ length: 16 }, (_, i) => i), g44);
		const out = alignToGrid(src, g22);
		// 100 m target centres at 50 m, 150 m from the corner → source cols/rows 1 and 3
		expect(Array.from(out.data)).toEqual([5, 7, 13, 15]);
	});
	it('refuses a different CRS with a message naming both', () => {
		expect(() => alignToGrid(bandOf([1, 2, 3, 4]), { ...g22, epsg: 4326 })).toThrow('Cannot align a layer in EPSG:32633 to a grid in EPSG:4326');
	});
});
