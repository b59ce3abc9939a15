/**
 * The web part of `npm run bench ingest`, run in a process of its own (so its peak memory is its
 * own): what the upload route does with a file, minus the database rows. The file is streamed
 * into a file-system object store through the same byte-limited stream (no whole copy in
 * memory), then processStoredLayer reads it back from the store tile by tile, in a worker thread
 * with the upload's heap limit (512 MB), and builds the statistics, histogram and preview in one
 * pass. Peak memory is the process's, worker included. Prints one line of figures.
 *
 *   node --import tsx src/bench/ingest-upload.ts FILE
 */
import { createReadStream, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { FsObjectStore } from '../lib/server/storage/fs-store';
import { newObjectKey } from '../lib/server/storage/object-store';
import { processStoredLayer } from '../lib/server/layers/decode';

const file = process.argv[2];
if (!file) {
	console.error('usage: ingest-upload.ts FILE');
	process.exit(2);
}
const root = mkdtempSync(join(tmpdir(), 'cairnfield-upload-bench-'));
try {
	const store = new FsObjectStore(root);
	const key = newObjectKey('layers');
	const t0 = performance.now();
	const { size } = await store.put(key, createReadStream(file, { highWaterMark: 1 << 20 }), { contentType: 'image/tiff' });
	const t1 = performance.now();
	const rssAfterStore = process.memoryUsage().rss;
	const { metadata, preview } = await processStoredLayer(store, key, { name: 'bench.tif' });
	const t2 = performance.now();
	const mb = (b: number) => Math.round(b / 1048576);
	console.log(
		`stored ${mb(size)} MB in ${((t1 - t0) / 1000).toFixed(2)} s (RSS then ${mb(rssAfterStore)} MB); processed from storage in ${((t2 - t1) / 1000).toFixed(2)} s: ` +
			`${metadata.width}×${metadata.height}, ${metadata.stats.validCount} valid, mean ${metadata.stats.mean.toFixed(4)}, preview ${preview.width}×${preview.height}; ` +
			`peak RSS ${Math.round(process.resourceUsage().maxRSS / 1024)} MB`
	);
} finally {
	rmSync(root, { recursive: true, force: true });
}
