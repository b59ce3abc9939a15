import { FsObjectStore } from '../src/lib/server/storage';
import { encodeTiff } from '../src/bench/support/tiff-writer';
import { threadRunner, closeThreadPools } from '../src/lib/server/jobs/threads';
import { threadSurfaceRunner } from '../src/lib/server/jobs/kinds/thread-work';
const store = new FsObjectStore('/dev/shm/jf-over-store');
const n = Number(process.argv[2] ?? 2000);
const data = Float32Array.from({ length: n * n }, (_, i) => (i % n) / n);
const file = new Uint8Array(encodeTiff({ width: n, height: n, bands: [data], sampleFormat: 3, bitsPerSample: 32, geo: { tiepoint: [0, 0, 0, 500000, 5500000, 0], pixelScale: [30, 30, 0], geoKeys: [[1024, 1], [1025, 1], [3072, 32633]] } }));
await store.put('layers/big', file);
for (const mb of [4, 8, 12, 16]) {
	const ctrl = new AbortController();
	const runner = threadSurfaceRunner({ runInThread: threadRunner(mb), signal: ctrl.signal, store });
	const t0 = Date.now();
	try {
		const p = await runner.preview({ layers: [{ layerId: '1', transform: 'minmax', weight: 1 }] } as never, new Map([['1', { id: 1, name: 'big', band: 1, storage_key: 'layers/big' }]]));
		console.log(mb, 'ok', p.width, p.height, Date.now() - t0, 'ms');
	} catch (e) {
		console.log(mb, 'failed:', (e as Error).message, Date.now() - t0, 'ms');
	}
}
await closeThreadPools();
