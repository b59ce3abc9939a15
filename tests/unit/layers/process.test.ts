import { spawnSync } from 'node:child_process';
import { copyFileSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { loadLayer, processLayer, processStoredLayer, renderPreview } from '../../../src/lib/server/layers';
import { FsObjectStore } from '../../../src/lib/server/storage/fs-store';
import { newObjectKey } from '../../../src/lib/server/storage/object-store';
import { aggregateToWorkingGrid } from '../../../src/lib/geo/aggregate';
import { openGeoTiff } from '../../../src/lib/geo/geotiff';

const dir = mkdtempSync(join(tmpdir(), 'cf-process-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const bytes = (file: string) => {
	const b = readFileSync(file);
	return b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength) as ArrayBuffer;
};
const hasGdal = spawnSync('gdaladdo', ['--version']).status === 0;

describe('processLayer (one streamed pass) against loadLayer (the whole band)', () => {
	for (const file of ['data/demo/vegetation-index.tif', 'tests/fixtures/geo/utm33-int16-tiled-deflate.tif']) {
		it(`${file}: same metadata, statistics, histogram and preview, from a buffer, a path and object storage`, async () => {
			const whole = await loadLayer(bytes(file), { name: 'x' });
			const expected = renderPreview(whole.band);
			const store = new FsObjectStore(join(dir, 'store'));
			const key = newObjectKey('layers');
			await store.put(key, readFileSync(file));
			for (const run of [() => processLayer(bytes(file), { name: 'x' }), () => processLayer({ path: file }, { name: 'x' }), () => processStoredLayer(store, key, { name: 'x' })]) {
				const { metadata, preview } = await run();
				const { stats, ...rest } = metadata;
				const { stats: refStats, ...refRest } = whole.metadata;
				expect(rest).toEqual(refRest);
				expect(stats.validCount).toBe(refStats.validCount);
				expect([stats.min, stats.max]).toEqual([refStats.min, refStats.max]);
				expect(stats.mean).toBeCloseTo(refStats.mean, 9);
				expect(stats.std).toBeCloseTo(refStats.std, 9);
				expect(preview.png.equals(expected.png)).toBe(true);
			}
		});
	}

	it('refuses a missing stored object and a file that is not a TIFF with the usual codes', async () => {
		const store = new FsObjectStore(join(dir, 'store2'));
		const key = newObjectKey('layers');
		await store.put(key, new TextEncoder().encode('not a raster at all'));
		await expect(processStoredLayer(store, key, { name: 'notes.txt' })).rejects.toMatchObject({ code: 'not-tiff' });
	});
});

describe('overviews', () => {
	it.skipIf(!hasGdal)('the working grid reads an average overview made by gdaladdo when its pixels are at most half a cell, with the same integral', async () => {
		const file = join(dir, 'veg.tif');
		copyFileSync('data/demo/vegetation-index.tif', file);
		// GDAL's own overviews (gdaladdo -r average, 2× and 4×), stored inside the file.
		const r = spawnSync('gdaladdo', ['-q', '-r', 'average', file, '2', '4'], { encoding: 'utf8' });
		expect(r.status, r.stderr).toBe(0);
		const source = await openGeoTiff({ path: file });
		expect(source.overviews.map((o) => [o.width, o.height])).toEqual([[100, 75], [50, 38]]);
		// 30 m pixels; cells of 240 m: the 4× overview (120 m) is the coarsest with ≤ half-cell pixels.
		const viaOverview = await aggregateToWorkingGrid(source, { cellSize: 240 });
		expect(viaOverview.image.index).toBe(source.overviews[1].index);
		const full = await aggregateToWorkingGrid(await openGeoTiff({ path: file }), { cellSize: 240, useOverviews: false });
		expect(full.image.index).toBe(0);
		// Average overviews keep the mean of each 4 × 4 block, so the integral changes only where a
		// block is part nodata or cut by the raster's edge (the nodata corner here): under 1 %.
		expect(Math.abs(viaOverview.integral - full.integral) / full.integral).toBeLessThan(0.01);
		await source.close();
	});
});
