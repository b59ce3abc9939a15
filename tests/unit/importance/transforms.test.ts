import { describe, expect, it } from 'vitest';
import { band, cellSizeMetres, identity, invert, localStdDev, minmax, variability, windowCells, ImportanceError, type GridSpec } from '../../../src/lib/importance';

const f = (xs: number[]) => Float64Array.from(xs);
const grid = (width: number, height: number, cell = 10): GridSpec => ({ epsg: 32632, width, height, x0: 0, y0: height * cell, dx: cell, dy: cell });

describe('simple transforms (hand-computed)', () => {
	const v = f([0.1, 0.25, NaN, 0.4]);
	it('identity copies values and keeps nodata', () => {
		const out = identity(v);
		expect(Array.from(out)).toEqual([0.1, 0.25, NaN, 0.4]);
		expect(out).not.toBe(v);
	});
	it('invert(v) = max − v: 0.4−0.1, 0.4−0.25, nodata, 0', () => {
		const out = invert(v);
		expect(out[0]).toBeCloseTo(0.3, 12);
		expect(out[1]).toBeCloseTo(0.15, 12);
		expect(out[2]).toBeNaN();
		expect(out[3]).toBe(0);
	});
	it('minmax scales to 0..1: (0.25−0.1)/0.3 = 0.5', () => {
		const out = minmax(v);
		expect(out[0]).toBe(0);
		expect(out[1]).toBeCloseTo(0.5, 12);
		expect(out[3]).toBe(1);
		expect(out[2]).toBeNaN();
	});
	it('minmax of a constant layer is 1 on every valid cell', () => {
		expect(Array.from(minmax(f([3, 3, NaN])))).toEqual([1, 1, NaN]);
	});
	it('does not mutate its input', () => {
		const input = f([1, 2, 3]);
		invert(input);
		minmax(input);
		band(input, 1, 2);
		expect(Array.from(input)).toEqual([1, 2, 3]);
	});
});

describe('band(lo, hi, soft)', () => {
	it('hard edges: 1 inside [lo, hi] inclusive, 0 outside', () => {
		expect(Array.from(band(f([0.05, 0.1, 0.2, 0.3, 0.31, NaN]), 0.1, 0.3))).toEqual([0, 1, 1, 1, 0, NaN]);
	});
	it('soft edges ramp linearly over `soft` units on each side', () => {
		// lo=10, hi=20, soft=4: 6→0, 8→0.5, 9→0.75, 22→0.5, 24→0, 30→0
		const out = band(f([6, 8, 9, 15, 22, 24, 30]), 10, 20, 4);
		expect(Array.from(out)).toEqual([0, 0.5, 0.75, 1, 0.5, 0, 0]);
	});
	it('lo = hi selects exactly that value', () => {
		expect(Array.from(band(f([1, 2, 3]), 2, 2))).toEqual([0, 1, 0]);
	});
	it('refuses lo > hi', () => {
		expect(() => band(f([1]), 3, 2)).toThrow(ImportanceError);
	});
});

/** Brute-force population std over the clipped window: an independent oracle for the summed-area version. */
function bruteStd(values: Float64Array, w: number, h: number, rx: number, ry: number): Float64Array {
	const out = new Float64Array(w * h);
	for (let r = 0; r < h; r++)
		for (let c = 0; c < w; c++) {
			if (Number.isNaN(values[r * w + c])) {
				out[r * w + c] = NaN;
				continue;
			}
			const xs: number[] = [];
			for (let rr = Math.max(0, r - ry); rr <= Math.min(h - 1, r + ry); rr++)
				for (let cc = Math.max(0, c - rx); cc <= Math.min(w - 1, c + rx); cc++) {
					const v = values[rr * w + cc];
					if (!Number.isNaN(v)) xs.push(v);
				}
			const m = xs.reduce((a, b) => a + b, 0) / xs.length;
			out[r * w + c] = Math.sqrt(xs.reduce((a, b) => a + (b - m) ** 2, 0) / xs.length);
		}
	return out;
}

describe('localStdDev (summed-area tables)', () => {
	it('centre of a 3×3 grid holding 1..9 with a 3×3 window: sqrt((9²−1)/12) = sqrt(20/3)', () => {
		// Variance of the discrete uniform distribution on 1..n is (n²−1)/12 (standard result) [from memory].
		const out = localStdDev(f([1, 2, 3, 4, 5, 6, 7, 8, 9]), 3, 3, 1, 1);
		expect(out[4]).toBeCloseTo(Math.sqrt(20 / 3), 12);
		// corner (0,0) window is {1,2,4,5}: mean 3, deviations −2,−1,1,2 → var 10/4
		expect(out[0]).toBeCloseTo(Math.sqrt(2.5), 12);
	});
	it('a constant field has zero variability', () => {
		const out = localStdDev(new Float64Array(20).fill(0.31), 5, 4, 2, 1);
		for (const v of out) expect(v).toBeCloseTo(0, 12);
	});
	it('matches the brute-force computation on a 17×11 field with gaps and large offsets', () => {
		const w = 17;
		const h = 11;
		const v = new Float64Array(w * h);
		for (let i = 0; i < v.length; i++) v[i] = 1e6 + Math.sin(i * 0.7) * 3 + (i % 5); // big offset tests the shift
		v[3] = NaN;
		v[40] = NaN;
		v[41] = NaN;
		const fast = localStdDev(v, w, h, 3, 2);
		const slow = bruteStd(v, w, h, 3, 2);
		for (let i = 0; i < v.length; i++) {
			if (Number.isNaN(slow[i])) expect(fast[i]).toBeNaN();
			else expect(fast[i]).toBeCloseTo(slow[i], 6);
		}
	});
	it('a window holding one valid cell gives 0, nodata stays nodata', () => {
		const out = localStdDev(f([5, NaN, NaN, NaN]), 2, 2, 0, 0);
		expect(out[0]).toBe(0);
		expect(out[1]).toBeNaN();
	});
});

describe('variability(distanceM)', () => {
	it('turns metres into whole cells: 25 m on 10 m cells → ±3 cells (round(2.5) = 3), 14 m → ±1', () => {
		expect(windowCells(grid(5, 5), 25)).toEqual({ rx: 3, ry: 3 });
		expect(windowCells(grid(5, 5), 14)).toEqual({ rx: 1, ry: 1 });
	});
	it('refuses a distance shorter than half a cell', () => {
		expect(() => windowCells(grid(5, 5), 4)).toThrow(/less than half a cell/);
	});
	it('uses metres on geographic grids: 0.01° of latitude is about 1112 m', () => {
		// 1° of latitude ≈ 111.2 km on a sphere of mean radius 6371 km (2πR/360) [from memory].
		const g: GridSpec = { epsg: 4326, width: 10, height: 10, x0: 10, y0: 0.05, dx: 0.01, dy: 0.01, units: 'degree' };
		const s = cellSizeMetres(g);
		expect(s.y).toBeCloseTo(1111.95, 1);
		expect(s.x).toBeCloseTo(1111.95, 0); // centre latitude 0: cos = 1
		expect(windowCells(g, 2300)).toEqual({ rx: 2, ry: 2 });
	});
	it('gives the same result as localStdDev with the derived window', () => {
		const v = f([1, 2, 3, 4, 5, 6, 7, 8, 9]);
		expect(Array.from(variability(v, grid(3, 3), 10))).toEqual(Array.from(localStdDev(v, 3, 3, 1, 1)));
	});
});
