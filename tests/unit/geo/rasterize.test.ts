import { describe, expect, it } from 'vitest';
import { rasterizeRings, rasterizeZones, type Ring } from '../../../src/lib/engine/rasterize';

const grid = { width: 20, height: 10, x0: 1000, y0: 2000, cellSize: 10 };

/** Oracle: even-odd ray casting point by point (a different algorithm from the scanline fill). */
function insideOracle(x: number, y: number, rings: readonly Ring[]): boolean {
	let inside = false;
	for (const ring of rings) {
		for (let i = 0, j = ring.length - 1; i < ring.length; j = i++) {
			const [xi, yi] = ring[i];
			const [xj, yj] = ring[j];
			if (yi > y !== yj > y && x < ((xj - xi) * (y - yi)) / (yj - yi) + xi) inside = !inside;
		}
	}
	return inside;
}

function oracleMask(g: typeof grid, rings: readonly Ring[]): Uint8Array {
	const m = new Uint8Array(g.width * g.height);
	for (let r = 0; r < g.height; r++)
		for (let c = 0; c < g.width; c++)
			m[r * g.width + c] = insideOracle(g.x0 + (c + 0.5) * g.cellSize, g.y0 - (r + 0.5) * g.cellSize, rings) ? 1 : 0;
	return m;
}

const count = (m: Uint8Array) => m.reduce((s, v) => s + v, 0);

describe('rasterizeRings', () => {
	it('fills an axis-aligned rectangle with exactly the cells whose centres are inside', () => {
		// x 1020..1080 (centres 1025..1075: 6 columns), y 1950..1990 (centres 1985..1955: 4 rows)
		const rect: Ring = [[1020, 1950], [1080, 1950], [1080, 1990], [1020, 1990]];
		const m = rasterizeRings(grid, [rect]);
		expect(count(m)).toBe(24);
		expect(m[1 * 20 + 2]).toBe(1); // row 1 (centre y 1985), col 2 (centre x 1025)
		expect(m[0 * 20 + 2]).toBe(0);
		expect(m[1 * 20 + 8]).toBe(0);
	});
	it('agrees with point-by-point ray casting on a concave polygon with a hole', () => {
		const outer: Ring = [[1003, 1903], [1190, 1911], [1150, 1997], [1100, 1950], [1040, 1993]];
		const hole: Ring = [[1060, 1930], [1120, 1930], [1090, 1960]];
		expect(Array.from(rasterizeRings(grid, [outer, hole]))).toEqual(Array.from(oracleMask(grid, [outer, hole])));
	});
	it('agrees with ray casting on random polygons', () => {
		let seed = 7;
		const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
		for (let t = 0; t < 30; t++) {
			const n = 3 + Math.floor(rnd() * 9);
			const ring: Array<[number, number]> = [];
			for (let i = 0; i < n; i++) ring.push([990 + rnd() * 220, 1890 + rnd() * 120]);
			expect(Array.from(rasterizeRings(grid, [ring]))).toEqual(Array.from(oracleMask(grid, [ring])));
		}
	});
	it('handles a multipolygon given as a flat list of rings, and a polygon beyond the grid', () => {
		const a: Ring = [[1000, 1990], [1010, 1990], [1010, 2000], [1000, 2000]];
		const b: Ring = [[1190, 1900], [1300, 1900], [1300, 1910], [1190, 1910]];
		const m = rasterizeRings(grid, [a, b]);
		expect(count(m)).toBe(2);
		expect(m[0]).toBe(1);
		expect(m[9 * 20 + 19]).toBe(1);
	});
	it('approximates the area of a disc', () => {
		const big = { width: 400, height: 400, x0: 0, y0: 400, cellSize: 1 };
		const disc: Array<[number, number]> = [];
		for (let i = 0; i < 720; i++) disc.push([200 + 150 * Math.cos((i * Math.PI) / 360), 200 + 150 * Math.sin((i * Math.PI) / 360)]);
		const area = count(rasterizeRings(big, [disc]));
		expect(Math.abs(area - Math.PI * 150 * 150) / (Math.PI * 150 * 150)).toBeLessThan(0.002);
	});
	it('degenerate input: no rings, rings of fewer than 3 points, zero-area and empty grids', () => {
		expect(count(rasterizeRings(grid, []))).toBe(0);
		expect(count(rasterizeRings(grid, [[[1000, 1900], [1100, 1950]]]))).toBe(0);
		expect(count(rasterizeRings(grid, [[[1000, 1950], [1100, 1950], [1150, 1950]]]))).toBe(0);
		expect(rasterizeRings({ ...grid, width: 0, height: 0 }, []).length).toBe(0);
		expect(() => rasterizeRings({ ...grid, cellSize: 0 }, [])).toThrow(RangeError);
	});
	it('a vertex exactly on a cell-centre line is not counted twice', () => {
		// diamond with its left and right vertices on the centre line y = 1955
		const diamond: Ring = [[1000, 1955], [1050, 1905], [1100, 1955], [1050, 2005]];
		expect(Array.from(rasterizeRings(grid, [diamond]))).toEqual(Array.from(oracleMask(grid, [diamond])));
	});
});

describe('rasterizeZones', () => {
	it('labels cells by zone, -1 outside, first zone wins on overlap', () => {
		const west: Ring = [[1000, 1900], [1100, 1900], [1100, 2000], [1000, 2000]];
		const east: Ring = [[1090, 1900], [1200, 1900], [1200, 2000], [1090, 2000]];
		const z = rasterizeZones({ ...grid, width: 22 }, [
			{ id: 'W', rings: [west] },
			{ id: 'E', rings: [east] }
		]);
		expect(z.ids).toEqual(['W', 'E']);
		expect(z.cellZone[0]).toBe(0);
		expect(z.cellZone[9]).toBe(0); // centre 1095 is in both: W keeps it
		expect(z.cellZone[10]).toBe(1);
		expect(z.cellZone[20]).toBe(-1); // centre 1205
	});
	it('refuses duplicate ids', () => {
		expect(() => rasterizeZones(grid, [{ id: 'a', rings: [] }, { id: 'a', rings: [] }])).toThrow(/unique/);
	});
});

describe('rasterizeRings with a vertex on a row’s centre line', () => {
	it('fills that row: a vertex whose y is the centre line, computed in floating point, keeps its crossing', () => {
		// Found measuring zone shares: a zone edge densified in WGS 84 came back with a vertex
		// exactly on the centre line of row 158 of a 2.3 m grid, where (y0 − y)/cellSize − 0.5
		// rounds to 157.999…; the edge below that vertex lost its crossing and the row went empty.
		const g = { width: 40, height: 300, x0: 314920.6, y0: 5363781.699999999, cellSize: 2.3 };
		const y = g.y0 - (158 + 0.5) * g.cellSize;
		const left = g.x0 + 5 * g.cellSize;
		const right = g.x0 + 30 * g.cellSize;
		const top = g.y0 - 100 * g.cellSize;
		const bottom = g.y0 - 200 * g.cellSize;
		const ring: Ring = [[left, bottom], [right, bottom], [right, y], [right, top], [left, top], [left, bottom]];
		const mask = rasterizeRings(g, [ring]);
		expect(Array.from(mask)).toEqual(Array.from(oracleMask(g, [ring])));
		expect(mask.slice(158 * g.width, 159 * g.width).reduce((a, b) => a + b, 0)).toBe(25);
	});
});
