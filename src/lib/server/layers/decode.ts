/**
 * Uploads are decoded in a worker thread with memory limits (`resourceLimits`): a file built to
 * exhaust memory that gets past the structural checks (src/lib/geo/tiff-blocks.ts) ends that
 * worker, not the server, and the upload is refused with a clear message.
 *
 * The worker runs processLayer (one streamed pass: metadata, statistics, histogram, preview) on
 * the stored object, whose byte ranges it asks this thread for: the file is never copied whole,
 * and any object store works.
 *
 *   LAYER_DECODE_HEAP_MB   heap limit of the decoding worker; default 512
 */
import { Worker } from 'node:worker_threads';
import { LayerRejected, type LayerRejectedCode } from './errors';
import type { ProcessedLayer, ProcessOptions } from './inspect';
import type { ByteRangeReader } from '../../geo/geotiff';
import type { ObjectStore } from '../storage/object-store';
import { workerEntryPath } from '../worker-entry-path';

export const DEFAULT_DECODE_HEAP_MB = 512;

export interface DecodeLimits {
	/** Heap limit of the worker in MB. */
	heapMb?: number;
}

/** Messages from the worker. */
type FromWorker =
	| { type: 'read'; id: number; offset: number; length: number }
	| { type: 'done'; result: ProcessedLayer }
	| { type: 'rejected'; code: LayerRejectedCode; message: string }
	| { type: 'error'; message: string };

/** processLayer() of ./inspect on `reader`'s bytes, in a worker thread bounded by `limits`. */
export function processLayerInWorker(reader: ByteRangeReader, options: ProcessOptions, limits: DecodeLimits = {}): Promise<ProcessedLayer> {
	const heapMb = limits.heapMb ?? DEFAULT_DECODE_HEAP_MB;
	return new Promise((resolve, reject) => {
		const worker = new Worker(workerEntryPath(import.meta.url, 'layers/decode-worker-bootstrap.mjs'), {
			workerData: { options: { ...options, parallel: false } },
			resourceLimits: { maxOldGenerationSizeMb: heapMb, maxYoungGenerationSizeMb: Math.min(64, Math.max(8, Math.floor(heapMb / 8))), stackSizeMb: 4 }
		});
		let settled = false;
		const finish = (fn: () => void) => {
			if (settled) return;
			settled = true;
			fn();
			void worker.terminate();
		};
		worker.on('message', (msg: FromWorker) => {
			if (msg.type === 'read') {
				reader.read(msg.offset, msg.length).then(
					(bytes) => {
						if (settled) return;
						const copy = bytes.slice();
						worker.postMessage({ id: msg.id, bytes: copy }, [copy.buffer]);
					},
					(err: unknown) => finish(() => reject(err))
				);
			} else if (msg.type === 'done') {
				const { png, ...preview } = msg.result.preview;
				finish(() => resolve({ metadata: msg.result.metadata, preview: { ...preview, png: Buffer.from(png.buffer, png.byteOffset, png.byteLength) } }));
			} else if (msg.type === 'rejected') finish(() => reject(new LayerRejected(msg.code, msg.message)));
			else finish(() => reject(new Error(msg.message)));
		});
		worker.on('error', (err: Error & { code?: string }) => {
			if (err.code === 'ERR_WORKER_OUT_OF_MEMORY') {
				const name = options.name?.trim() || 'The file';
				finish(() => reject(new LayerRejected('unsafe-blocks', `${name}: decoding it needed more than the ${heapMb} MB allowed; the file is corrupt or built to exhaust memory`)));
			} else finish(() => reject(err));
		});
		worker.on('exit', (code) => finish(() => reject(new Error(`the raster decoder stopped (exit ${code})`))));
	});
}

/**
 * Layer processing of a stored upload: processLayerInWorker on the object's byte ranges. The entry
 * point for whatever processes uploads (a request now, a job later).
 */
export async function processStoredLayer(store: Pick<ObjectStore, 'openRanges'>, key: string, options: ProcessOptions = {}, limits: DecodeLimits = {}): Promise<ProcessedLayer> {
	const reader = await store.openRanges(key);
	try {
		return await processLayerInWorker(reader, options, limits);
	} finally {
		await reader.close();
	}
}
