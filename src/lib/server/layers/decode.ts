/**
 * Uploads are decoded in a worker thread with memory limits (`resourceLimits`): a file built to
 * exhaust memory that gets past the structural checks (src/lib/geo/tiff-blocks.ts) ends that
 * worker, not the server, and the upload is refused with a clear message.
 *
 *   LAYER_DECODE_HEAP_MB   heap limit of the decoding worker; default 512
 */
import { Worker } from 'node:worker_threads';
import { LayerRejected, type LayerRejectedCode } from './errors';
import type { InspectedLayer, InspectOptions } from './inspect';
import { workerEntryPath } from '../worker-entry-path';

export const DEFAULT_DECODE_HEAP_MB = 512;

export interface DecodeLimits {
	/** Heap limit of the worker in MB. */
	heapMb?: number;
}

/** loadLayer() of ./inspect, in a worker thread bounded by `limits`. */
export function decodeLayer(bytes: Uint8Array, options: InspectOptions, limits: DecodeLimits = {}): Promise<InspectedLayer> {
	const heapMb = limits.heapMb ?? DEFAULT_DECODE_HEAP_MB;
	const copy = new Uint8Array(bytes.byteLength);
	copy.set(bytes);
	return new Promise((resolve, reject) => {
		const worker = new Worker(workerEntryPath(import.meta.url, 'layers/decode-worker-bootstrap.mjs'), {
			workerData: { bytes: copy.buffer, options },
			transferList: [copy.buffer],
			resourceLimits: { maxOldGenerationSizeMb: heapMb, maxYoungGenerationSizeMb: Math.min(64, Math.max(8, Math.floor(heapMb / 8))), stackSizeMb: 4 }
		});
		let settled = false;
		const finish = (fn: () => void) => {
			if (settled) return;
			settled = true;
			fn();
			void worker.terminate();
		};
		worker.on('message', (msg: { type: string; result?: InspectedLayer; code?: LayerRejectedCode; message?: string }) => {
			if (msg.type === 'done') finish(() => resolve(msg.result!));
			else if (msg.type === 'rejected') finish(() => reject(new LayerRejected(msg.code!, msg.message!)));
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
