import { readFile } from 'node:fs/promises';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { inspectLayer } from '../../../src/lib/server/layers';

const DIR = path.resolve('tests/fixtures/layers');

interface Expected {
	size: [number, number];
	geoTransform: number[];
	epsg: number;
	noDataValue: number;
	statistics: { minimum: number; maximum: number; mean: number; stddev: number };
	validCount: number;
	wgs84Extent: { coordinates: number[][][] };
}

const expected: Record<string, Expected> = JSON.parse(await readFile(path.join(DIR, 'expected-gdalinfo.json'), 'utf8'));

describe('inspectLayer on GeoTIFFs written by GDAL, checked against gdalinfo -json -stats', () => {
	for (const [file, exp] of Object.entries(expected)) {
		it(`${file}: size, CRS, transform, nodata, statistics and WGS 84 footprint agree with gdalinfo`, async () => {
			const m = await inspectLayer(await readFile(path.join(DIR, file)), { name: file });
			expect([m.width, m.height]).toEqual(exp.size);
			expect(m.epsg).toBe(exp.epsg);
			[m.origin.x, m.resolution.x, 0, m.origin.y, 0, -m.resolution.y].forEach((v, k) => expect(v).toBeCloseTo(exp.geoTransform[k], 9));
			expect(m.nodata).toBe(exp.noDataValue);
			expect(m.stats.validCount).toBe(exp.validCount);
			// gdalinfo prints 14 significant digits: compare at 1e-10 relative.
			const rel = (a: number, b: number) => Math.abs(a - b) / Math.max(1e-12, Math.abs(b));
			expect(rel(m.stats.min, exp.statistics.minimum)).toBeLessThan(1e-10);
			expect(rel(m.stats.max, exp.statistics.maximum)).toBeLessThan(1e-10);
			expect(rel(m.stats.mean, exp.statistics.mean)).toBeLessThan(1e-10);
			expect(rel(m.stats.std, exp.statistics.stddev)).toBeLessThan(1e-10); // GDAL's is the population std too
			expect(m.histogram.counts.reduce((s, c) => s + c, 0)).toBe(exp.validCount);
			// gdalinfo's wgs84Extent lists the same four corners in the same order (UL, LL, LR, UR), 7 decimals (PROJ vs proj4js).
			const ours = m.footprint.polygon.coordinates[0];
			const theirs = exp.wgs84Extent.coordinates[0];
			expect(ours).toHaveLength(theirs.length);
			ours.forEach(([lon, lat], k) => {
				expect(Math.abs(lon - theirs[k][0])).toBeLessThan(1e-6);
				expect(Math.abs(lat - theirs[k][1])).toBeLessThan(1e-6);
			});
		});
	}
});
