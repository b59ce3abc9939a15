import { describe, expect, it } from 'vitest';
import { transformer } from '../../../src/lib/geo/crs';
import { alignToGrid, type GridBand, type GridSpec } from '../../../src/lib/importance';
import { reprojectToGrid } from '../../../src/lib/server/layers';

/** A geographic band whose value encodes its cell index, so a lookup can be traced back. */
function indexBand(grid: GridSpec): GridBand {
	return { grid, data: Float64Array.from({ length: grid.width * grid.height }, (_, i) => i), nodata: null };
}

describe('reprojectToGrid', () => {
	// 0.01° cells straddling UTM zone 32's central meridian (9°E) north of the equator.
	const geo: GridSpec = { epsg: 4326, width: 60, height: 40, x0: 8.7, y0: 52.2, dx: 0.01, dy: 0.01, units: 'degree' };

	it('on the central meridian of UTM 32N (9°E, easting 500 000 m) it picks the source column at 9°E', () => {
		// UTM: central meridian of zone 32 is 9°E with false easting 500 000 m (UTM definition) [from memory].
		const [, northing] = transformer(4326, 32632).forward(9.005, 52.0);
		const target: GridSpec = { epsg: 32632, width: 1, height: 1, x0: 500_000 - 5, y0: northing + 5, dx: 10, dy: 10 };
		const out = reprojectToGrid(indexBand(geo), target, { step: 1 });
		// the centre (500 000, northing) is at lon 9.0, lat ≈ 52.0: source col floor((9.0−8.7)/0.01) = 30
		// (or 29 by rounding at the edge), row floor((52.2−52.0)/0.01) = 20 (or 19)
		const idx = out.data[0];
		expect([29, 30]).toContain(idx % 60);
		expect([19, 20]).toContain(Math.floor(idx / 60));
	});

	it('control-point interpolation (step 16) agrees with exact per-cell reprojection on 99 %+ of cells', () => {
		const target: GridSpec = { epsg: 32632, width: 100, height: 80, x0: 482_000, y0: 5_782_000, dx: 30, dy: 30 };
		const exact = reprojectToGrid(indexBand(geo), target, { step: 1 });
		const fast = reprojectToGrid(indexBand(geo), target);
		let same = 0;
		let valid = 0;
		for (let i = 0; i < exact.data.length; i++) {
			if (Number.isNaN(exact.data[i])) {
				expect(fast.data[i]).toBeNaN();
				continue;
			}
			valid++;
			if (exact.data[i] === fast.data[i]) same++;
			else {
				// any difference is a neighbouring source cell
				const a = exact.data[i];
				const b = fast.data[i];
				expect(Math.abs((a % 60) - (b % 60))).toBeLessThanOrEqual(1);
				expect(Math.abs(Math.floor(a / 60) - Math.floor(b / 60))).toBeLessThanOrEqual(1);
			}
		}
		expect(valid).toBe(8000); // the target lies inside the source
		expect(same / valid).toBeGreaterThan(0.99);
	});

	it('cells outside the source and on source nodata are NaN', () => {
		const band: GridBand = { grid: geo, data: new Float64Array(60 * 40).fill(-1), nodata: -1 };
		const target: GridSpec = { epsg: 32632, width: 4, height: 4, x0: 482_000, y0: 5_782_000, dx: 30, dy: 30 };
		expect(Array.from(reprojectToGrid(band, target).data).every(Number.isNaN)).toBe(true);
		const far: GridSpec = { ...target, x0: 300_000 };
		expect(Array.from(reprojectToGrid(indexBand(geo), far).data).every(Number.isNaN)).toBe(true);
	});

	it('same CRS is plain alignment', () => {
		const utm: GridSpec = { epsg: 32632, width: 2, height: 2, x0: 0, y0: 200, dx: 100, dy: 100 };
		const b: GridBand = { grid: utm, data: [1, 2, 3, 4], nodata: null };
		const t = { ...utm, width: 4, height: 4, dx: 50, dy: 50 };
		expect(Array.from(reprojectToGrid(b, t).data)).toEqual(Array.from(alignToGrid(b, t).data));
	});
});
