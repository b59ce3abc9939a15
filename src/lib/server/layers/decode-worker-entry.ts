/**
 * Decodes one uploaded raster in a worker thread (see ./decode.ts): receives { bytes, options } as
 * workerData and posts { type: 'done', result } with the band's samples transferred, or
 * { type: 'rejected', code, message } for a file that cannot be a layer.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { LayerRejected } from './errors';
import { loadLayer, type InspectOptions } from './inspect';

const job = workerData as { bytes: ArrayBuffer; options: InspectOptions };
try {
	const result = await loadLayer(new Uint8Array(job.bytes), job.options);
	parentPort!.postMessage({ type: 'done', result }, [result.band.data.buffer as ArrayBuffer]);
} catch (err) {
	if (err instanceof LayerRejected) parentPort!.postMessage({ type: 'rejected', code: err.code, message: err.message });
	else parentPort!.postMessage({ type: 'error', message: err instanceof Error ? err.message : String(err) });
}
