/**
 * Decodes one uploaded raster in a worker thread (see ./decode.ts): receives { options } as
 * workerData, asks the parent for byte ranges ({ type: 'read', id, offset, length } answered by
 * { id, bytes }), runs processLayer and posts { type: 'done', result }, or
 * { type: 'rejected', code, message } for a file that cannot be a layer.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { LayerRejected } from './errors';
import { processLayer, type ProcessOptions } from './inspect';
import { portRangeReader } from './range-port';

const job = workerData as { options: ProcessOptions };
const port = parentPort!;
const reader = portRangeReader(port);
try {
	const result = await processLayer(reader, job.options);
	port.postMessage({ type: 'done', result });
} catch (err) {
	if (err instanceof LayerRejected) port.postMessage({ type: 'rejected', code: err.code, message: err.message });
	else port.postMessage({ type: 'error', message: err instanceof Error ? err.message : String(err) });
} finally {
	port.unref();
}
